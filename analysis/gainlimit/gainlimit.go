// Package gainlimit finds the stable interval of a named gain k around its
// current value k0: the open interval of k for which the closed-loop
// characteristic polynomial c(k) keeps every root strictly inside the unit
// circle. Affine is exact for c(k) = a + k·b; Numeric marches and bisects
// for gains that enter in any other way.
package gainlimit

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Interval is an open interval (Lo, Hi) of gain values. A nil end is
// unbounded on that side (for Numeric: no boundary up to the search range).
type Interval struct {
	Lo, Hi *float64
	// Exact is true when the ends come from the affine method's algebra
	// rather than from bisection.
	Exact bool
	// ContainsCurrent is false when k0 itself is unstable; Lo and Hi then
	// describe the stable interval nearest to k0, if Found.
	ContainsCurrent bool
	// Found is false when no stable interval was found at all (Lo, Hi nil).
	Found bool
}

const (
	// circleRootTol: an eigenvalue of the boundary polynomial counts as a
	// unit-circle candidate when ||r| − 1| is below it. Double (tangential)
	// roots are only resolved to about √ε ≈ 1e-8 by the eigenvalue solver,
	// so the gate is wide; Newton polishing and the residual check below
	// remove candidates that are not real boundaries.
	circleRootTol = 1e-4
	// boundaryResidualTol: a candidate k with angle θ is kept when
	// |a(e^{jθ}) + k b(e^{jθ})| ≤ boundaryResidualTol·(|a| + |k||b|), i.e.
	// c(k) really has a root on the circle to well beyond plotting accuracy.
	// Loose enough for a tangential root polished to ~1e-8 in θ.
	boundaryResidualTol = 1e-6
	// sameCandidateTol merges candidate gains closer than this (relative).
	sameCandidateTol = 1e-12
)

// Affine returns the stable interval around k0 for the characteristic
// polynomial c(k) = a + k·b.
//
// Boundaries are the gains where a root of c(k) reaches the unit circle or
// infinity: (1) on the circle a(z) + k b(z) = 0 needs k = −a/b real, i.e.
// Im(a(e^{jθ}) conj b(e^{jθ})) = 0. With n = max(deg a, deg b) and
// reciprocals ã(z) = zⁿa(1/z), b̃(z) = zⁿb(1/z), those θ are the unit-circle
// roots of Q(z) = a(z)b̃(z) − ã(z)b(z) (degree ≤ 2n), found as companion
// eigenvalues, polished by Newton on the real function Im(a conj b), plus
// θ = 0 and θ = π where Im vanishes identically; k = −Re(a conj b)/|b|².
// (2) The leading coefficient aₙ + k bₙ vanishes at k = −aₙ/bₙ: a root goes
// to infinity, so c(k) of lower degree than max(deg a, deg b) counts as
// unstable. Between consecutive candidates the roots move continuously
// without meeting the circle, so stability is constant there; each such
// interval is tested with SchurStable at an inner point. The interval
// containing k0 is returned when SchurStable(c(k0)) holds; otherwise the
// stable interval nearest to k0 (ContainsCurrent false), or Found false.
// Should the inner test disagree with k0's own (a boundary lost to
// rounding), Affine falls back to Numeric and reports Exact false.
func Affine(a, b poly.Poly, k0 float64) (Interval, error) {
	iv, _, err := AffineSpans(a, b, k0)
	return iv, err
}

