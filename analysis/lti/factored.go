package lti

import (
	"errors"
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Factored is a transfer function in z kept as its factors:
//
//	Gain · Π (z − Zeros[i]) / Π (z − Poles[i])
//
// Complex zeros and poles come with their conjugates. Err bounds the error
// of every pole and zero as a value (0 when each was read exactly from a
// factor as written, e.g. (z − 1)^3 or z − 0.75).
type Factored struct {
	Gain  float64
	Zeros []complex128
	Poles []complex128
	Err   float64
}

// Const is the static gain k.
func Const(k float64) Factored { return Factored{Gain: k} }

// clusterErr is the accuracy of a multiple root's cluster mean as the roots
// package measures it (its tests: 1e-12 or better, relative to max(1, |z|)).
const clusterErr = 1e-12

// rootErrScale multiplies the first-order error of a simple root (backward
// error × condition): the backward error measured by roots.Find is a norm
// bound, and a factor 4 covers the Newton polish's last rounding.
const rootErrScale = 4

// FromRational factors num/den by the roots of its own polynomials (each
// root of a repeated cluster set at the cluster's mean, which is far more
// accurate than the members). Err is the largest first-order error of those
// roots. It fails for a zero or non-finite polynomial.
func FromRational(r poly.Rational) (Factored, error) {
	f := Factored{Gain: 1}
	if err := f.MulPoly(r.Num, 1); err != nil {
		return Factored{}, err
	}
	if err := f.MulPoly(r.Den, -1); err != nil {
		return Factored{}, err
	}
	return f, nil
}

// MulPoly multiplies f (start from Const(1)) by p^pow (pow may be negative), p's roots found by
// roots.Find (a degree-1 factor c0 + c1·z gives −c0/c1, one rounding).
func (f *Factored) MulPoly(p poly.Poly, pow int) error {
	p = p.Trim()
	if len(p) == 0 {
		if pow < 0 {
			return errors.New("lti: division by the zero polynomial")
		}
		f.Gain = 0 // the zero function; poles already found stay
		return nil
	}
	if !p.Finite() {
		return errors.New("lti: non-finite coefficient")
	}
	f.Gain *= math.Pow(p.Lead(), float64(pow))
	if len(p) == 1 || pow == 0 {
		return nil
	}
	zs, e, err := polyRoots(p)
	if err != nil {
		return err
	}
	f.Err = math.Max(f.Err, e)
	for range abs(pow) {
		if pow > 0 {
			f.Zeros = append(f.Zeros, zs...)
		} else {
			f.Poles = append(f.Poles, zs...)
		}
	}
	return nil
}

// polyRoots returns p's roots with multiplicity (clusters at their mean) and
// the largest first-order error among them.
func polyRoots(p poly.Poly) ([]complex128, float64, error) {
	if len(p) == 2 {
		z := -p[0] / p[1]
		if math.IsInf(z, 0) || math.IsNaN(z) {
			return nil, 0, errors.New("lti: a root's modulus exceeds the float64 range")
		}
		return []complex128{complex(z, 0)}, eps * math.Abs(z), nil
	}
	r, err := roots.Find(p)
	if err != nil {
		return nil, 0, err
	}
	be := math.Max(r.BackwardError, eps)
	dp := p.Deriv()
	var out []complex128
	worst := 0.0
	for _, c := range r.Clusters {
		for range c.Multiplicity {
			out = append(out, c.Value)
		}
		if c.Multiplicity > 1 {
			worst = math.Max(worst, clusterErr*math.Max(1, cmplx.Abs(c.Value)))
			continue
		}
		if c.Value == 0 && p[0] == 0 {
			continue // an exact zero root (trailing zero coefficients)
		}
		s := 0.0
		az := cmplx.Abs(c.Value)
		for i := len(p) - 1; i >= 0; i-- {
			s = s*az + math.Abs(p[i])
		}
		d := cmplx.Abs(dp.EvalC(c.Value))
		if d == 0 {
			worst = math.Inf(1)
			continue
		}
		worst = math.Max(worst, rootErrScale*be*s/d)
	}
	return out, worst, nil
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// Mul returns f·g.
func (f Factored) Mul(g Factored) Factored {
	return Factored{
		Gain:  f.Gain * g.Gain,
		Zeros: append(append([]complex128(nil), f.Zeros...), g.Zeros...),
		Poles: append(append([]complex128(nil), f.Poles...), g.Poles...),
		Err:   math.Max(f.Err, g.Err),
	}
}

// Inv returns 1/f (f must not be zero).
func (f Factored) Inv() Factored {
	return Factored{Gain: 1 / f.Gain, Zeros: append([]complex128(nil), f.Poles...), Poles: append([]complex128(nil), f.Zeros...), Err: f.Err}
}

// Pow returns f^n for any integer n.
func (f Factored) Pow(n int) Factored {
	if n < 0 {
		return f.Inv().Pow(-n)
	}
	r := Factored{Gain: 1, Err: f.Err}
	for range n {
		r = r.Mul(f)
	}
	return r
}

// Scale returns k·f.
func (f Factored) Scale(k float64) Factored {
	g := f.clone()
	g.Gain *= k
	return g
}

func (f Factored) clone() Factored {
	return Factored{Gain: f.Gain, Zeros: append([]complex128(nil), f.Zeros...), Poles: append([]complex128(nil), f.Poles...), Err: f.Err}
}

// IsZero reports the zero function.
func (f Factored) IsZero() bool { return f.Gain == 0 }

// RelativeDegree is the number of poles minus the number of zeros.
func (f Factored) RelativeDegree() int { return len(f.Poles) - len(f.Zeros) }

// At evaluates f at z: a product of first-order factors, each with a
// relative rounding error of a few ulps, so the value has a relative error
// of a few ulps per factor whatever the order (no expanded polynomial).
// A pole exactly at z gives complex infinity.
func (f Factored) At(z complex128) complex128 {
	n, d := f.ND(z)
	if d == 0 {
		return cmplx.Inf()
	}
	return n / d
}

// ND returns numerator and denominator at z, scaled together by a power of
// two so that neither overflows (L = N/D is unchanged).
func (f Factored) ND(z complex128) (complex128, complex128) {
	n, d := complex(f.Gain, 0), complex(1, 0)
	e := 0
	for i, q := range f.Zeros {
		n *= z - q
		if i&7 == 7 {
			n, e = poly.Renorm(n, e)
		}
	}
	ed := 0
	for i, p := range f.Poles {
		d *= z - p
		if i&7 == 7 {
			d, ed = poly.Renorm(d, ed)
		}
	}
	if e == ed {
		return n, d
	}
	// Bring both to the common exponent of the larger.
	if e > ed {
		return n, poly.LdexpC(d, ed-e)
	}
	return poly.LdexpC(n, e-ed), d
}

// Rational expands f into numerator and denominator polynomials (for views
// that want coefficients; the numerics never use them).
func (f Factored) Rational() poly.Rational {
	return poly.R(poly.FromRoots(f.Zeros).Scale(f.Gain), poly.FromRoots(f.Poles))
}

const eps = 0x1p-52
