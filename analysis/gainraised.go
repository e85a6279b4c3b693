package analysis

import (
	"math"
	"math/cmplx"

	"ringside/analysis/gainlimit"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// raisedGuard: a value closer than this (relative) to a boundary of a
// raised loop's spans is not worth an eigenvalue check there (a pole is
// then too near the circle for the check to call it outside).
const raisedGuard = 1e-6

// raisedLoops holds, for a gain on which every loop's characteristic
// polynomial is affine and of low order, the loops with L raised by their
// required gain margin r (L·10^(r/20)), as D-decompositions of the gain
// axis (gainlimit.AffineSpans).
//
// Why they bound the safe value: let the loop be stable at k with gain
// margin GM ≥ r dB (the phase crossing nearest 0 dB). Were the raised loop
// unstable at k, a pole of 1 + β·L would cross the circle for some factor
// β in (1, 10^(r/20)), where β·L = −1: a phase crossing with a margin in
// (0, r) dB, so GM < r. Hence a value at which a raised loop is unstable
// cannot keep the margin. (The converse fails on conditionally stable
// loops, so a boundary of the raised loops is only a guess to verify.) A
// value is ruled out only where a raised loop certainly has a pole outside
// the circle (fails: a certified root of its polynomial, else its model's
// eigenvalues); the spans only choose the guess and where a check is worth
// running.
type raisedLoops struct {
	c     *checker
	name  string
	loops []*Loop
	alpha []float64
	a, b  []poly.Poly // raised characteristic polynomial a + k·b per loop
	forms []affineForm
	iv    []gainlimit.Interval
	spans [][]gainlimit.Span
}

// raised returns the raised loops, or nil when some loop's
// characteristic polynomial is not affine in the gain or above
// MaxAffineDegree.
func (c *checker) raised(name string, k0 float64, loops []*Loop) *raisedLoops {
	r := &raisedLoops{c: c, name: name, loops: loops}
	for _, l := range loops {
		alpha := math.Pow(10, c.requiredGM(l)/20)
		a, b, ok := c.affineScaled(l, name, k0, alpha)
		if !ok || max(a.Degree(), b.Degree()) > MaxAffineDegree {
			return nil
		}
		iv, spans, err := gainlimit.AffineSpans(a, b, k0)
		if err != nil {
			return nil
		}
		r.alpha = append(r.alpha, alpha)
		r.forms = append(r.forms, c.affineForm(l, name, k0))
		r.a, r.b = append(r.a, a), append(r.b, b)
		r.iv, r.spans = append(r.iv, iv), append(r.spans, spans)
	}
	return r
}

// boundary returns the value where the required gain margin runs out: the
// upper end of each raised loop's stable interval (around k0 when k0 is
// raised-stable, otherwise the nearest one below), the smallest over the
// loops and the stability limit. It is a guess that the caller verifies:
// the margin convention (the crossing nearest 0 dB) can differ on
// conditionally stable loops.
func (r *raisedLoops) boundary(k0 float64, lim *GainLimits) (float64, bool) {
	if r == nil || !lim.Exact {
		return 0, false
	}
	best := math.Inf(1)
	for _, iv := range r.iv {
		if !iv.Found || iv.Hi == nil {
			return 0, false
		}
		if !iv.ContainsCurrent && *iv.Hi > k0 {
			return 0, false
		}
		best = math.Min(best, *iv.Hi)
	}
	if lim.StableMax != nil {
		best = math.Min(best, *lim.StableMax)
	}
	return best, !math.IsInf(best, 1) && best != 0
}

// fails reports whether k provably misses the required gain margin: some
// raised loop certainly has a pole outside the circle at k, by a root of
// its polynomial whose first-order error bound keeps it outside
// (rootOutside), else by the eigenvalues of its model, built from its
// blocks like every trial model. The spans and the Schur–Cohn test of the
// expanded polynomial only choose where a check is worth running: the
// expanded polynomial loses its roots' accuracy when poles cluster (a
// double plant pole squared beside an integrator), so it decides nothing
// by itself. False means "not ruled out", never "meets".
func (r *raisedLoops) fails(k float64) bool {
	if r == nil {
		return false
	}
	for i := range r.loops {
		if !r.likelyUnstable(i, k) {
			continue
		}
		// Near a span's end the root is barely outside, closer than the
		// fit's bound allows to certify: only the eigenvalues can tell.
		near := spanAt(r.spans[i], k, rootGuard) < 0
		if !near && r.rootOutside(i, k) || r.eigOutside(i, k) {
			return true
		}
	}
	return false
}

// rootGuard: within this (relative) of a raised span's end, rootOutside
// is not tried.
const rootGuard = 1e-6

// eigOutside: the raised loop's model at k has a pole certainly outside
// the circle: its radius less its bound is beyond 1 + tolerance, or beyond
// 1 by twice its bound. (The tolerance is the band in which a reported
// pole counts as on the circle; proving an auxiliary loop unstable needs
// only the bound, and the factor two keeps the margin the pole implies
// far above the gain margin's own accuracy.)
func (r *raisedLoops) eigOutside(i int, k float64) bool {
	m, ok := r.c.modelScaled(r.loops[i], r.name, k, r.alpha[i])
	if !ok {
		return false
	}
	ps, err := m.Poles()
	if err != nil {
		return false
	}
	for _, p := range ps {
		if p.Place(r.c.env.Options.Tolerance) == lti.Outside || cmplx.Abs(p.Z)-2*p.Bound > 1 {
			return true
		}
	}
	return false
}

// rootOutside: a root of the raised polynomial p = a + k·b is certified
// outside the circle, with the affine fit's coefficient error at k
// (affineForm.errAt).
func (r *raisedLoops) rootOutside(i int, k float64) bool {
	p := r.a[i].Add(r.b[i].Scale(k))
	return rootCertifiedOutside(p, r.forms[i].errAt(k, r.alpha[i]), r.c.env.Options.Tolerance, true)
}

// rootCertifiedOutside reports whether some root z of p lies outside the
// circle by more than tol and its error bound, when each coefficient of p
// may be off by e (rootBounds); with auxiliary set, also a root outside by
// twice its bound (the rule eigOutside applies to an auxiliary loop, whose
// instability needs only the bound).
func rootCertifiedOutside(p poly.Poly, e, tol float64, auxiliary bool) bool {
	zs, bounds, ok := rootBounds(p.Trim(), e)
	if !ok {
		return false
	}
	for j, z := range zs {
		b := bounds[j]
		if b >= 0 && (cmplx.Abs(z)-b > 1+tol || auxiliary && cmplx.Abs(z)-2*b > 1) {
			return true
		}
	}
	return false
}

// rootsCertifiedWithin reports whether p has its full degree and every root
// lies within 1 + tol of the origin with its error bound (rootBounds), when
// each coefficient may be off by e: then no root of the polynomial p stands
// for is certainly outside the circle. A root in a cluster, or a degree
// lower than degree (a root gone to infinity), claims nothing.
func rootsCertifiedWithin(p poly.Poly, degree int, e, tol float64) bool {
	p = p.Trim()
	if p.Degree() != degree {
		return false
	}
	zs, bounds, ok := rootBounds(p, e)
	if !ok {
		return false
	}
	for j, z := range zs {
		if bounds[j] < 0 || cmplx.Abs(z)+bounds[j] > 1+tol {
			return false
		}
	}
	return true
}

// rootBounds returns the roots of p and a first-order error bound on each
// when each coefficient may be off by e, as for the eigenvalues (Wilkinson,
// Rounding Errors in Algebraic Processes, ch. 2: a simple root moves by
// δp(z)/p'(z)): twice (|p(z)| + e·Σ|z|^m)/|p'(z)|, |p(z)| being the root
// finder's residual. A bound that is not below a quarter of the distance to
// the nearest other root is −1: the root is in a cluster, where the first
// order says nothing. ok is false when p has no roots to find.
func rootBounds(p poly.Poly, e float64) (zs []complex128, bounds []float64, ok bool) {
	if p.Degree() < 1 || !p.Finite() {
		return nil, nil, false
	}
	zs, ok = roots.Companion(p)
	if !ok {
		return nil, nil, false
	}
	dp := p.Deriv()
	bounds = make([]float64, len(zs))
	for j, z := range zs {
		az := cmplx.Abs(z)
		sum, pw := 0.0, 1.0
		for range p {
			sum, pw = sum+pw, pw*az
		}
		bound := 2 * (cmplx.Abs(p.EvalC(z)) + e*sum) / cmplx.Abs(dp.EvalC(z))
		sep := math.Inf(1)
		for m, w := range zs {
			if m != j {
				sep = math.Min(sep, cmplx.Abs(z-w))
			}
		}
		if !(bound < sep/4) {
			bound = -1
		}
		bounds[j] = bound
	}
	return zs, bounds, true
}

// likelyUnstable reports whether raised loop i looks unstable at k on its
// expanded polynomial: k inside an unstable span, clear of its ends, and
// Schur–Cohn agreeing at k itself.
func (r *raisedLoops) likelyUnstable(i int, k float64) bool {
	j := spanAt(r.spans[i], k, raisedGuard)
	if j < 0 || r.spans[i][j].Stable {
		return false
	}
	p := r.a[i].Add(r.b[i].Scale(k))
	if p.Degree() < max(r.a[i].Degree(), r.b[i].Degree()) {
		return true // a root went to infinity
	}
	st, err := gainlimit.SchurStable(p)
	return err == nil && !st
}

// spanAt is the index of the span holding k clear of its ends by guard
// (relative), or -1.
func spanAt(spans []gainlimit.Span, k, guard float64) int {
	for j, s := range spans {
		if s.Lo != nil && !(k-*s.Lo > guard*math.Max(math.Abs(k), math.Abs(*s.Lo))) {
			continue
		}
		if s.Hi != nil && !(*s.Hi-k > guard*math.Max(math.Abs(k), math.Abs(*s.Hi))) {
			continue
		}
		return j
	}
	return -1
}