// AffineSpans is Affine, with the spans between consecutive candidates in
// increasing order of k, each decided by SchurStable at an inner point (the
// midpoint, or a step of max(1, |end|) beyond a single end, or k0 for the
// whole line). The spans are nil when the interval came from the Numeric
// fallback.
func AffineSpans(a, b poly.Poly, k0 float64) (Interval, []Span, error) {
	af, err := newAffine(a, b)
	if err != nil {
		return Interval{}, nil, err
	}
	if math.IsNaN(k0) || math.IsInf(k0, 0) {
		return Interval{}, nil, fmt.Errorf("gainlimit: current gain %v is not finite", k0)
	}
	spans, err := af.spans(k0)
	if err != nil {
		return Interval{}, nil, err
	}
	s0, err := af.stableAt(k0)
	if err != nil {
		return Interval{}, nil, err
	}
	if s0 {
		for _, s := range spans {
			if s.Contains(k0) {
				if !s.Stable {
					break // disagreement: fall back below
				}
				return Interval{Lo: clone(s.Lo), Hi: clone(s.Hi), Exact: true, ContainsCurrent: true, Found: true}, spans, nil
			}
		}
		iv, err := Numeric(func(k float64) (poly.Poly, error) { return af.at(k), nil }, k0)
		iv.Exact = false
		return iv, nil, err
	}
	best := -1
	for i, s := range spans {
		if s.Stable && (best < 0 || s.Distance(k0) < spans[best].Distance(k0)) {
			best = i
		}
	}
	if best < 0 {
		return Interval{Exact: true}, spans, nil
	}
	s := spans[best]
	return Interval{Lo: clone(s.Lo), Hi: clone(s.Hi), Exact: true, Found: true}, spans, nil
}

// clone copies an end, so that an Interval never shares storage with spans.
func clone(p *float64) *float64 {
	if p == nil {
		return nil
	}
	return ptr(*p)
}

// Span is an open interval of gains between consecutive boundaries of
// c(k) = a + k·b (nil: unbounded), inside which stability is constant.
type Span struct {
	Lo, Hi *float64
	Stable bool
}

// Contains reports whether k0 lies strictly inside the span.
func (s Span) Contains(k0 float64) bool {
	return (s.Lo == nil || *s.Lo < k0) && (s.Hi == nil || k0 < *s.Hi)
}

// Distance is how far k0 lies outside the span's closure (0 inside).
func (s Span) Distance(k0 float64) float64 {
	switch {
	case s.Lo != nil && k0 <= *s.Lo:
		return *s.Lo - k0
	case s.Hi != nil && k0 >= *s.Hi:
		return k0 - *s.Hi
	}
	return 0
}

// affine is a characteristic polynomial affine in the gain.
type affine struct {
	a, b poly.Poly
	deg  int
}

func newAffine(a, b poly.Poly) (affine, error) {
	if !a.Finite() || !b.Finite() {
		return affine{}, fmt.Errorf("gainlimit: non-finite coefficient in a = %v or b = %v", []float64(a), []float64(b))
	}
	a, b = a.Trim(), b.Trim()
	if len(b) == 0 {
		return affine{}, fmt.Errorf("gainlimit: b is the zero polynomial: the gain does not enter c(k)")
	}
	if len(a) == 0 && len(b) == 1 {
		return affine{}, fmt.Errorf("gainlimit: c(k) = k·%v has no roots to place", b[0])
	}
	return affine{a: a, b: b, deg: max(a.Degree(), b.Degree())}, nil
}

func (af affine) at(k float64) poly.Poly { return af.a.Add(af.b.Scale(k)) }

func (af affine) stableAt(k float64) (bool, error) {
	p := af.at(k)
	if p.Degree() < af.deg {
		return false, nil // a root went to infinity (or every z is a root)
	}
	return SchurStable(p)
}

func (af affine) spans(k0 float64) ([]Span, error) {
	cands := affineCandidates(af.a, af.b)
	spans := make([]Span, 0, len(cands)+1)
	for i := 0; i <= len(cands); i++ {
		var s Span
		if i > 0 {
			s.Lo = &cands[i-1]
		}
		if i < len(cands) {
			s.Hi = &cands[i]
		}
		st, err := af.stableAt(innerPoint(s.Lo, s.Hi, k0))
		if err != nil {
			return nil, err
		}
		s.Stable = st
		spans = append(spans, s)
	}
	return spans, nil
}

