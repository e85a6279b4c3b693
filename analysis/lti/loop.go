package lti

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"ringside/analysis/freq"
	"ringside/analysis/step"
)

// CommonTol: a pole and a zero of the loop closer than CommonTol·max(1, |p|)
// (beyond the blocks' own root errors) are one common factor of the loop's
// numerator and denominator: an exact closed-loop pole, taken out before the
// eigenvalue computation and cancelled in L. Roots read from identical
// factors agree exactly; roots of low-order polynomials agree to a few ulps.
const CommonTol = 64 * eps

// maxCommonGain bounds |T'(p)| = |L'(p)/(1 + L'(p))| (L' the loop without
// the pair) for a near-common pair to be taken out: the closed-loop pole
// then moves from p by at most |p − q|·|T'(p)| to first order, and a larger
// factor means the pair is not negligible in the closed loop.
const maxCommonGain = 1e6

// Loop is a feedback loop built from its blocks' factored forms: the
// forward path (error to output) and the feedback path (measurement),
// closed with negative feedback unless Positive.
type Loop struct {
	Forward, Feedback []Factored
	Positive          bool

	sigma  float64  // +1 negative feedback, −1 positive
	full   Factored // L as written, sign folded in (closes as 1 + L = 0)
	open   Factored // L with the common factors taken out
	common []Pole   // exact closed-loop poles (common factors)
	err    float64  // largest root error of the blocks
}

// NewLoop builds the loop model. Nothing is expanded into polynomials.
func NewLoop(fwd, fb []Factored, positive bool) *Loop {
	l := &Loop{Forward: fwd, Feedback: fb, Positive: positive, sigma: 1}
	if positive {
		l.sigma = -1
	}
	l.full = Const(l.sigma)
	for _, b := range append(append([]Factored(nil), fwd...), fb...) {
		l.full = l.full.Mul(b)
	}
	l.err = notNaN(l.full.Err)
	l.takeCommon()
	return l
}

// takeCommon removes the poles matched by zeros (a multiset match) from L
// and records them as exact closed-loop poles. With L ≡ 0 (a zero gain)
// every pole of the blocks is a closed-loop pole, exactly.
func (l *Loop) takeCommon() {
	if l.full.Gain == 0 {
		for _, p := range l.full.Poles {
			l.common = append(l.common, Pole{Z: p, Bound: l.err, CentroidBound: l.err, Multiplicity: 1, Exact: true})
		}
		l.open = Factored{Err: l.err}
		return
	}
	pairs, keep, rest := l.matchCommon()
	l.open = Factored{Gain: l.full.Gain, Zeros: rest, Poles: keep, Err: l.err}
	l.settleCommon(pairs)
}

// commonPair is a block pole p matched by a zero q within CommonTol.
type commonPair struct{ p, q complex128 }

// matchCommon matches the poles of L with its zeros (a multiset match, a
// complex pole with its conjugate, the upper member deciding, so both lists
// stay closed under conjugation): the matched pairs (a complex pair and its
// mirror adjacent), and the poles and zeros left.
func (l *Loop) matchCommon() (pairs []commonPair, keep, rest []complex128) {
	zeros := append([]complex128(nil), l.full.Zeros...)
	used := make([]bool, len(zeros))
	for _, p := range l.full.Poles {
		if imag(p) < 0 {
			continue
		}
		best, bestD := -1, math.Inf(1)
		for j, q := range zeros {
			if used[j] || (imag(q) == 0) != (imag(p) == 0) || imag(q) < 0 {
				continue
			}
			if d := cmplx.Abs(p - q); d < bestD {
				best, bestD = j, d
			}
		}
		mate := -1
		if best >= 0 && imag(p) > 0 {
			mate = conjIndex(zeros, used, zeros[best])
		}
		if best >= 0 && (imag(p) == 0 || mate >= 0) && bestD <= CommonTol*math.Max(1, cmplx.Abs(p))+2*l.err {
			used[best] = true
			pairs = append(pairs, commonPair{p, zeros[best]})
			if mate >= 0 {
				used[mate] = true
				pairs = append(pairs, commonPair{cmplx.Conj(p), zeros[mate]})
			}
			continue
		}
		keep = append(keep, p)
		if imag(p) > 0 {
			keep = append(keep, cmplx.Conj(p))
		}
	}
	for j, q := range zeros {
		if !used[j] {
			rest = append(rest, q)
		}
	}
	return pairs, keep, rest
}

