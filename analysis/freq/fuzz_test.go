package freq

import (
	"math"
	"math/cmplx"
	"testing"
	"time"

	"ringside/analysis/poly"
)

// fuzzMaxDegree bounds the degree of the fuzzed numerator and denominator:
// loops in .loop files rarely exceed a few dozen, and the grid grows with the
// degree, so 24 keeps each call fast while covering repeated roots.
const fuzzMaxDegree = 24

// fuzzTimeLimit bounds one Compute call (milliseconds normally).
const fuzzTimeLimit = 10 * time.Second

// fuzzHzSlack is how far outside [0, Nyquist] a crossing frequency may lie:
// θ = π maps to Nyquist up to the rounding of θ/(2πT), a few ulps.
const fuzzHzSlack = 1e-12

// FuzzMargins checks that Compute never panics or hangs on any rational
// function (zero, non-finite, huge, tiny coefficients, degree 0, repeated
// poles on the circle, pole-zero cancellations) and any sample period; that
// bad input gives an error; and that on success every crossing lies in
// [0, Nyquist] and every non-nil figure is a number (no NaN; ±Inf only where
// a figure may be unbounded: none is).
func FuzzMargins(f *testing.F) {
	f.Add([]byte{}, byte(0))
	f.Add([]byte{0, 0, 6, 1, 1, 6, 1, 0, 0}, byte(3))                      // 1/(z-1): integrator
	f.Add([]byte{0, 0, 6, 1, 2, 6, 1, 0, 1}, byte(3))                      // 1/(z-1)^2 on the circle
	f.Add([]byte{0, 1, 7, 8, 4, 6, 1, 2, 6, 1, 0, 0, 2, 0, 0, 0}, byte(1)) // (z+0.5)/((z-1)(z+1))
	f.Add([]byte{0, 0, 1, 0, 1, 6}, byte(2))                               // NaN numerator
	f.Add([]byte{0, 0, 3, 0, 0, 0, 4, 0, 0}, byte(1))                      // huge over tiny
	f.Add([]byte{0, 0, 6, 0, 0, 6, 1, 1, 2, 6, 0, 64, 0}, byte(5))         // (z^2+1)/(z^2+1): cancellation on the circle
	f.Fuzz(func(t *testing.T, data []byte, tsel byte) {
		fb := &fuzzBytes{b: data}
		L := fb.rational(fuzzMaxDegree)
		T := samplePeriod(tsel)
		var m Margins
		var err error
		done := make(chan struct{})
		go func() {
			defer close(done)
			m, err = Compute(L, T)
		}()
		select {
		case <-done:
		case <-time.After(fuzzTimeLimit):
			t.Fatalf("Compute(%v, %v) did not return within %v", L, T, fuzzTimeLimit)
		}
		bad := !(T > 0) || math.IsInf(T, 0) || L.Num.IsZero() || L.Den.IsZero() || !L.Num.Finite() || !L.Den.Finite()
		if err != nil {
			return
		}
		if bad {
			t.Fatalf("Compute(%v, %v) succeeded, want an error", L, T)
		}
		nyq := 1 / (2 * T)
		inBand := func(what string, hz float64) {
			if math.IsNaN(hz) || hz < -fuzzHzSlack*nyq || hz > nyq*(1+fuzzHzSlack) {
				t.Fatalf("Compute(%v, %v): %s at %v Hz, outside [0, %v]", L, T, what, hz, nyq)
			}
		}
		finite := func(what string, v *float64) {
			if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0)) {
				t.Fatalf("Compute(%v, %v): %s = %v", L, T, what, *v)
			}
		}
		for _, c := range m.PhaseCrossings {
			inBand("phase crossing", c.Hz)
			if math.IsNaN(c.Value) {
				t.Fatalf("Compute(%v, %v): NaN gain margin at %v Hz", L, T, c.Hz)
			}
		}
		for _, c := range m.GainCrossings {
			inBand("gain crossing", c.Hz)
			if math.IsNaN(c.Value) || c.Value <= -180 || c.Value > 180 {
				t.Fatalf("Compute(%v, %v): phase margin %v at %v Hz", L, T, c.Value, c.Hz)
			}
		}
		for _, h := range []*float64{m.PhaseCrossoverHz, m.GainCrossoverHz, m.PeakSensitivityHz} {
			if h != nil {
				inBand("crossover", *h)
			}
		}
		finite("gain margin", m.GainMarginDB)
		finite("phase margin", m.PhaseMarginDeg)
		finite("delay margin", m.DelayMarginS)
		finite("delay margin in samples", m.DelayMarginSamples)
		finite("peak sensitivity", m.PeakSensitivityDB)
		if (m.GainMarginDB == nil) != (m.PhaseCrossoverHz == nil) || (m.PhaseMarginDeg == nil) != (m.GainCrossoverHz == nil) {
			t.Fatalf("Compute(%v, %v): a margin without its crossover or the reverse: %+v", L, T, m)
		}
		if m.DelayMarginS != nil && *m.DelayMarginS < 0 {
			t.Fatalf("Compute(%v, %v): negative delay margin %v", L, T, *m.DelayMarginS)
		}
		// Response must not panic either; NaN is its documented answer for
		// points it cannot evaluate.
		Response(L, T, LogGrid(T, 16))
	})
}