// innerPoint picks a test gain strictly inside (lo, hi): the midpoint, or a
// step of max(1, |end|) beyond a single end, or k0 for the whole line.
func innerPoint(lo, hi *float64, k0 float64) float64 {
	switch {
	case lo != nil && hi != nil:
		return *lo + (*hi-*lo)/2
	case lo != nil:
		return *lo + math.Max(1, math.Abs(*lo))
	case hi != nil:
		return *hi - math.Max(1, math.Abs(*hi))
	}
	return k0
}

func ptr(v float64) *float64 { return &v }

// affineCandidates returns the sorted, distinct gains at which c(k) = a + k·b
// has a root on the unit circle or loses degree.
func affineCandidates(a, b poly.Poly) []float64 {
	n := max(a.Degree(), b.Degree())
	var ks []float64
	if bn := coef(b, n); bn != 0 {
		ks = append(ks, -coef(a, n)/bn)
	}
	thetas := []float64{0, math.Pi}
	for _, th := range circleAngles(a, b, n) {
		thetas = append(thetas, polishAngle(a, b, th))
	}
	for _, th := range thetas {
		z := cmplx.Rect(1, th)
		A, B := a.EvalC(z), b.EvalC(z)
		bb := real(B)*real(B) + imag(B)*imag(B)
		if bb == 0 || cmplx.Abs(B) <= 1e-14*cmplx.Abs(A) {
			continue // common root of a and b on the circle: no k moves it
		}
		k := -real(A*cmplx.Conj(B)) / bb
		if cmplx.Abs(A+complex(k, 0)*B) <= boundaryResidualTol*(cmplx.Abs(A)+math.Abs(k)*cmplx.Abs(B)) {
			ks = append(ks, k)
		}
	}
	sort.Float64s(ks)
	var out []float64
	for _, k := range ks {
		if len(out) > 0 && math.Abs(k-out[len(out)-1]) <= sameCandidateTol*math.Max(1, math.Abs(k)) {
			continue
		}
		out = append(out, k)
	}
	return out
}

// chebyshevMaxDegree: up to this n, circleAngles solves the reduced
// polynomial in x = cos θ; the magnitudes of U_m's coefficients in powers
// of x sum to about (1 + √2)^m, so beyond it the rounding they carry would
// cost more digits than the full degree-2n companion does.
const chebyshevMaxDegree = 16

// circleAngles returns estimates of the angles θ in [0, π] where
// Q(z) = a(z)b̃(z) − ã(z)b(z), b̃(z) = zⁿb(1/z), has a root e^{jθ} (within
// circleRootTol of the circle); none when Q vanishes up to rounding.
//
// Q is anti-reciprocal: Q(z) = Σₘ cₘ (z^{n+m} − z^{n−m}) with cₘ = q[n+m],
// so on the circle Q(e^{jθ}) = 2j·e^{jnθ}·sin θ·g(cos θ), where
// g(x) = Σₘ cₘ U_{m−1}(x) (U the Chebyshev polynomials of the second kind:
// sin mθ = sin θ·U_{m−1}(cos θ)). Its circle roots other than ±1 (θ = 0
// and π are candidates anyway) are the roots of g in [−1, 1]: a problem
// of degree n − 1 instead of 2n. A root of Q at radius e^{±ε} maps to
// x = cos θ·cosh ε ∓ j·sin θ·sinh ε, so the gate |Im x| < circleRootTol,
// |Re x| ≤ 1 + circleRootTol admits every root the gate on |z| would.
func circleAngles(a, b poly.Poly, n int) []float64 {
	// Q is bilinear in a and b: scaling each by a power of two (exact)
	// keeps its roots and every product finite.
	a, b = unitScale([]poly.Poly{a})[0], unitScale([]poly.Poly{b})[0]
	rec := func(p poly.Poly) poly.Poly {
		r := make(poly.Poly, n+1)
		for i := 0; i <= n; i++ {
			r[i] = coef(p, n-i)
		}
		return r
	}
	q := a.Mul(rec(b)).Sub(rec(a).Mul(b))
	if negligible(q, a, b) {
		return nil
	}
	if n <= chebyshevMaxDegree {
		if g := cosPoly(q, n); g.Finite() {
			return cosAngles(g)
		}
	}
	var ths []float64
	if !q.Finite() {
		return nil
	}
	if rs, ok := roots.Companion(q); ok {
		for _, r := range rs {
			if math.Abs(cmplx.Abs(r)-1) < circleRootTol && imag(r) >= 0 {
				ths = append(ths, cmplx.Phase(r))
			}
		}
	}
	return ths
}

