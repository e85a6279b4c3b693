package analysis

import (
	"errors"
	"math"
	"math/cmplx"
	"sort"

	"ringside/analysis/freq"
	"ringside/analysis/gainlimit"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
)

// MaxAffineDegree is the highest characteristic-polynomial degree for which
// the exact affine method (gainlimit.Affine, on expanded polynomials) is
// used: up to it, the polynomial's roots keep a usable accuracy; beyond it,
// the frequency-response and eigenvalue methods take over.
const MaxAffineDegree = 10

// evalAt is the evaluator with gain name set to k: the check's own when k
// is the gain's value there (every block in scope is evaluated before the
// loops, so it is only read, and gives what a sweep to k would compute),
// else a sweep.
func (c *checker) evalAt(name string, k float64) *evaluator {
	if c.base.gain(name) == k {
		return c.base
	}
	return c.base.sweep(name, k)
}

// modelAt builds a loop's model with gain name set to k.
func (c *checker) modelAt(l *Loop, name string, k float64) (*lti.Loop, bool) {
	return c.modelScaled(l, name, k, 1)
}

// modelScaled builds the model of a loop with gain name set to k and L
// multiplied by alpha.
func (c *checker) modelScaled(l *Loop, name string, k, alpha float64) (*lti.Loop, bool) {
	ev := c.evalAt(name, k)
	sh := shapeOf(l.Stmt)
	fwd, ok1 := c.elements(ev, sh.fwd, false)
	fb, ok2 := c.elements(ev, sh.fb, false)
	if !ok1 || !ok2 {
		return nil, false
	}
	if alpha != 1 {
		fwd = append(fwd, element{name: "raised", tf: poly.RConst(alpha), fac: lti.Const(alpha)})
	}
	m, err := model(fwd, fb, sh.positive)
	return m, err == nil
}

// decideAt returns the model of loop l with the gain at k, its poles and its
// verdict (Undecided when the model cannot be built or solved).
func (c *checker) decideAt(l *Loop, name string, k float64) (*lti.Loop, []lti.Pole, lti.Verdict) {
	m, ok := c.modelAt(l, name, k)
	if !ok {
		return nil, nil, lti.Undecided
	}
	ps, err := m.Poles()
	if err != nil {
		return nil, nil, lti.Undecided
	}
	v, _ := lti.Decide(ps, c.env.Options.Tolerance)
	return m, ps, v
}

// stableModelAt returns the model of loop l with the gain at k and its
// poles when it is certainly stable there; ok is false otherwise. Most
// values a search rejects are rejected from eigenvalues alone
// (CannotBeStable), without the bounds.
func (c *checker) stableModelAt(l *Loop, name string, k float64) (m *lti.Loop, ps []lti.Pole, ok bool) {
	m, built := c.modelAt(l, name, k)
	if !built || m.CannotBeStable(c.env.Options.Tolerance) {
		return nil, nil, false
	}
	ps, err := m.Poles()
	if err != nil {
		return nil, nil, false
	}
	v, _ := lti.Decide(ps, c.env.Options.Tolerance)
	return m, ps, v == lti.Stable
}

// stableAt reports whether every loop is certainly stable with the gain at
// k: an eigenvalue check whose bounds keep every pole inside the circle.
func (c *checker) stableAt(name string, k float64, loops []*Loop) bool {
	for _, l := range loops {
		if _, _, ok := c.stableModelAt(l, name, k); !ok {
			return false
		}
	}
	return true
}

// unstableAt reports whether some loop certainly has a pole outside the
// circle with the gain at k. A loop whose characteristic polynomial has
// been fitted as affine in the gain is read first from that polynomial:
// when its roots are certified within the circle's tolerance band
// (rootsWithin), no pole of the loop can be certainly outside, and the
// eigenvalues are not needed; otherwise they decide.
func (c *checker) unstableAt(name string, k float64, loops []*Loop) bool {
	for _, l := range loops {
		if c.rootsWithin(l, name, k) {
			continue
		}
		if _, _, v := c.decideAt(l, name, k); v == lti.Unstable {
			return true
		}
	}
	return false
}

