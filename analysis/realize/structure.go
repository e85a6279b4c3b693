// Package realize builds the structure a block runs in on the target —
// direct form, second-order sections or the delta-operator form — rounds
// its coefficients to the target's number format, and says what the
// rounding did: the poles of the rounded structure, how far they moved, the
// worst-case signal sizes (headroom) and the exact arithmetic the target
// performs (Simulate), which the exported C code reproduces bit for bit.
package realize

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Structure is the shape of the difference equations.
type Structure int

const (
	// Direct is one transposed direct form II of the whole block.
	Direct Structure = iota
	// Sections is a cascade of second-order sections, each a transposed
	// direct form II.
	Sections
	// Delta is a transposed direct form II in the delta operator
	// δ = (z − 1)/Δ.
	Delta
)

// Structures lists the structure names in the order fixes try them.
var Structures = []string{"direct", "sections", "delta"}

// ParseStructure reads direct, sections or delta.
func ParseStructure(s string) (Structure, error) {
	for i, n := range Structures {
		if n == s {
			return Structure(i), nil
		}
	}
	return 0, fmt.Errorf("unknown structure %q (want direct, sections or delta)", s)
}

func (s Structure) String() string { return Structures[s] }

// Section is one difference equation in powers of q^-1, where q is z (direct
// form, sections) or δ (delta form): B[0] + B[1] q^-1 + … over
// A[0] + A[1] q^-1 + …, with A[0] = 1 (not a stored coefficient).
type Section struct {
	B, A []float64
}

// Order is the number of states.
func (s Section) Order() int { return len(s.A) - 1 }

// DeltaExponent picks Δ = 2^k for the delta form: k = round(log2 T), the
// power of two nearest the sample period on a log scale (ties upward), so
// multiplying by Δ is an exact shift in every format.
func DeltaExponent(T float64) int {
	return int(math.Floor(math.Log2(T) + 0.5))
}

// build returns the ideal structure of tf (a causal z transfer function).
func build(tf poly.Rational, st Structure, deltaExp int) ([]Section, error) {
	num, den := tf.Num.Trim(), tf.Den.Trim()
	if den.Degree() < 0 {
		return nil, fmt.Errorf("the denominator is zero")
	}
	if num.Degree() > den.Degree() {
		return nil, fmt.Errorf("the block is not causal")
	}
	if num.Degree() < 0 {
		return []Section{{B: []float64{0}, A: []float64{1}}}, nil
	}
	switch st {
	case Direct:
		return []Section{direct(num, den)}, nil
	case Delta:
		return deltaForm(num, den, math.Ldexp(1, deltaExp))
	}
	return sections(num, den)
}

// direct normalises den to a leading 1 and writes both in powers of z^-1.
func direct(num, den poly.Poly) Section {
	n := den.Degree()
	lead := den.Lead()
	s := Section{B: make([]float64, n+1), A: make([]float64, n+1)}
	for k := 0; k <= n; k++ {
		s.A[k] = den[n-k] / lead
		if n-k < len(num) {
			s.B[k] = num[n-k] / lead
		}
	}
	s.A[0] = 1
	return s
}

// deltaForm substitutes z = 1 + Δδ. It works from the roots, (p − 1)/Δ, which
// keeps poles crowded near z = 1 apart instead of expanding (z − 1)^k
// numerically: H = k·Δ^(m−n)·Π(δ − ζ)/Π(δ − π).
func deltaForm(num, den poly.Poly, d float64) ([]Section, error) {
	zs, ps, err := zerosPoles(num, den)
	if err != nil {
		return nil, err
	}
	shift := func(rs []complex128) []complex128 {
		out := make([]complex128, len(rs))
		for i, r := range rs {
			out[i] = (r - 1) / complex(d, 0)
		}
		return out
	}
	k := num.Lead() / den.Lead() * math.Pow(d, float64(len(zs)-len(ps)))
	nd := poly.FromRoots(shift(zs)).Scale(k)
	dd := poly.FromRoots(shift(ps))
	if !nd.Finite() || !dd.Finite() {
		return nil, fmt.Errorf("the delta-form coefficients overflow")
	}
	return []Section{direct(nd, dd)}, nil
}

func zerosPoles(num, den poly.Poly) (zs, ps []complex128, err error) {
	if num.Degree() > 0 {
		r, err := roots.Find(num)
		if err != nil {
			return nil, nil, fmt.Errorf("zeros: %v", err)
		}
		zs = r.Roots
	}
	if den.Degree() > 0 {
		r, err := roots.Find(den)
		if err != nil {
			return nil, nil, fmt.Errorf("poles: %v", err)
		}
		ps = r.Roots
	}
	return zs, ps, nil
}