// settleCommon takes each matched pair out as an exact closed-loop pole,
// or keeps it in L (and so in the eigenvalue problem) when it is not near
// enough: a near pair moves the closed-loop pole by |p − q|·|T'(p)|. A
// complex pair and its mirror are kept or taken out together.
func (l *Loop) settleCommon(pairs []commonPair) {
	for i := 0; i < len(pairs); i++ {
		group := pairs[i : i+1]
		if imag(pairs[i].p) > 0 && i+1 < len(pairs) {
			group = pairs[i : i+2]
			i++
		}
		bounds := make([]float64, len(group))
		keepIn := false
		for j, pq := range group {
			d := cmplx.Abs(pq.p - pq.q)
			bounds[j] = l.err
			if d == 0 {
				continue
			}
			lp := l.open.At(pq.p)
			t := 1.0
			if !cmplx.IsInf(lp) {
				t = cmplx.Abs(lp / (1 + lp))
			}
			keepIn = keepIn || !(t <= maxCommonGain)
			bounds[j] = notNaN(l.err + d*t)
		}
		for j, pq := range group {
			if keepIn {
				l.open.Poles = append(l.open.Poles, pq.p)
				l.open.Zeros = append(l.open.Zeros, pq.q)
				continue
			}
			l.common = append(l.common, Pole{Z: pq.p, Bound: bounds[j], CentroidBound: bounds[j], Multiplicity: 1, Exact: true})
		}
	}
}

// conjIndex finds an unused zero equal to conj(q).
func conjIndex(zeros []complex128, used []bool, q complex128) int {
	for j, z := range zeros {
		if !used[j] && z == cmplx.Conj(q) {
			return j
		}
	}
	return -1
}

// Open returns L with the common factors cancelled, the feedback sign
// folded in (the loop closes as 1 + L = 0).
func (l *Loop) Open() Factored { return l.open }

// Written returns L as written (nothing cancelled), sign folded in.
func (l *Loop) Written() Factored { return l.full }

// Common returns the exact closed-loop poles taken out as common factors.
func (l *Loop) Common() []Pole { return l.common }

// At evaluates the cancelled L at z, factor by factor.
func (l *Loop) At(z complex128) complex128 { return l.open.At(z) }

// Order is the number of closed-loop poles.
func (l *Loop) Order() int { return len(l.full.Poles) }

// ErrIllPosed reports an algebraic loop with 1 + L(∞) = 0.
var ErrIllPosed = errors.New("lti: ill-posed algebraic loop (1 + L(∞) = 0)")

// Closed returns the state-space model of the cancelled loop closed by
// u = −y (1 + L = 0): its eigenvalues are the closed-loop poles other than
// the common ones.
func (l *Loop) Closed() (System, error) {
	if l.open.RelativeDegree() < 0 {
		return System{}, errors.New("lti: L has more zeros than poles (non-causal)")
	}
	s := Realize(l.open)
	cl, ok := Feedback(s, System{D: 1}, 1)
	if !ok {
		return System{}, ErrIllPosed
	}
	return cl, nil
}

// Poles returns every closed-loop pole with its bound, largest radius
// first: the common factors (exact) and the eigenvalues of Closed.
func (l *Loop) Poles() ([]Pole, error) {
	out := append([]Pole(nil), l.common...)
	if l.open.Gain != 0 {
		cl, err := l.Closed()
		if err != nil {
			return nil, err
		}
		ps, err := Eigen(cl.A, cl.N, l.err)
		if err != nil {
			return nil, err
		}
		out = append(out, ps...)
	}
	SortPoles(out)
	return out, nil
}

// CannotBeStable reports, from eigenvalues alone, that Poles would not
// decide Stable with on-circle tolerance tol: a common pole not certainly
// inside, or an eigenvalue of the closed loop at radius 1 − tol or more
// (some pole's disk then reaches it; see eigenvalues). False says nothing:
// only Poles can call a loop stable. It costs about a third of Poles, for
// the searches that try many values and need only the stable ones.
func (l *Loop) CannotBeStable(tol float64) bool {
	for _, p := range l.common {
		if p.Place(tol) != Inside {
			return true
		}
	}
	if l.open.Gain == 0 {
		return false
	}
	cl, err := l.Closed()
	if err != nil {
		return false
	}
	vals, err := eigenvalues(cl.A, cl.N)
	if err != nil {
		return false
	}
	for _, z := range vals {
		if cmplx.Abs(z) >= 1-tol {
			return true
		}
	}
	return false
}

