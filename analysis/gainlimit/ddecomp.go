package gainlimit

import (
	"errors"
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
)

// D-decomposition of a gain axis (Neimark, 1948, from memory) for a
// characteristic polynomial that is polynomial in the gain:
//
//	p(z, s) = Σ_j s^j q_j(z),  j = 0 … D.
//
// The number of roots of p(·, s) outside the unit circle can change only
// where a root crosses the circle, p(e^{jω}, s) = 0 with real s, or passes
// through infinity (the leading coefficient in z vanishes). For each ω,
// p(e^{jω}, s) is a polynomial of degree D in s with complex coefficients;
// its roots are real only at the boundary. Since p(e^{−jω}, s) is the
// conjugate of p(e^{jω}, s) for real s, ω in [0, π] suffices.

// MaxGainDegree is the highest degree in the gain DBoundary accepts: its
// roots in s are found by Durand–Kerner iteration, reliable and cheap up to
// a quartic.
const MaxGainDegree = 4

// ddGridPerDegree is the number of ω grid points per degree in z of p (at
// least ddGridMin): the roots in s move at most about n times as fast as
// e^{jω} does, so a few dozen points per degree keep two crossings from
// sharing one cell.
const (
	ddGridPerDegree = 48
	ddGridMin       = 512
	ddGridMax       = 8192
)

// ddRealTol: a root s of p(e^{jω}, s) counts as real when
// |Im s| ≤ ddRealTol·(1 + |s|) — the accuracy of a quartic's roots from
// coefficients rounded to ε ≈ 1e-16, with room for a double root (√ε).
const ddRealTol = 1e-7

// ddMaxCandidates bounds the candidates DBoundary returns: more mean the
// polynomial's values on the circle are lost to rounding over a range of ω
// (roots clustered near the circle), and it gives up.
const ddMaxCandidates = 256

// ErrIllConditioned is returned when rounding hides where roots cross the
// circle.
var ErrIllConditioned = errors.New("gainlimit: characteristic polynomial too ill-conditioned on the circle for the D-decomposition")

// ErrGainDegree is returned when p is of too high a degree in the gain.
var ErrGainDegree = errors.New("gainlimit: characteristic polynomial of too high a degree in the gain")

// DBoundary returns the candidate boundary values of s for
// p(z, s) = Σ_j s^j q[j](z): the real s where p(e^{jω}, s) = 0 for some
// ω in [0, π], and the real s where p's leading coefficient in z vanishes.
// The list may hold spurious values (the caller decides each span between
// them by a stability check and merges stable neighbours) and repeats.
//
// Method: at ω = 0 and π the polynomial in s is real and its real roots
// are taken directly. Inside (0, π) the number of roots with Im s > 0 is
// counted on a grid; where it changes, a root has crossed the real axis,
// and the crossing ω is found by bisection on that count (60 steps, to
// rounding); the candidate is the real part of the root nearest the real
// axis there. Roots that are real at a grid point (a pole sitting on the
// circle over a range) are candidates too.
func DBoundary(q []poly.Poly) ([]float64, error) {
	for len(q) > 0 && q[len(q)-1].IsZero() {
		q = q[:len(q)-1]
	}
	if len(q)-1 > MaxGainDegree {
		return nil, ErrGainDegree
	}
	if len(q) < 2 {
		return nil, nil // p does not depend on s
	}
	q = unitScale(q)
	n := 0
	for _, p := range q {
		n = max(n, p.Degree())
	}
	var out []float64
	lead := make(poly.Poly, len(q))
	for j, p := range q {
		if len(p) > n {
			lead[j] = p[n]
		}
	}
	out = append(out, realRoots(complexCoeffs(lead))...)
	norms := make([]float64, len(q))
	for j, p := range q {
		for _, v := range p {
			norms[j] += math.Abs(v)
		}
	}
	gamma := 4 * float64(n+len(q)) * 0x1p-53
	at := func(w float64) []complex128 { return rootsInS(q, cmplx.Exp(complex(0, w))) }
	// onAxis keeps the roots that are real within ddRealTol or within the
	// first-order error bound of a root of the evaluated polynomial:
	// γ·Σ_j |s|^j ‖q_j‖₁ / |∂p/∂s| (Horner's rounding bound over the
	// derivative), so that rounding cannot hide a crossing.
	onAxis := func(w float64, rs []complex128) []float64 {
		z := cmplx.Exp(complex(0, w))
		var out []float64
		for _, r := range rs {
			e, d, pow := 0.0, complex(0, 0), complex(1, 0)
			for j := range q {
				e += norms[j] * math.Pow(cmplx.Abs(r), float64(j))
				if j > 0 {
					d += complex(float64(j), 0) * pow * evalC(q[j], z)
					pow *= r
				}
			}
			tol := ddRealTol * (1 + cmplx.Abs(r))
			if a := cmplx.Abs(d); a > 0 {
				tol = math.Max(tol, gamma*e/a)
			}
			if math.Abs(imag(r)) <= tol {
				out = append(out, real(r))
			}
		}
		return out
	}
	out = append(out, onAxis(0, at(0))...)
	out = append(out, onAxis(math.Pi, at(math.Pi))...)
	m := min(max(ddGridMin, ddGridPerDegree*(n+1)), ddGridMax)
	prevW := 0.0
	var prevCount int
	for i := 0; i < m; i++ {
		w := math.Pi * (float64(i) + 0.5) / float64(m)
		rs := at(w)
		out = append(out, onAxis(w, rs)...)
		if len(out) > ddMaxCandidates {
			return nil, ErrIllConditioned
		}
		cnt := upper(rs)
		if i > 0 && cnt != prevCount {
			if s, ok := crossing(at, prevW, w, prevCount); ok {
				out = append(out, s)
			}
		}
		prevW, prevCount = w, cnt
	}
	finite := out[:0]
	for _, k := range out {
		if !math.IsNaN(k) && !math.IsInf(k, 0) {
			finite = append(finite, k)
		}
	}
	return finite, nil
}