// group is the poles (1 or 2) of one section and the zeros given to it.
type group struct {
	poles, zeros []complex128
}

func (g group) radius() float64 { return cmplx.Abs(g.poles[0]) }

// sections factors the block into first- and second-order sections.
//
// Pairing and ordering rule (common practice in fixed-point filter design,
// the one scipy.signal.zpk2sos applies with pairing="nearest"; Jackson,
// "Digital Filters and Signal Processing", discusses why, from memory):
//   - a complex-conjugate pole pair forms one section; real poles, sorted by
//     radius, are paired neighbour with neighbour, an odd one out alone;
//   - sections take zeros in order of decreasing pole radius (poles nearest
//     the circle first), each the remaining zero(s) nearest its pole, a
//     complex pair together, never more zeros than poles;
//   - the cascade runs in order of increasing pole radius, so the most
//     resonant section comes last, and the block's gain sits in the first
//     section's numerator.
func sections(num, den poly.Poly) ([]Section, error) {
	zs, ps, err := zerosPoles(num, den)
	if err != nil {
		return nil, err
	}
	groups := poleGroups(ps)
	sort.SliceStable(groups, func(i, j int) bool { return groups[i].radius() > groups[j].radius() })
	if placed := assignZeros(groups, zs); placed != len(zs) {
		return nil, fmt.Errorf("%d of %d zeros found no section", len(zs)-placed, len(zs))
	}
	sort.SliceStable(groups, func(i, j int) bool { return groups[i].radius() < groups[j].radius() })
	out := make([]Section, len(groups))
	for i, g := range groups {
		b := poly.FromRoots(g.zeros)
		if i == 0 {
			b = b.Scale(num.Lead() / den.Lead())
		}
		out[i] = direct(b, poly.FromRoots(g.poles))
	}
	if len(out) == 0 { // a constant
		out = []Section{{B: []float64{num.Lead() / den.Lead()}, A: []float64{1}}}
	}
	return out, nil
}

func poleGroups(ps []complex128) []group {
	var gs []group
	var reals []complex128
	for _, p := range ps {
		switch {
		case imag(p) > 0:
			gs = append(gs, group{poles: []complex128{p, cmplx.Conj(p)}})
		case imag(p) == 0:
			reals = append(reals, p)
		}
	}
	sort.SliceStable(reals, func(i, j int) bool { return cmplx.Abs(reals[i]) > cmplx.Abs(reals[j]) })
	for i := 0; i < len(reals); i += 2 {
		g := group{poles: reals[i:min(i+2, len(reals))]}
		gs = append(gs, g)
	}
	return gs
}

// assignZeros gives each group the remaining zeros nearest its pole. A
// complex zero pair needs a two-pole group; real zeros go into a two-pole
// group only while enough two-pole groups remain for the complex pairs.
func assignZeros(gs []group, zs []complex128) int {
	var pairs, reals []complex128 // pairs: the member with Im > 0
	for _, z := range zs {
		switch {
		case imag(z) > 0:
			pairs = append(pairs, z)
		case imag(z) == 0:
			reals = append(reals, z)
		}
	}
	twoLeft := 0
	for _, g := range gs {
		if len(g.poles) == 2 {
			twoLeft++
		}
	}
	for i := range gs {
		g := &gs[i]
		room := len(g.poles)
		if room == 2 {
			twoLeft--
		}
		p := g.poles[0]
		for room > 0 {
			pi, pd := nearest(pairs, p)
			ri, rd := nearest(reals, p)
			realAllowed := ri >= 0 && (room == 1 || len(pairs) <= twoLeft || pi < 0)
			switch {
			case room == 2 && pi >= 0 && (!realAllowed || pd <= rd):
				g.zeros = append(g.zeros, pairs[pi], cmplx.Conj(pairs[pi]))
				pairs = append(pairs[:pi], pairs[pi+1:]...)
				room -= 2
			case realAllowed:
				g.zeros = append(g.zeros, reals[ri])
				reals = append(reals[:ri], reals[ri+1:]...)
				room--
			default:
				room = 0
			}
		}
	}
	placed := 0
	for _, g := range gs {
		placed += len(g.zeros)
	}
	return placed
}

func nearest(zs []complex128, p complex128) (int, float64) {
	best, bd := -1, math.Inf(1)
	for i, z := range zs {
		if d := cmplx.Abs(z - p); d < bd {
			best, bd = i, d
		}
	}
	return best, bd
}