// Verdict is the loop's stability as the poles' bounds decide it.
type Verdict int

const (
	Stable   Verdict = iota + 1 // every pole certainly inside (by tol)
	Marginal                    // none certainly outside, some on the circle
	Unstable                    // some pole certainly outside
	// Undecided: no pole is certainly outside or on the circle, and some
	// pole's bound straddles the circle.
	Undecided
)

// Decide returns the verdict over poles with on-circle tolerance tol, and
// the first pole that decides it (or leaves it undecided); -1 when stable.
func Decide(poles []Pole, tol float64) (Verdict, int) {
	undecided, on := -1, -1
	for i, p := range poles {
		switch p.Place(tol) {
		case Outside:
			return Unstable, i
		case OnCircle:
			if on < 0 {
				on = i
			}
		case Unknown:
			if undecided < 0 {
				undecided = i
			}
		}
	}
	switch {
	case on >= 0:
		return Marginal, on
	case undecided >= 0:
		return Undecided, undecided
	}
	return Stable, -1
}

// Factors returns the cancelled L in the frequency package's form, with
// the closed-loop poles (for the grid and the peak sensitivity).
func (l *Loop) Factors(poles []Pole) freq.Factors {
	f := freq.Factors{Gain: l.open.Gain, Zeros: l.open.Zeros, Poles: l.open.Poles}
	for _, p := range poles {
		f.Closed = append(f.Closed, p.Z)
	}
	return f
}

// Margins computes the margins on the cancelled L, block by block.
func (l *Loop) Margins(T float64, poles []Pole) (freq.Margins, error) {
	return freq.ComputeFactors(l.Factors(poles), T)
}

// Response samples the cancelled L, block by block, on the margins' search
// grid once, for the margins and the disk margin to read.
func (l *Loop) Response(T float64, poles []Pole) (*freq.Sampled, error) {
	return freq.SampleFactors(l.Factors(poles), T)
}

// Step simulates the unit step response, reference to the forward path's
// output, on the state-space model of the whole loop as written (nothing
// cancelled: a cancelled pair may still shape the output), for a loop
// whose largest pole radius is maxRadius < 1.
func (l *Loop) Step(T, maxRadius float64) (step.Result, error) {
	return l.step(T, maxRadius, true)
}

// StepFigures is Step for a caller that reads the figures only: the
// simulation may stop before the samples a view would show.
func (l *Loop) StepFigures(T, maxRadius float64) (step.Result, error) {
	return l.step(T, maxRadius, false)
}

func (l *Loop) step(T, maxRadius float64, view bool) (step.Result, error) {
	if !(T > 0) || math.IsInf(T, 0) {
		return step.Result{}, fmt.Errorf("lti: sample period %v s must be finite and positive", T)
	}
	if !(maxRadius >= 0 && maxRadius < 1) {
		return step.Result{}, fmt.Errorf("lti: largest pole radius %v is not in [0, 1): the loop is not stable", maxRadius)
	}
	g, h := Const(1), Const(1)
	for _, b := range l.Forward {
		g = g.Mul(b)
	}
	for _, b := range l.Feedback {
		h = h.Mul(b)
	}
	if g.RelativeDegree() < 0 || h.RelativeDegree() < 0 {
		return step.Result{}, errors.New("lti: a path has more zeros than poles (non-causal)")
	}
	cl, ok := Feedback(Realize(g), Realize(h), l.sigma)
	if !ok {
		return step.Result{}, ErrIllPosed
	}
	final, err := dcGain(g, h, l.sigma)
	if err != nil {
		return step.Result{}, err
	}
	K, clamped := step.Horizon(cl.N, maxRadius)
	sim, err := simulate(cl, K, final, view)
	if err != nil {
		return step.Result{}, err
	}
	return sim.result(T, final, clamped && !sim.stopped)
}