// unitScale divides every q_j by one power of two bringing the largest
// coefficient near 1 (p's roots do not change), so that evaluating p on
// the circle neither overflows nor underflows.
func unitScale(q []poly.Poly) []poly.Poly {
	big := 0.0
	for _, p := range q {
		for _, v := range p {
			big = math.Max(big, math.Abs(v))
		}
	}
	if big == 0 || math.IsInf(big, 0) || math.IsNaN(big) {
		return q
	}
	_, e := math.Frexp(big)
	out := make([]poly.Poly, len(q))
	for j, p := range q {
		out[j] = make(poly.Poly, len(p))
		for i, v := range p {
			out[j][i] = math.Ldexp(v, -e)
		}
	}
	return out
}

// crossing bisects (a, b) on the count of roots above the real axis (ca at
// a) and returns the real part of the root nearest the axis at the end.
func crossing(at func(float64) []complex128, a, b float64, ca int) (float64, bool) {
	for i := 0; i < 60 && b-a > 1e-15; i++ {
		mid := a + (b-a)/2
		if upper(at(mid)) == ca {
			a = mid
		} else {
			b = mid
		}
	}
	best, bestIm := 0.0, math.Inf(1)
	for _, w := range []float64{a, b} {
		for _, r := range at(w) {
			if d := math.Abs(imag(r)) / (1 + cmplx.Abs(r)); d < bestIm {
				best, bestIm = real(r), d
			}
		}
	}
	return best, !math.IsInf(bestIm, 1)
}

func upper(rs []complex128) int {
	c := 0
	for _, r := range rs {
		if imag(r) > 0 {
			c++
		}
	}
	return c
}

func realOf(rs []complex128) []float64 {
	var out []float64
	for _, r := range rs {
		if math.Abs(imag(r)) <= ddRealTol*(1+cmplx.Abs(r)) {
			out = append(out, real(r))
		}
	}
	return out
}

func realRoots(c []complex128) []float64 { return realOf(complexRoots(c)) }

func complexCoeffs(p poly.Poly) []complex128 {
	c := make([]complex128, len(p))
	for i, v := range p {
		c[i] = complex(v, 0)
	}
	return c
}

// rootsInS returns the roots in s of p(z, s) at the given z.
func rootsInS(q []poly.Poly, z complex128) []complex128 {
	c := make([]complex128, len(q))
	for j, p := range q {
		c[j] = evalC(p, z)
	}
	return complexRoots(c)
}

func evalC(p poly.Poly, z complex128) complex128 {
	var v complex128
	for i := len(p) - 1; i >= 0; i-- {
		v = v*z + complex(p[i], 0)
	}
	return v
}

// complexRoots returns the roots of Σ c[j] s^j (ascending), after dropping
// leading coefficients negligible beside the largest (those roots are at
// infinity): closed forms up to degree 2, Durand–Kerner iteration beyond.
func complexRoots(c []complex128) []complex128 {
	big := 0.0
	for _, v := range c {
		big = math.Max(big, cmplx.Abs(v))
	}
	for len(c) > 0 && cmplx.Abs(c[len(c)-1]) <= 1e-14*big {
		c = c[:len(c)-1]
	}
	switch len(c) {
	case 0, 1:
		return nil
	case 2:
		return []complex128{-c[0] / c[1]}
	case 3:
		a, b, cc := c[2], c[1], c[0]
		d := cmplx.Sqrt(b*b - 4*a*cc)
		q := -(b + d) / 2
		if real(cmplx.Conj(b)*d) < 0 {
			q = -(b - d) / 2
		}
		if q == 0 {
			return []complex128{0, 0}
		}
		return []complex128{q / a, cc / q}
	}
	return durandKerner(c)
}

// durandKerner finds the roots of a monic-normalised polynomial by
// simultaneous Weierstrass corrections (quadratic convergence for simple
// roots), from starting points on a circle of the Cauchy bound's size.
func durandKerner(c []complex128) []complex128 {
	n := len(c) - 1
	m := make([]complex128, n+1)
	for i := range c {
		m[i] = c[i] / c[n]
	}
	r := 0.0
	for i := 0; i < n; i++ {
		r = math.Max(r, cmplx.Abs(m[i]))
	}
	r++
	z := make([]complex128, n)
	for i := range z {
		z[i] = cmplx.Rect(r, 2*math.Pi*float64(i)/float64(n)+0.4)
	}
	for it := 0; it < 500; it++ {
		moved := 0.0
		for i := range z {
			num := m[n]
			for k := n - 1; k >= 0; k-- {
				num = num*z[i] + m[k]
			}
			den := complex(1, 0)
			for j := range z {
				if j != i {
					den *= z[i] - z[j]
				}
			}
			if den == 0 {
				den = 1e-300
			}
			d := num / den
			z[i] -= d
			moved = math.Max(moved, cmplx.Abs(d)/(1+cmplx.Abs(z[i])))
		}
		if moved < 1e-15 {
			break
		}
	}
	return z
}
