package poly

import (
	"math"
	"math/cmplx"
	"testing"
)

// Identities of polynomial algebra (common practice): Vieta's formulas
// for FromRoots, distributivity, evaluation of products, composition.
func TestIdentities(t *testing.T) {
	p := New(1, -3, 2)      // 2x² − 3x + 1 = (2x − 1)(x − 1)
	q := New(0.5, 0, 0, -1) // −x³ + 0.5
	if got := p.Mul(q).Eval(1.7); math.Abs(got-p.Eval(1.7)*q.Eval(1.7)) > 1e-12 {
		t.Errorf("(pq)(1.7) = %g, want p(1.7)q(1.7)", got)
	}
	r := New(2, 1)
	if !p.Mul(q.Add(r)).Equal(p.Mul(q).Add(p.Mul(r)), 1e-12) {
		t.Error("p(q + r) != pq + pr")
	}
	if got := p.Compose(r).Eval(0.3); math.Abs(got-p.Eval(r.Eval(0.3))) > 1e-12 {
		t.Errorf("p∘r(0.3) = %g", got)
	}
	// (x − 2)(x − (1 + i))(x − (1 − i)) = x³ − 4x² + 6x − 4 (Vieta).
	f := FromRoots([]complex128{2, complex(1, 1), complex(1, -1)})
	if !f.Equal(New(-4, 6, -4, 1), 1e-12) {
		t.Errorf("FromRoots = %v", f)
	}
	if d := p.Deriv(); !d.Equal(New(-3, 4), 0) {
		t.Errorf("derivative %v", d)
	}
	if New().Degree() != -1 || New(0, 0).Degree() != -1 || Const(3).Degree() != 0 {
		t.Error("degree bookkeeping")
	}
	if Monomial(2, 3).Degree() != 3 || !X().Shift(2).Equal(Monomial(1, 3), 0) {
		t.Error("monomials")
	}
}

// Rational functions keep their factors: a common factor is never removed,
// and sums over an identical denominator share it (loop-format.md).
func TestRationalKeepsFactors(t *testing.T) {
	d := New(-0.5, 1) // z − 0.5
	a := R(New(1), d)
	b := R(New(0, 2), d)
	s := a.Add(b)
	if !s.Den.Equal(d, 0) || !s.Num.Equal(New(1, 2), 0) {
		t.Errorf("a/d + b/d = %v / %v, want (1 + 2z)/(z − 0.5)", s.Num, s.Den)
	}
	c := R(d, d) // (z − 0.5)/(z − 0.5) stays as written
	if c.Num.Degree() != 1 || c.Den.Degree() != 1 {
		t.Errorf("cancelled: %v / %v", c.Num, c.Den)
	}
	m := a.Mul(R(d, New(1)))
	if m.Den.Degree() != 1 || m.Num.Degree() != 1 {
		t.Errorf("product lost a factor: %v / %v", m.Num, m.Den)
	}
	if inv := R(New(0, 1), New(1)).Pow(-1); !inv.Num.Equal(New(1), 0) || !inv.Den.Equal(New(0, 1), 0) {
		t.Errorf("z^-1 = %v / %v", inv.Num, inv.Den)
	}
	if v := R(New(1), New(-1, 1)).EvalC(1); !cmplx.IsInf(v) {
		t.Errorf("1/(z − 1) at 1 = %v, want ∞", v)
	}
}