// dcGain is T(1) = G(1)/(1 + σG(1)H(1)) from the factors, as
// N_g D_h / (D_g D_h + σ N_g N_h) at z = 1 (finite with integrators).
func dcGain(g, h Factored, sigma float64) (float64, error) {
	ng, dg := g.ND(1)
	nh, dh := h.ND(1)
	den := dg*dh + complex(sigma, 0)*ng*nh
	if den == 0 {
		return 0, errors.New("lti: the closed loop has a pole at z = 1: not stable")
	}
	v := real(ng * dh / den)
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, errors.New("lti: the DC gain overflows: a pole at (or within rounding of) z = 1")
	}
	return v, nil
}

// simulation is what simulate returns: the figures read as the samples
// went by, the samples kept, and whether it stopped before the horizon.
type simulation struct {
	watch   *step.Tail
	y       []float64
	stopped bool
	leapt   bool // the last exit was found by a leap
}

// result returns the step figures of the simulation; clamped says the
// horizon was cut at step.MaxSamples and run to its end.
func (sim simulation) result(T, final float64, clamped bool) (step.Result, error) {
	if final == 0 {
		return step.FromSamples(sim.y, T, final, clamped)
	}
	return sim.watch.Result(T, sim.y, clamped)
}

// simulate runs x[k+1] = A x[k] + B, y[k] = C x[k] + D from x = 0 for K
// samples, over A's nonzero entries only (a chain of delays or sections is
// sparse: the work is the number of links, not n²). It reads the figures
// as it goes (step.Tail) and keeps only the samples a view shows
// (step.ShownMax, none when view is false), except for a response with
// final = 0, whose band needs every sample. It stops early, and reports
// so, once a tailBound on the rest of the response shows that no later
// sample can change a step figure: the figures are those of the full
// horizon, at a fraction of its length for slow loops.
func simulate(s System, K int, final float64, view bool) (simulation, error) {
	n := s.N
	rows := sparseRows(s.A, n)
	keep := 0
	switch {
	case final == 0:
		keep = K
	case view:
		keep = min(K, step.ShownMax)
	}
	x, nx := make([]float64, n), make([]float64, n)
	tb, early := newTailBound(s, K)
	sim := simulation{watch: step.NewTail(final, view, K), y: make([]float64, 0, min(keep, 4096))}
	next := make([]float64, n) // A x + B at the checks
	nextLeap := leapFrom
	for k := 0; k < K; k++ {
		if early && k%tailCheckEvery == 0 && (k >= nextLeap || !sim.watch.Pending()) {
			rows.step(next, x, s.B)
			dev, over := tb.bounds(x, next, final)
			if sim.watch.Done(dev, over) {
				sim.stopped = true // samples k on are bounded: none is taken
				return sim, nil
			}
			if k >= nextLeap {
				if sim.watch.OnlyExitOpen(dev, over) && sim.leap(s, rows, tb, x, k, K, final) {
					return sim, nil
				}
				nextLeap = k + max(k/4, 64)
			}
		}
		v := s.output(x)
		if v-v != 0 { // ±Inf or NaN
			return simulation{}, fmt.Errorf("lti: the step response overflows at sample %d: the loop is not stable as claimed", k)
		}
		if k < keep {
			sim.y = append(sim.y, v)
		}
		sim.watch.Add(v)
		rows.step(nx, x, s.B)
		x, nx = nx, x
	}
	return sim, nil
}

// output is y = C x + D.
func (s System) output(x []float64) float64 {
	v := s.D
	for i, c := range s.C {
		v += c * x[i]
	}
	return v
}

// entry is a nonzero entry of a row of A: its column and value.
type entry struct {
	j int
	a float64
}

// nonzeros is an n×n matrix by the nonzero entries of each row.
type nonzeros [][]entry

// step sets dst = A x + b.
func (r nonzeros) step(dst, x, b []float64) {
	for i, row := range r {
		acc := b[i]
		for _, e := range row {
			acc += e.a * x[e.j]
		}
		dst[i] = acc
	}
}

// sparseRows lists the nonzero entries of each row of the n×n matrix a.
func sparseRows(a []float64, n int) nonzeros {
	rows := make(nonzeros, n)
	for i := 0; i < n; i++ {
		for j, v := range a[i*n : (i+1)*n] {
			if v != 0 {
				rows[i] = append(rows[i], entry{j, v})
			}
		}
	}
	return rows
}

// tailCheckEvery is how often (in samples) simulate tries to stop early.
const tailCheckEvery = 16
