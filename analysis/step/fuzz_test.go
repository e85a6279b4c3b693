package step

import (
	"math"
	"math/cmplx"
	"testing"
	"time"

	"ringside/analysis/internal/fuzzin"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// fuzzMaxDegree bounds the fuzzed degrees: a step run costs K·deg with K up
// to MaxSamples, so 16 keeps each call in the milliseconds.
const fuzzMaxDegree = 16

// fuzzTimeLimit bounds one run of a response.
const fuzzTimeLimit = 10 * time.Second

// FuzzStep runs the package's own path for a transfer function, hostile or
// not: Horizon for the given pole radius, First for the samples, FromSamples
// for the figures. It checks that nothing panics or hangs, that First
// refuses what has no difference equation (zero or non-finite polynomials,
// an improper h), and that on success every sample and every figure is
// finite and the figures keep their documented signs. The pole radius is
// either the true one (from roots.Find) or a fuzzed one, which may be wrong
// or invalid: that may shorten the horizon or let the response grow, which
// FromSamples must then refuse, but must not crash.
func FuzzStep(f *testing.F) {
	f.Add([]byte{}, byte(0), byte(0))
	f.Add([]byte{0, 0, 7, 8, 4, 0, 1, 7, 248, 4, 6, 0}, byte(1), byte(0))                // 0.5/(z-0.5)
	f.Add([]byte{0, 0, 6, 1, 2, 6, 4, 32, 63, 1}, byte(1), byte(0))                      // complex pair at radius 0.985
	f.Add([]byte{0, 0, 6, 1, 1, 6, 1, 0, 0}, byte(1), byte(1))                           // pole at z = 1
	f.Add([]byte{0, 0, 3, 0, 0, 1, 4, 0, 6, 0}, byte(1), byte(0))                        // 1e300/(z + 1e-300): huge gain
	f.Add([]byte{0, 2, 6, 6, 6, 0, 1, 7, 248, 4, 6, 0}, byte(1), byte(2))                // improper
	f.Add([]byte{0, 0, 6, 1, 1, 6, 4, 0, 32, 0, 1, 1, 2, 6, 0, 64, 0}, byte(1), byte(0)) // (z^2+1)/((z-0.501)(z^2+1)): cancellation on the circle
	f.Fuzz(func(t *testing.T, data []byte, tsel, rsel byte) {
		fb := fuzzin.New(data)
		h := fb.Rational(fuzzMaxDegree)
		T := fuzzin.SamplePeriod(tsel)
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
			res, err = runStep(h, T, r)
		}()
		select {
		case <-done:
		case <-time.After(fuzzTimeLimit):
			t.Fatalf("step of %v (T %v, radius %v) did not return within %v", h, T, r, fuzzTimeLimit)
		}
		if err != nil {
			return
		}
		if h.Num.IsZero() || h.Den.IsZero() || !h.Num.Finite() || !h.Den.Finite() || h.Num.Trim().Degree() > h.Den.Trim().Degree() {
			t.Fatalf("step of %v succeeded, want an error", h)
		}
		if len(res.Samples) > MaxSamples {
			t.Fatalf("step of %v (radius %v): %d samples", h, r, len(res.Samples))
		}
		for k, y := range res.Samples {
			if math.IsNaN(y) || math.IsInf(y, 0) {
				t.Fatalf("step of %v (T %v, radius %v): y[%d] = %v", h, T, r, k, y)
			}
		}
		for _, v := range []struct {
			name string
			v    float64
		}{{"final", res.Final}, {"overshoot", res.OvershootPct}, {"rise", res.RiseTimeS}, {"settling", res.SettlingS}, {"steady-state error", res.SteadyStateError}} {
			if math.IsNaN(v.v) || math.IsInf(v.v, 0) {
				t.Fatalf("step of %v (T %v, radius %v): %s = %v", h, T, r, v.name, v.v)
			}
		}
		if T > 0 && (res.OvershootPct < 0 || res.RiseTimeS < 0 || res.SettlingS < 0) {
			t.Fatalf("step of %v (T %v, radius %v): negative figure %+v", h, T, r, res)
		}
	})
}

// runStep is the package's path for h: the horizon for radius r, First's
// samples over it, FromSamples' figures with the DC gain B(1)/A(1).
func runStep(h poly.Rational, T, r float64) (Result, error) {
	K, clamped := Horizon(h.Den.Trim().Degree(), r)
	y, err := First(h, K, math.MaxFloat64)
	if err != nil {
		return Result{}, err
	}
	return FromSamples(y, T, h.Num.Eval(1)/h.Den.Eval(1), clamped)
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
