package step

import (
	"math"
	"math/cmplx"
	"testing"
	"time"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// fuzzMaxDegree bounds the fuzzed degrees: a step run costs K·deg with K up
// to MaxSamples, so 16 keeps each call in the milliseconds.
const fuzzMaxDegree = 16

// fuzzTimeLimit bounds one Simulate call.
const fuzzTimeLimit = 10 * time.Second

// FuzzStep checks that Simulate never panics or hangs, that it refuses bad
// input (and unstable responses) with an error, and that on success the
// horizon lies in [MinSamples, MaxSamples], every sample and every figure
// is finite, and the figures keep their documented signs. The pole radius
// passed is either the true one (from roots.Find) or a fuzzed one, which may
// be wrong: a wrong radius may shorten the horizon but must not crash.
func FuzzStep(f *testing.F) {
	f.Add([]byte{}, byte(0), byte(0))
	f.Add([]byte{0, 0, 7, 8, 4, 0, 1, 7, 248, 4, 6, 0}, byte(1), byte(0))                // 0.5/(z-0.5)
	f.Add([]byte{0, 0, 6, 1, 2, 6, 4, 32, 63, 1}, byte(1), byte(0))                      // complex pair at radius 0.985
	f.Add([]byte{0, 0, 6, 1, 1, 6, 1, 0, 0}, byte(1), byte(1))                           // pole at z = 1
	f.Add([]byte{0, 0, 3, 0, 0, 1, 4, 0, 6, 0}, byte(1), byte(0))                        // 1e300/(z + 1e-300): huge gain
	f.Add([]byte{0, 2, 6, 6, 6, 0, 1, 7, 248, 4, 6, 0}, byte(1), byte(2))                // improper
	f.Add([]byte{0, 0, 6, 1, 1, 6, 4, 0, 32, 0, 1, 1, 2, 6, 0, 64, 0}, byte(1), byte(0)) // (z^2+1)/((z-0.501)(z^2+1)): cancellation on the circle
	f.Fuzz(func(t *testing.T, data []byte, tsel, rsel byte) {
		fb := &fuzzBytes{b: data}
		h := fb.rational(fuzzMaxDegree)
		T := samplePeriod(tsel)
		r := fuzzRadius(rsel)
		if rsel%2 == 0 {
			if res, err := roots.Find(h.Den); err == nil && len(res.Roots) > 0 {
				r = cmplx.Abs(res.Roots[0])
			}
		}
		var res Result
		var err error
		done := make(chan struct{})
		go func() {
			defer close(done)
			res, err = Simulate(h, T, r)
		}()
		select {
		case <-done:
		case <-time.After(fuzzTimeLimit):
			t.Fatalf("Simulate(%v, %v, %v) did not return within %v", h, T, r, fuzzTimeLimit)
		}
		if err != nil {
			return
		}
		bad := !(T > 0) || math.IsInf(T, 0) || !(r >= 0 && r < 1) || h.Num.IsZero() || h.Den.IsZero() ||
			!h.Num.Finite() || !h.Den.Finite() || h.Num.Trim().Degree() > h.Den.Trim().Degree()
		if bad {
			t.Fatalf("Simulate(%v, %v, %v) succeeded, want an error", h, T, r)
		}
		if len(res.Samples) < MinSamples || len(res.Samples) > MaxSamples {
			t.Fatalf("Simulate(%v, %v, %v): %d samples", h, T, r, len(res.Samples))
		}
		for k, y := range res.Samples {
			if math.IsNaN(y) || math.IsInf(y, 0) {
				t.Fatalf("Simulate(%v, %v, %v): y[%d] = %v", h, T, r, k, y)
			}
		}
		for _, v := range []struct {
			name string
			v    float64
		}{{"final", res.Final}, {"overshoot", res.OvershootPct}, {"rise", res.RiseTimeS}, {"settling", res.SettlingS}, {"steady-state error", res.SteadyStateError}} {
			if math.IsNaN(v.v) || math.IsInf(v.v, 0) {
				t.Fatalf("Simulate(%v, %v, %v): %s = %v", h, T, r, v.name, v.v)
			}
		}
		if res.OvershootPct < 0 || res.RiseTimeS < 0 || res.SettlingS < 0 {
			t.Fatalf("Simulate(%v, %v, %v): negative figure %+v", h, T, r, res)
		}
	})
}

// fuzzRadius maps a byte to a pole radius, valid or not.
func fuzzRadius(b byte) float64 {
	switch b % 8 {
	case 1:
		return 1
	case 3:
		return math.NaN()
	case 5:
		return -0.5
	default:
		return float64(b) / 256
	}
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