// rootsWithin reports whether the loop's characteristic polynomial, as
// fitted affine in gain name (affineForm, when already fitted), has every
// root at k certified no farther out than 1 + tolerance, with the fit's
// coefficient error at k (rootsCertifiedWithin). The loop's poles are those
// roots (the model and the polynomial are the same loop: common factors
// are roots of both), so none of them is then certainly outside.
func (c *checker) rootsWithin(l *Loop, name string, k float64) bool {
	v, ok := c.forms.Load(formKey{l, name})
	if !ok || !v.(affineForm).ok {
		return false
	}
	f := v.(affineForm)
	a, b := f.char(1)
	degree := max(a.Degree(), b.Degree())
	if degree > MaxAffineDegree {
		return false
	}
	return rootsCertifiedWithin(a.Add(b.Scale(k)), degree, f.errAt(k, 1), c.env.Options.Tolerance)
}

// verifiedEnds checks the interval (lo, hi) just inside each end (a
// thousandth of the span in): no pole may be certainly outside there. (Just
// inside a boundary a pole is close to the circle, and may be within the
// on-circle tolerance; only a pole certainly outside reveals a missed
// boundary.)
func (c *checker) verifiedEnds(name string, lo, hi *float64, loops []*Loop) bool {
	return !(lo != nil && c.unstableAt(name, inner(lo, hi, 1e-3), loops) ||
		hi != nil && c.unstableAt(name, inner(lo, hi, 1-1e-3), loops))
}

// excess is the smallest amount, in dB, by which the loops using gain name
// exceed their required gain margin with the gain set to k (+Inf when no
// loop has a phase crossing), and NaN when some loop is not certainly
// stable there.
func (c *checker) excess(name string, k float64, loops []*Loop) float64 {
	worst := math.Inf(1)
	for _, l := range loops {
		m, ps, ok := c.stableModelAt(l, name, k)
		if !ok {
			return math.NaN()
		}
		gm, err := freq.GainMarginFactors(m.Factors(ps), c.res.SampleT)
		if errors.Is(err, freq.ErrZeroPoly) {
			continue // L ≡ 0: no crossing
		}
		if err != nil {
			return math.NaN()
		}
		if gm != nil {
			worst = math.Min(worst, *gm-c.requiredGM(l))
		}
	}
	return worst
}

// scalingTol: two evaluations of a loop are the same L up to a factor when
// their poles and zeros agree to this relative accuracy (they are computed
// from the same polynomials, scaled, so they agree to rounding).
const scalingTol = 1e-12

// scalingForm returns, when gain name only scales loop l's L
// (L(k) = (k/k1)·L(k1): a proportional gain, a gain block on the path), the
// loop's model at k1 (k0, or 1 when k0 is 0). Kept per loop and gain, like
// affineForm.
func (c *checker) scalingForm(l *Loop, name string, k0 float64) (*lti.Loop, float64, bool) {
	key := scalingKey{l, name}
	if f, ok := c.forms.Load(key); ok {
		s := f.(scaling)
		return s.m, s.k1, s.ok
	}
	var s scaling
	if !c.affineForm(l, name, k0).notScaling(k0) {
		s.m, s.k1, s.ok = c.fitScaling(l, name, k0)
	}
	c.forms.Store(key, s)
	return s.m, s.k1, s.ok
}

type scalingKey formKey

type scaling struct {
	m  *lti.Loop
	k1 float64
	ok bool
}

// notScaleTol: an affine form whose constant numerator or gain-dependent
// denominator is larger than this, relative to the rest, has a term that
// k·L(1) lacks, far above the fit's AffineTolerance.
const notScaleTol = 1e-4

// notScaling reports whether an affine L = (numA + k·numB)/(denA + k·denB)
// certainly does not scale with the gain. L(k) = k·R for every k forces
// numA + k·numB = k·R·(denA + k·denB), so denB = 0 and numA = 0; a form
// clearly violating that would fail fitScaling's comparison of two models
// anyway, and two model builds are saved.
func (f affineForm) notScaling(k0 float64) bool {
	if !f.ok {
		return false
	}
	h := math.Max(math.Abs(k0), 1)
	num, den := maxAbs(f.numA)+h*maxAbs(f.numB), maxAbs(f.denA)+h*maxAbs(f.denB)
	return maxAbs(f.numA) > notScaleTol*num || h*maxAbs(f.denB) > notScaleTol*den
}

