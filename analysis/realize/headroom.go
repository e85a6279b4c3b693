package realize

import (
	"fmt"
	"math"
)

// Headroom bounds every signal a fixed-point realization stores, for any
// input bounded by |x| ≤ X. The bound is the l1 norm of the impulse
// response from the block's input to that signal: |v[k]| ≤ ‖h‖₁ · X, and
// some bounded input reaches it (Jackson, "Digital Filters and Signal
// Processing", l1 scaling; Oppenheim and Schafer, "Discrete-Time Signal
// Processing", scaling of fixed-point filters — from memory). The rounding of
// each section's output adds at most 2^-(N+1) per sample, carried to every
// later signal by its own l1 norm, and so does each rounded shift by Δ of
// the delta form (at most 2^-(2N+1) per state and sample); that is added
// as Noise.
type Headroom struct {
	Nodes []Node
	// Bounded is false when a rounded pole lies on or outside the unit
	// circle: the l1 norms are infinite and a sustained input overflows.
	Bounded bool
	// MaxInput is the largest |x| (in the block's input units) for which
	// no node can overflow; 0 when not Bounded or Truncated.
	MaxInput float64
	// Truncated: the impulse responses were cut (MaxImpulse samples, or
	// the MaxHeadroomWork limit) before decaying to 1e-14, so the norms
	// are lower bounds and no safe input is claimed.
	Truncated bool
}

// Node is one stored signal.
type Node struct {
	Name string // "output of section 1", "state 2 of section 1"
	// L1 is the l1 norm from the block input; Noise the bound of the
	// rounding errors reaching it (value units).
	L1, Noise float64
	// Range is the largest magnitude the node holds: 2^M for section
	// outputs (the word), 2^(63−2N) for states (the accumulator). Partial
	// sums in the accumulator are bounded too (accumulatorLimit).
	Range float64
	// IntBits is the number of integer bits the node needs for a
	// full-scale input (|x| ≤ 2^M); Have is what it has (M for outputs,
	// 63 − 2N for states).
	IntBits, Have int
}

// Short reports whether the node can overflow for a full-scale input.
func (n Node) Short() bool { return n.IntBits > n.Have }

// MaxImpulse caps the length of the impulse responses summed for the l1
// norms (a pole at radius 0.99997 decays to 1e-14 in about 10^6 samples).
const MaxImpulse = 1 << 20

// MaxHeadroomWork caps samples × runs × nodes of the headroom computation
// (about 60 ms on the 2-core CI machine): beyond it the norms are cut and
// marked Truncated.
const MaxHeadroomWork = 1 << 22

func headroom(r *Realization, tol float64) *Headroom {
	h := &Headroom{Bounded: r.MaxRadius < 1-tol}
	names := nodeNames(r)
	if !h.Bounded {
		for _, n := range names {
			h.Nodes = append(h.Nodes, Node{Name: n.name, L1: math.Inf(1), Range: n.rng(r.Format), IntBits: math.MaxInt32, Have: n.have(r.Format)})
		}
		return h
	}
	need := 4*len(names) + 4
	if r.MaxRadius > 0 {
		need = int(math.Min(MaxImpulse, math.Ceil(math.Log(1e-14)/math.Log(r.MaxRadius))+float64(4*len(names))))
	}
	// One run per noise source plus the input, over every node: cap the
	// work so that a long, slow block stays within an editor's keystroke
	// budget.
	sources := noiseSources(r)
	length := min(need, MaxHeadroomWork/((len(sources)+1)*len(names)))
	if length < need || need >= MaxImpulse {
		h.Truncated = true
	}
	l1 := impulseNorms(r, source{section: -1}, length)
	noise := make([]float64, len(l1))
	for _, src := range sources {
		for i, v := range impulseNorms(r, src, length) {
			noise[i] += v * src.size
		}
	}
	fullScale := r.Format.MaxValue()
	h.MaxInput = math.Inf(1)
	for i, n := range names {
		nd := Node{Name: n.name, L1: l1[i], Noise: noise[i], Range: n.rng(r.Format), Have: n.have(r.Format)}
		peak := nd.L1*fullScale + nd.Noise
		nd.IntBits = max(0, int(math.Ceil(math.Log2(peak))))
		if nd.L1 > 0 {
			h.MaxInput = math.Min(h.MaxInput, math.Max(0, nd.Range-nd.Noise)/nd.L1)
		}
		h.Nodes = append(h.Nodes, nd)
	}
	h.MaxInput = math.Min(h.MaxInput, math.Min(fullScale, accumulatorLimit(r, h.Nodes)))
	if h.Truncated {
		h.MaxInput = 0 // the norms are lower bounds: no input bound is established
	}
	return h
}