// cosPoly is g(x) = Σₘ cₘ U_{m−1}(x), cₘ = q[n+m]; a non-finite g sends
// circleAngles back to Q itself.
func cosPoly(q poly.Poly, n int) poly.Poly {
	g := make(poly.Poly, n)
	prev, cur := poly.Poly{}, poly.Poly{1} // U₋₁ = 0, U₀ = 1
	for m := 1; m <= n; m++ {
		c := coef(q, n+m)
		for i, v := range cur {
			g[i] += c * v
		}
		// U_m = 2x·U_{m−1} − U_{m−2}
		next := make(poly.Poly, len(cur)+1)
		for i, v := range cur {
			next[i+1] = 2 * v
		}
		for i, v := range prev {
			next[i] -= v
		}
		prev, cur = cur, next
	}
	return g
}

// cosAngles returns acos x for the roots x of g in [−1, 1] (see the gate
// in circleAngles).
func cosAngles(g poly.Poly) []float64 {
	xs, ok := roots.Companion(g)
	if !ok {
		return nil
	}
	var ths []float64
	for _, x := range xs {
		if math.Abs(imag(x)) < circleRootTol && math.Abs(real(x)) <= 1+circleRootTol {
			ths = append(ths, math.Acos(math.Max(-1, math.Min(1, real(x)))))
		}
	}
	return ths
}

// negligible reports whether q is zero up to rounding of the products a·b
// it was formed from (then Im(a conj b) ≡ 0: a and b are proportional on
// the circle, and only the degree-drop candidate remains).
func negligible(q, a, b poly.Poly) bool {
	scale := 0.0
	for _, x := range a {
		for _, y := range b {
			scale = math.Max(scale, math.Abs(x*y))
		}
	}
	for _, v := range q {
		if math.Abs(v) > 1e-13*scale {
			return false
		}
	}
	return true
}

func coef(p poly.Poly, i int) float64 {
	if i < 0 || i >= len(p) {
		return 0
	}
	return p[i]
}

// polishAngle refines θ as a root of f(θ) = Im(a(e^{jθ}) conj b(e^{jθ})) by
// Newton's method (at most 30 steps, stopping at a step below 1e-15 rad);
// a step that would leave [0, π] or grow past 1e-3 rad ends the polishing.
func polishAngle(a, b poly.Poly, th float64) float64 {
	da, db := a.Deriv(), b.Deriv()
	for i := 0; i < 30; i++ {
		z := cmplx.Rect(1, th)
		A, B := a.EvalC(z), b.EvalC(z)
		// d/dθ p(e^{jθ}) = j z p'(z).
		Ad := complex(0, 1) * z * da.EvalC(z)
		Bd := complex(0, 1) * z * db.EvalC(z)
		f := imag(A * cmplx.Conj(B))
		fd := imag(Ad*cmplx.Conj(B) + A*cmplx.Conj(Bd))
		if fd == 0 {
			break
		}
		step := f / fd
		if math.Abs(step) > 1e-3 || th-step < 0 || th-step > math.Pi {
			break
		}
		th -= step
		if math.Abs(step) < 1e-15 {
			break
		}
	}
	return th
}
