package freq

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
)

// Factors is a loop L = Gain·Π(z − Zeros[i]) / Π(z − Poles[i]) given by its
// factors (conjugate pairs complete), with the roots of 1 + L when known
// (Closed; they refine the grid and decide whether the peak sensitivity
// exists). Evaluated factor by factor, L keeps a relative accuracy of a few
// ulps per factor at any order, and a pole cancelled by a zero before the
// call leaves no 0/0 behind.
type Factors struct {
	Gain         float64
	Zeros, Poles []complex128
	Closed       []complex128
}

func (f *Factors) check() error {
	if f.Gain == 0 {
		return ErrZeroPoly
	}
	if math.IsNaN(f.Gain) || math.IsInf(f.Gain, 0) {
		return fmt.Errorf("freq: non-finite gain %v", f.Gain)
	}
	for _, zs := range [][]complex128{f.Zeros, f.Poles} {
		for _, z := range zs {
			if cmplx.IsNaN(z) || cmplx.IsInf(z) {
				return errors.New("freq: non-finite pole or zero")
			}
		}
	}
	return nil
}

// nd returns N and D at z, scaled together by a power of two so that
// neither overflows over long products.
func (f *Factors) nd(z complex128) (complex128, complex128) {
	n, d := complex(f.Gain, 0), complex(1, 0)
	en, ed := 0, 0
	for i, q := range f.Zeros {
		n *= z - q
		if i&7 == 7 {
			n, en = poly.Renorm(n, en)
		}
	}
	for i, p := range f.Poles {
		d *= z - p
		if i&7 == 7 {
			d, ed = poly.Renorm(d, ed)
		}
	}
	switch {
	case en > ed:
		d = poly.LdexpC(d, ed-en)
	case ed > en:
		n = poly.LdexpC(n, en-ed)
	}
	return n, d
}

// sampledZero reports whether f(θ) stays within DegenerateTol of its scale
// at 97 angles spread over [0, π] (and the ends): the factored form's test
// for g ≡ 0 or h ≡ 0, where no coefficient correlation is at hand. A
// nonzero trigonometric polynomial of degree below 48 vanishes at no more
// than 96 points of [0, π) (hence not at all 97), and the loops met here
// have lower degree.
func sampledZero(f func(th float64) (v, scale float64)) bool {
	const n = 96
	for i := 0; i <= n; i++ {
		// Irregular spacing keeps clear of symmetric zero patterns.
		th := math.Pi * (float64(i) + 0.3183*float64(i%3)/3) / (n + 1)
		if i == n {
			th = math.Pi
		}
		v, s := f(th)
		if math.Abs(v) > DegenerateTol*s {
			return false
		}
	}
	return true
}

// ComputeFactors is Compute for a loop given by its factors.
func ComputeFactors(f Factors, T float64) (Margins, error) {
	s, err := SampleFactors(f, T)
	if err != nil {
		return Margins{}, err
	}
	defer s.Release()
	return s.Margins(T)
}

// GainMarginFactors is GainMargin for a loop given by its factors.
func GainMarginFactors(f Factors, T float64) (*float64, error) {
	lp, err := factorLoop(f, T)
	if err != nil {
		return nil, err
	}
	return lp.gainMargin(T), nil
}

// factorLoop checks f and T and returns the loop evaluated from f.
func factorLoop(f Factors, T float64) (loop, error) {
	if err := f.check(); err != nil {
		return loop{}, err
	}
	lp, err := prepareT(T)
	if err != nil {
		return loop{}, err
	}
	lp.fac = &f
	return lp, nil
}

// RealAxisCrossings returns the angles θ in [0, π] (rad/sample) where L is
// real and finite, with L's value there: for a gain k that scales L, the
// loop with k·L has a closed-loop pole on the circle exactly at k = −1/L(θ)
// (Neimark's D-decomposition of the gain axis, whose boundary points these
// are).
func RealAxisCrossings(f Factors) ([]float64, []float64, error) {
	if err := f.check(); err != nil {
		return nil, nil, err
	}
	lp := loop{fac: &f}
	sc := getScratch()
	defer scratchPool.Put(sc)
	grid := lp.grid(sc)
	pts := lp.evalGrid(grid, sc)
	var ths, vals []float64
	for _, th := range lp.realAxis(grid, pts.g, pts.gScale) {
		N, D := lp.eval(th)
		if lp.singular(th, N, D) {
			continue
		}
		ths, vals = append(ths, th), append(vals, real(N/D))
	}
	return ths, vals, nil
}
