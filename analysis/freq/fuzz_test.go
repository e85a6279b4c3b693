package freq

import (
	"math"
	"ringside/analysis/internal/fuzzin"
	"testing"
	"time"
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
		fb := fuzzin.New(data)
		L := fb.Rational(fuzzMaxDegree)
		T := fuzzin.SamplePeriod(tsel)
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
