// Package search holds the one-dimensional searches the numeric packages
// share.
package search

import "math"

// GoldenMax returns the maximiser of f on [a, b] by golden-section search,
// narrowed to width tol (at most 200 steps). f is taken as unimodal on
// [a, b], which a sampled maximum between two lower neighbours gives on a
// fine enough sampling; otherwise the result is a local maximum.
func GoldenMax(f func(float64) float64, a, b, tol float64) float64 {
	const g = 0.6180339887498949
	c, d := b-g*(b-a), a+g*(b-a)
	fc, fd := f(c), f(d)
	for i := 0; i < 200 && b-a > tol; i++ {
		if fc > fd {
			b, d, fd = d, c, fc
			c = b - g*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + g*(b-a)
			fd = f(d)
		}
	}
	return a + (b-a)/2
}

// BrentMax returns a maximiser of f on [a, b] by Brent's method (R. P.
// Brent, "Algorithms for Minimization without Derivatives", 1973, ch. 5:
// golden-section steps combined with parabolic interpolation through the
// three best points), to within tol + √ε·|x| of the true location. On the
// smooth peaks met here it converges superlinearly: a dozen evaluations
// where golden section needs fifty to reach the same width. Like
// GoldenMax it takes f as unimodal on [a, b]. Near a smooth maximum
// float64 values stop telling points apart at about √ε relative, so a
// tighter location is not meaningful anyway. The ends a and b are
// candidates too (compared last).
func BrentMax(f func(float64) float64, a, b, tol float64) float64 {
	const (
		cgold = 0.3819660112501051 // (3 − √5)/2
		sqeps = 1.4901161193847656e-08
	)
	g := func(x float64) float64 { return -f(x) }
	lo, hi := a, b
	x := a + cgold*(b-a)
	w, v := x, x
	fx := g(x)
	fw, fv := fx, fx
	var d, e float64
	for i := 0; i < 200; i++ {
		xm := (a + b) / 2
		tol1 := sqeps*math.Abs(x) + tol/3
		tol2 := 2 * tol1
		if math.Abs(x-xm) <= tol2-(b-a)/2 {
			break
		}
		golden := true
		if math.Abs(e) > tol1 { // try a parabola through x, w, v
			var step float64
			step, golden = parabola(x, w, v, fx, fw, fv, e, a, b)
			e = d
			if !golden {
				d = step
				if u := x + d; u-a < tol2 || b-u < tol2 {
					d = math.Copysign(tol1, xm-x)
				}
			}
		}
		if golden {
			if x >= xm {
				e = a - x
			} else {
				e = b - x
			}
			d = cgold * e
		}
		u := x + d
		if math.Abs(d) < tol1 {
			u = x + math.Copysign(tol1, d)
		}
		fu := g(u)
		if fu <= fx {
			if u >= x {
				a = x
			} else {
				b = x
			}
			v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
			continue
		}
		if u < x {
			a = u
		} else {
			b = u
		}
		switch {
		case fu <= fw || w == x:
			v, fv, w, fw = w, fw, u, fu
		case fu <= fv || v == x || v == w:
			v, fv = u, fu
		}
	}
	// A maximum at an end of [a, b] (a response even about θ = π peaks
	// there) is approached only to √ε: the ends themselves are candidates.
	for _, end := range [2]float64{lo, hi} {
		if fe := g(end); fe < fx {
			x, fx = end, fe
		}
	}
	return x
}

// parabola returns the step from x to the vertex of the parabola through
// (x, fx), (w, fw), (v, fv), and reject = true when that step is not
// acceptable: not less than half the step before last (e), or leaving
// (a, b).
func parabola(x, w, v, fx, fw, fv, e, a, b float64) (step float64, reject bool) {
	r := (x - w) * (fx - fv)
	q := (x - v) * (fx - fw)
	p := (x-v)*q - (x-w)*r
	q = 2 * (q - r)
	if q > 0 {
		p = -p
	}
	q = math.Abs(q)
	if math.Abs(p) < math.Abs(0.5*q*e) && p > q*(a-x) && p < q*(b-x) {
		return p / q, false
	}
	return 0, true
}