// samplePeriod maps a byte to a sample period, including invalid ones.
func samplePeriod(b byte) float64 {
	switch b % 8 {
	case 0:
		return 0
	case 1:
		return 1e-3
	case 2:
		return math.NaN()
	case 3:
		return 1
	case 4:
		return -1e-3
	case 5:
		return 1e-9
	case 6:
		return math.Inf(1)
	default:
		return 1e6 * float64(b)
	}
}

// rational decodes num/den with an optional common factor (a pole-zero
// cancellation, often on the unit circle).
func (f *fuzzBytes) rational(maxDeg int) poly.Rational {
	num := f.poly(maxDeg)
	den := f.poly(maxDeg)
	if f.byte()%2 == 1 {
		c := f.poly(maxDeg / 2)
		num, den = num.Mul(c), den.Mul(c)
	}
	return poly.R(num, den)
}

// fuzzBytes decodes fuzz input into numbers and polynomials. Every byte
// string is valid input; when it runs out, zeros follow, so short inputs
// give low-degree (often degenerate) cases.
type fuzzBytes struct {
	b []byte
	i int
}

func (f *fuzzBytes) byte() byte {
	if f.i >= len(f.b) {
		return 0
	}
	c := f.b[f.i]
	f.i++
	return c
}

// coef decodes one coefficient: ordinary values most of the time, and the
// degenerate ones (0, NaN, ±Inf, huge, tiny, raw bit patterns) often enough
// to be reached.
func (f *fuzzBytes) coef() float64 {
	sel := f.byte()
	sign := 1.0
	if sel&0x80 != 0 {
		sign = -1
	}
	switch sel & 0x0f {
	case 0:
		return 0
	case 1:
		return math.NaN()
	case 2:
		return sign * math.Inf(1)
	case 3:
		return sign * 1e300 * (1 + float64(f.byte())/256)
	case 4:
		return sign * 1e-300 * (1 + float64(f.byte())/256)
	case 5:
		var u uint64
		for k := 0; k < 8; k++ {
			u = u<<8 | uint64(f.byte())
		}
		return math.Float64frombits(u)
	case 6:
		return sign
	default:
		m := float64(int8(f.byte())) / 16
		e := int(f.byte()%9) - 4
		return sign * m * math.Pow(10, float64(e))
	}
}

// root decodes one root: on the unit circle (at an angle that is often 0
// or π), inside or outside it, or zero.
func (f *fuzzBytes) root() complex128 {
	sel := f.byte()
	ang := math.Pi * float64(f.byte()) / 128
	switch sel % 6 {
	case 0:
		return cmplx.Rect(1, ang)
	case 1:
		return 1
	case 2:
		return -1
	case 3:
		return 0
	default:
		r := float64(f.byte())/64 + 1e-3
		return cmplx.Rect(r, ang)
	}
}

// poly decodes a polynomial of degree below maxDeg+1: either coefficient by
// coefficient, or from roots (with repeats and conjugates) times a scale.
func (f *fuzzBytes) poly(maxDeg int) poly.Poly {
	mode := f.byte()
	n := int(f.byte()) % (maxDeg + 1)
	if mode%2 == 0 {
		p := make(poly.Poly, n+1)
		for k := range p {
			p[k] = f.coef()
		}
		return p
	}
	scale := f.coef()
	var rs []complex128
	for len(rs) < n {
		z := f.root()
		rep := 1 + int(f.byte()%4)
		for j := 0; j < rep && len(rs) < n; j++ {
			rs = append(rs, z)
			if imag(z) != 0 {
				rs = append(rs, cmplx.Conj(z))
			}
		}
	}
	return poly.FromRoots(rs).Scale(scale)
}