// fitScaling compares the loop's models at k1 and 2·k1: L scales when the
// second's gain is twice the first's and their poles and zeros agree.
func (c *checker) fitScaling(l *Loop, name string, k0 float64) (*lti.Loop, float64, bool) {
	k1 := k0
	if k1 == 0 {
		k1 = 1
	}
	m1, ok1 := c.modelAt(l, name, k1)
	m2, ok2 := c.modelAt(l, name, 2*k1)
	if !ok1 || !ok2 {
		return nil, 0, false
	}
	a, b := m1.Written(), m2.Written()
	if a.Gain == 0 || math.Abs(b.Gain/a.Gain-2) > scalingTol || !sameRoots(a.Poles, b.Poles) || !sameRoots(a.Zeros, b.Zeros) {
		return nil, 0, false
	}
	return m1, k1, true
}

func sameRoots(a, b []complex128) bool {
	if len(a) != len(b) {
		return false
	}
	a, b = sortedRoots(a), sortedRoots(b)
	for i := range a {
		if cmplx.Abs(a[i]-b[i]) > scalingTol*math.Max(1, cmplx.Abs(a[i])) {
			return false
		}
	}
	return true
}

func sortedRoots(zs []complex128) []complex128 {
	out := append([]complex128(nil), zs...)
	sort.Slice(out, func(i, j int) bool {
		if real(out[i]) != real(out[j]) {
			return real(out[i]) < real(out[j])
		}
		return imag(out[i]) < imag(out[j])
	})
	return out
}

// scalingInterval is the stable interval of a gain that scales L in every
// loop, by Neimark's D-decomposition of the gain axis: a closed-loop pole
// of 1 + (k/k1)·L1 = 0 lies on the circle at z = e^{jθ} exactly when L1 is
// real there and k = −k1/L1(θ) (the real-axis crossings of L1), goes to
// infinity at k = −k1/L1(∞) when L1 is biproper, and at k = 0 the closed-
// loop poles are the open-loop ones (an integrator stays on the circle:
// an isolated unstable value). Between consecutive candidates no pole
// meets the circle, so stability is constant there; one eigenvalue check
// per span decides it, and the chosen interval's ends are verified by an
// eigenvalue check just inside each end (verifiedEnds). ok is false when some loop does
// not scale with the gain, or a check disagrees with the candidates.
func (c *checker) scalingInterval(name string, k0 float64, loops []*Loop) (gainlimit.Interval, bool) {
	cands := []float64{0}
	for _, l := range loops {
		m, k1, ok := c.scalingForm(l, name, k0)
		if !ok {
			return gainlimit.Interval{}, false
		}
		f := m.Open()
		if f.Gain == 0 {
			return gainlimit.Interval{}, false
		}
		_, vals, err := freq.RealAxisCrossings(freq.Factors{Gain: f.Gain, Zeros: f.Zeros, Poles: f.Poles})
		if err != nil {
			return gainlimit.Interval{}, false
		}
		for _, v := range vals {
			if v != 0 {
				cands = append(cands, -k1/v)
			}
		}
		if f.RelativeDegree() == 0 {
			cands = append(cands, -k1/f.Gain)
		}
	}
	return c.spans(name, k0, loops, cands)
}