// accumulatorLimit bounds the input so that every partial sum of the
// accumulator fits: y before rounding, and Bi·x − Ai·y + s(i+1) for every
// state, each bounded term by term from the nodes' norms.
func accumulatorLimit(r *Realization, nodes []Node) float64 {
	acc := math.Ldexp(1, 63-2*r.Format.N)
	limit := math.Inf(1)
	fit := func(l1, noise float64) {
		if l1 > 0 {
			limit = math.Min(limit, math.Max(0, acc-noise)/l1)
		} else if noise > acc {
			limit = 0
		}
	}
	inL1, inNoise := 1.0, 0.0
	node := 0
	for _, s := range r.Sections {
		out := nodes[node]
		fit(math.Abs(s.B[0])*inL1+lastState(nodes, node, 1, s).L1, math.Abs(s.B[0])*inNoise+lastState(nodes, node, 1, s).Noise)
		for i := 1; i <= s.Order(); i++ {
			if r.Structure == Delta { // Δ·v = new state − old state
				st := lastState(nodes, node, i, s)
				fit(2*st.L1, 2*st.Noise)
			}
			next := lastState(nodes, node, i+1, s)
			fit(math.Abs(s.B[i])*inL1+math.Abs(s.A[i])*out.L1+next.L1,
				math.Abs(s.B[i])*inNoise+math.Abs(s.A[i])*out.Noise+next.Noise)
		}
		inL1, inNoise = out.L1, out.Noise
		node += s.Order() + 1
	}
	return limit
}

// lastState is state i of the section whose output is nodes[node]; the zero
// node past the last state.
func lastState(nodes []Node, node, i int, s Section) Node {
	if i > s.Order() {
		return Node{}
	}
	return nodes[node+i]
}

type nodeName struct {
	name  string
	state bool
}

func (n nodeName) rng(f Format) float64 {
	if n.state {
		return math.Ldexp(1, 63-2*f.N)
	}
	return f.MaxValue() - f.Quantum()
}

func (n nodeName) have(f Format) int {
	if n.state {
		return 63 - 2*f.N
	}
	return f.M
}

// nodeNames lists, section by section, the output then the states.
func nodeNames(r *Realization) []nodeName {
	var out []nodeName
	many := len(r.Sections) > 1
	for si, s := range r.Sections {
		of := ""
		if many {
			of = fmt.Sprintf(" of section %d", si+1)
		}
		out = append(out, nodeName{name: "output" + of})
		for i := 1; i <= s.Order(); i++ {
			out = append(out, nodeName{name: fmt.Sprintf("state %d%s", i, of), state: true})
		}
	}
	return out
}

// source is where a unit impulse enters: the block input (section < 0), a
// section's output (state 0) or one of its states (state i ≥ 1, after its
// update); size is the largest rounding error made there per sample.
type source struct {
	section, state int
	size           float64
}

// noiseSources are the rounding points of the fixed-point arithmetic: each
// section's output (at most half a quantum, 2^-(N+1)) and, in the delta
// form with Δ < 1, each state's shift by Δ (half a unit of the
// accumulator, 2^-(2N+1)).
func noiseSources(r *Realization) []source {
	var out []source
	for j, s := range r.Sections {
		out = append(out, source{section: j, size: math.Ldexp(1, -r.Format.N-1)})
		if r.Structure == Delta && r.DeltaExp < 0 {
			for i := 1; i <= s.Order(); i++ {
				out = append(out, source{section: j, state: i, size: math.Ldexp(1, -2*r.Format.N-1)})
			}
		}
	}
	return out
}

// impulseNorms runs the rounded structure in exact (float64) arithmetic on
// a unit impulse entering at src and returns the l1 norm of every node, in
// nodeNames order.
func impulseNorms(r *Realization, src source, length int) []float64 {
	states := make([][]float64, len(r.Sections))
	for i, s := range r.Sections {
		states[i] = make([]float64, s.Order())
	}
	var norms []float64
	d := r.Delta()
	for k := 0; k < length; k++ {
		x := 0.0
		if k == 0 && src.section < 0 {
			x = 1
		}
		node := 0
		for si, s := range r.Sections {
			st := states[si]
			n := s.Order()
			y := s.B[0] * x
			if n > 0 {
				y += st[0]
			}
			if k == 0 && si == src.section && src.state == 0 {
				y++
			}
			for i := 1; i <= n; i++ {
				v := s.B[i]*x - s.A[i]*y
				if i < n {
					v += st[i]
				}
				if d != 0 {
					v = st[i-1] + d*v
				}
				st[i-1] = v
			}
			if k == 0 && si == src.section && src.state > 0 {
				st[src.state-1]++
			}
			if k == 0 {
				norms = append(norms, make([]float64, n+1)...)
			}
			norms[node] += math.Abs(y)
			for i := 0; i < n; i++ {
				norms[node+1+i] += math.Abs(st[i])
			}
			node += n + 1
			x = y
		}
	}
	return norms
}
