// Package poly holds real-coefficient polynomials and rational functions of
// one variable (s or z). Coefficients are stored lowest power first:
// Poly{c0, c1, c2} is c0 + c1·x + c2·x².
//
// Nothing here cancels common factors: a Rational keeps the numerator and
// denominator it was built from, so a loop's characteristic polynomial still
// carries every mode of every block (internal stability).
package poly

import (
	"math"
	"math/cmplx"
)

// Poly is a real polynomial, lowest power first. The zero polynomial is the
// empty (or all-zero) slice.
type Poly []float64

// New returns a copy of the coefficients as a Poly, trailing zeros removed.
func New(c ...float64) Poly { return Poly(append([]float64(nil), c...)).Trim() }

// Const returns the constant polynomial c.
func Const(c float64) Poly { return New(c) }

// X returns the polynomial x (the variable itself).
func X() Poly { return Poly{0, 1} }

// Monomial returns c·x^n.
func Monomial(c float64, n int) Poly {
	p := make(Poly, n+1)
	p[n] = c
	return p.Trim()
}

// Trim drops exactly-zero leading coefficients. Tiny ones are kept: whether
// a coefficient is negligible is the caller's decision, not the algebra's.
func (p Poly) Trim() Poly {
	n := len(p)
	for n > 0 && p[n-1] == 0 {
		n--
	}
	return p[:n]
}

// Degree is the degree of p; the zero polynomial has degree -1.
func (p Poly) Degree() int { return len(p.Trim()) - 1 }

// IsZero reports whether every coefficient is exactly zero.
func (p Poly) IsZero() bool { return p.Degree() < 0 }

// Lead is the leading (highest-power) coefficient, 0 for the zero polynomial.
func (p Poly) Lead() float64 {
	q := p.Trim()
	if len(q) == 0 {
		return 0
	}
	return q[len(q)-1]
}

// Add returns p + q.
func (p Poly) Add(q Poly) Poly {
	n := max(len(p), len(q))
	r := make(Poly, n)
	for i := range r {
		if i < len(p) {
			r[i] += p[i]
		}
		if i < len(q) {
			r[i] += q[i]
		}
	}
	return r.Trim()
}

// Sub returns p − q.
func (p Poly) Sub(q Poly) Poly { return p.Add(q.Scale(-1)) }

// Scale returns c·p.
func (p Poly) Scale(c float64) Poly {
	r := make(Poly, len(p))
	for i, v := range p {
		r[i] = c * v
	}
	return r.Trim()
}

// Mul returns p·q.
func (p Poly) Mul(q Poly) Poly {
	p, q = p.Trim(), q.Trim()
	if len(p) == 0 || len(q) == 0 {
		return nil
	}
	r := make(Poly, len(p)+len(q)-1)
	for i, a := range p {
		for j, b := range q {
			r[i+j] += a * b
		}
	}
	return r.Trim()
}

// Pow returns p^n for n ≥ 0.
func (p Poly) Pow(n int) Poly {
	r := Poly{1}
	for i := 0; i < n; i++ {
		r = r.Mul(p)
	}
	return r
}

// Shift returns p·x^n for n ≥ 0.
func (p Poly) Shift(n int) Poly {
	if p.IsZero() {
		return nil
	}
	r := make(Poly, n+len(p))
	copy(r[n:], p)
	return r.Trim()
}

// Deriv returns dp/dx.
func (p Poly) Deriv() Poly {
	if len(p) <= 1 {
		return nil
	}
	r := make(Poly, len(p)-1)
	for i := 1; i < len(p); i++ {
		r[i-1] = float64(i) * p[i]
	}
	return r.Trim()
}

// Eval evaluates p at a real x by Horner's rule.
func (p Poly) Eval(x float64) float64 {
	var r float64
	for i := len(p) - 1; i >= 0; i-- {
		r = r*x + p[i]
	}
	return r
}

// EvalC evaluates p at a complex x by Horner's rule.
func (p Poly) EvalC(x complex128) complex128 {
	var r complex128
	for i := len(p) - 1; i >= 0; i-- {
		r = r*x + complex(p[i], 0)
	}
	return r
}

// Compose returns p(q(x)).
func (p Poly) Compose(q Poly) Poly {
	var r Poly
	for i := len(p) - 1; i >= 0; i-- {
		r = r.Mul(q).Add(Poly{p[i]})
	}
	return r.Trim()
}

// Equal reports whether p and q have the same coefficients within an
// absolute tolerance tol.
func (p Poly) Equal(q Poly, tol float64) bool {
	d := p.Sub(q)
	for _, v := range d {
		if math.Abs(v) > tol {
			return false
		}
	}
	return true
}

// Finite reports whether every coefficient is a finite number.
func (p Poly) Finite() bool {
	for _, v := range p {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// HighFirst returns the coefficients highest power first (the order numpy
// and most references write them in).
func (p Poly) HighFirst() []float64 {
	out := make([]float64, len(p))
	for i, v := range p {
		out[len(p)-1-i] = v
	}
	return out
}

// FromRoots returns the monic polynomial with the given roots. Complex roots
// must come with their conjugates; the imaginary residue is dropped.
func FromRoots(roots []complex128) Poly {
	c := []complex128{1}
	for _, r := range roots {
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= r * v
		}
		c = next
	}
	p := make(Poly, len(c))
	for i, v := range c {
		p[i] = real(v)
	}
	return p.Trim()
}

// Rational is Num/Den. It is never reduced implicitly.
type Rational struct {
	Num, Den Poly
}

// R builds a Rational from numerator and denominator.
func R(num, den Poly) Rational { return Rational{Num: num.Trim(), Den: den.Trim()} }

// RConst is the constant rational function c/1.
func RConst(c float64) Rational { return R(Const(c), Const(1)) }

// Mul returns a·b, keeping every factor.
func (a Rational) Mul(b Rational) Rational { return R(a.Num.Mul(b.Num), a.Den.Mul(b.Den)) }

// Div returns a/b, keeping every factor.
func (a Rational) Div(b Rational) Rational { return R(a.Num.Mul(b.Den), a.Den.Mul(b.Num)) }

// Add returns a+b. When the denominators are identical (coefficient for
// coefficient) the result shares it: a/d + b/d = (a+b)/d, as the format asks.
func (a Rational) Add(b Rational) Rational {
	if a.Den.Equal(b.Den, 0) {
		return R(a.Num.Add(b.Num), a.Den)
	}
	return R(a.Num.Mul(b.Den).Add(b.Num.Mul(a.Den)), a.Den.Mul(b.Den))
}

// Sub returns a−b.
func (a Rational) Sub(b Rational) Rational { return a.Add(b.Scale(-1)) }

// Scale returns c·a.
func (a Rational) Scale(c float64) Rational { return R(a.Num.Scale(c), a.Den) }

// Pow returns a^n for any integer n (negative inverts).
func (a Rational) Pow(n int) Rational {
	if n < 0 {
		return R(a.Den.Pow(-n), a.Num.Pow(-n))
	}
	return R(a.Num.Pow(n), a.Den.Pow(n))
}

// EvalC evaluates a at x. A zero denominator gives complex infinity.
func (a Rational) EvalC(x complex128) complex128 {
	d := a.Den.EvalC(x)
	if d == 0 {
		return cmplx.Inf()
	}
	return a.Num.EvalC(x) / d
}

// RelativeDegree is deg(Den) − deg(Num); negative means non-causal in z.
func (a Rational) RelativeDegree() int { return a.Den.Degree() - a.Num.Degree() }