// spans decides stability between sorted candidate boundaries and returns
// the interval around k0 (or the nearest stable one), verified.
func (c *checker) spans(name string, k0 float64, loops []*Loop, cands []float64) (gainlimit.Interval, bool) {
	sort.Float64s(cands)
	var ks []float64
	for _, k := range cands {
		if math.IsNaN(k) || math.IsInf(k, 0) {
			continue
		}
		if len(ks) > 0 && math.Abs(k-ks[len(ks)-1]) <= scalingTol*math.Abs(k) {
			continue
		}
		if k == 0 && c.stableAt(name, k, loops) {
			continue // zero is a boundary only where the open loop is not stable
		}
		ks = append(ks, k)
	}
	var sp []gainlimit.Span
	for i := 0; i <= len(ks); i++ {
		var s gainlimit.Span
		if i > 0 {
			s.Lo = &ks[i-1]
		}
		if i < len(ks) {
			s.Hi = &ks[i]
		}
		s.Stable = c.stableAt(name, inner(s.Lo, s.Hi, 0.5), loops)
		sp = append(sp, s)
	}
	best := -1
	for i, s := range sp {
		if s.Stable && (best < 0 || s.Distance(k0) < sp[best].Distance(k0)) {
			best = i
		}
	}
	cur := c.stableAt(name, k0, loops)
	if best < 0 {
		if cur {
			return gainlimit.Interval{}, false // a check disagrees with the candidates
		}
		return gainlimit.Interval{Exact: true}, true
	}
	s := sp[best]
	contains := s.Contains(k0)
	if contains != cur {
		return gainlimit.Interval{}, false
	}
	if !c.verifiedEnds(name, s.Lo, s.Hi, loops) {
		return gainlimit.Interval{}, false
	}
	return gainlimit.Interval{Lo: s.Lo, Hi: s.Hi, Exact: true, ContainsCurrent: contains, Found: true}, true
}

// inner returns the point at fraction t of the span (lo, hi); a missing
// end stands max(1, |other end|) away.
func inner(lo, hi *float64, t float64) float64 {
	switch {
	case lo != nil && hi != nil:
		return *lo + t*(*hi-*lo)
	case lo != nil:
		return *lo + t*2*math.Max(1, math.Abs(*lo))
	case hi != nil:
		return *hi - (1-t)*2*math.Max(1, math.Abs(*hi))
	}
	return 0
}

// numericInterval marches with eigenvalue checks (gainlimit.NumericFunc)
// and then cuts the interval at isolated unstable values the march steps
// over: k = 0, where a gain that multiplies a block leaves the open-loop
// poles (an integrator on the circle) as closed-loop poles.
func (c *checker) numericInterval(name string, k0 float64, loops []*Loop) (gainlimit.Interval, error) {
	iv, err := gainlimit.NumericFunc(func(k float64) (bool, error) { return c.stableAt(name, k, loops), nil }, k0)
	if err != nil || !iv.Found {
		return iv, err
	}
	for _, k := range []float64{0} {
		if k == k0 || (iv.Lo != nil && k <= *iv.Lo) || (iv.Hi != nil && k >= *iv.Hi) || c.stableAt(name, k, loops) {
			continue
		}
		v := k
		if k < k0 {
			iv.Lo = &v
		} else {
			iv.Hi = &v
		}
	}
	return iv, nil
}

// scalingSafeMax is the largest gain meeting every loop's required gain
// margin for a gain that scales L, in closed form: at a phase crossing the
// margin falls by 20·log10(k/k0) as k grows (the crossings do not move),
// so each crossing of each loop meets its requirement exactly at
// k0·10^((GM − required)/20). The candidates are tried from the largest
// down, each verified by a full check just below (passes) and just above
// (fails; or a raised loop unstable there, which proves it).
func (c *checker) scalingSafeMax(name string, k0 float64, loops []*Loop, lim *GainLimits, raised *raisedLoops) (float64, bool) {
	if !(k0 > 0) {
		return 0, false
	}
	var cands []float64
	for _, l := range loops {
		if _, _, ok := c.scalingForm(l, name, k0); !ok {
			return 0, false
		}
		for _, x := range l.Margins.PhaseCrossings {
			cands = append(cands, k0*math.Pow(10, (x.Value-c.requiredGM(l))/20))
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(cands)))
	for _, k := range cands {
		if lim.StableMax != nil && k > *lim.StableMax || lim.StableMin != nil && k < *lim.StableMin {
			continue
		}
		lo, hi := k*(1-SafeMaxTolerance/4), k*(1+SafeMaxTolerance/4)
		if c.meets(name, lo, loops) && (raised.fails(hi) || !c.meets(name, hi, loops)) {
			return lo, true
		}
	}
	return 0, false
}
