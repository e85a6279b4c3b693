// Package step defines the time-domain figures of a closed-loop step
// response (reference to output) and reads them off its samples: as they
// are produced (Tail, fed by the state-space simulation of package lti) or
// from a stored response (FromSamples). It also fixes the simulation's
// horizon (Horizon) and runs the difference equation of a transfer function
// for the first samples of any response, stable or not (First, for views).
package step

import (
	"fmt"
	"math"
)

// Result is a unit step response y[k] and its figures.
type Result struct {
	// Samples[k] = y[k], the output at t = kT for a unit step applied at
	// k = 0 with zero initial state.
	Samples []float64
	// T is the sample period in seconds.
	T float64
	// Final is the steady-state value H(1), the DC gain.
	Final float64
	// OvershootPct = 100·max_k(σ·(y[k] − Final))/|Final|, σ = sign(Final),
	// i.e. how far the response goes beyond Final in Final's own direction
	// (for Final > 0 this is 100·(max y − Final)/Final); 0 when Final = 0,
	// never negative.
	OvershootPct float64
	// RiseTimeS = (k90 − k10)·T, where k10 and k90 are the first samples with
	// σ·y[k] ≥ 0.1|Final| and ≥ 0.9|Final| (sample times, no interpolation);
	// 0 when Final = 0 or the 90 % level is never reached.
	RiseTimeS float64
	// SettlingS = (j + 1)·T, j the last sample outside the 2 % band
	// |y[j] − Final| > 0.02·|Final|: the first time from which every sample
	// stays in the band. 0 when no sample is outside. When Final = 0 the
	// band is 2 % of max|y| instead.
	SettlingS float64
	// Settled reports that the horizon was long enough to see the settling:
	// either the horizon was not clamped (the modes have decayed to
	// HorizonDecay) and the last sample is inside the band, or the horizon
	// was clamped, the last exit from the band lies in its first half and
	// the second half stays within half the band.
	Settled bool
	// SteadyStateError = 1 − Final (unit reference).
	SteadyStateError float64
}

const (
	// HorizonDecay is the factor by which the slowest mode must have decayed
	// at the end of the horizon: 1e-6 of its start is 5·10⁴ times below the
	// 2 % settling band, so the band exit is seen with room to spare.
	HorizonDecay = 1e-6
	// MinSamples and MaxSamples clamp the horizon (work and memory bound).
	MinSamples = 20
	MaxSamples = 100000
	// band is the settling band (2 %, the format's `settling`).
	band = 0.02
)

// Horizon returns the number of samples simulated for a denominator of
// degree n whose poles have radius at most r: the smallest K with
// K^(n−1)·r^K ≤ HorizonDecay (all n poles treated as one n-fold pole at
// radius r, the worst case of multiplicity), plus n samples of transport
// delay, clamped to [MinSamples, MaxSamples]; clamped reports the upper clamp.
func Horizon(n int, r float64) (k int, clamped bool) {
	if r <= 0 {
		return max(MinSamples, n+1), false
	}
	lr := -math.Log(r)
	need := math.Log(1/HorizonDecay) / lr
	for i := 0; i < 20 && n > 1; i++ {
		need = (math.Log(1/HorizonDecay) + float64(n-1)*math.Log(math.Max(need, 1))) / lr
	}
	total := math.Ceil(need) + float64(n)
	if total > MaxSamples {
		return MaxSamples, true
	}
	return max(MinSamples, int(total)), false
}

// FromSamples reads the step figures off the samples y of a unit step
// response with steady-state value final; clamped says the horizon was cut
// at MaxSamples (see Horizon). Errors: a sample or a figure that is not
// finite (the response grows: the loop is not stable as claimed).
func FromSamples(y []float64, T, final float64, clamped bool) (Result, error) {
	for k, v := range y {
		if v-v != 0 { // ±Inf or NaN
			return Result{}, fmt.Errorf("step: the response overflows at sample %d: the closed loop is not stable as claimed", k)
		}
	}
	if final != 0 {
		// The figures' one definition is Tail's, fed every sample.
		t := NewTail(final, false, len(y))
		for _, v := range y {
			t.Add(v)
		}
		return t.Result(T, y, clamped)
	}
	r := Result{Samples: y, T: T, Final: final, SteadyStateError: 1}
	zeroFinalFigures(&r, clamped)
	return r, checkFinite(r)
}

// checkFinite refuses figures that overflow: samples dwarfing a tiny
// Final mean the response grows, so the radius the caller gave was wrong.
func checkFinite(r Result) error {
	for _, v := range []float64{r.OvershootPct, r.RiseTimeS, r.SettlingS, r.SteadyStateError} {
		if math.IsInf(v, 0) || math.IsNaN(v) {
			return fmt.Errorf("step: step figures overflow: the response grows, the closed loop is not stable as claimed")
		}
	}
	return nil
}

// zeroFinalFigures fills settling and Settled for a response whose final
// value is 0: its band is 2 % of the largest sample, known only once every
// sample is in (overshoot and rise are 0: there is no level to rise to).
func zeroFinalFigures(r *Result, clamped bool) {
	y := r.Samples
	K := len(y)
	width := 0.0
	for _, v := range y {
		width = math.Max(width, band*math.Abs(v))
	}
	last := -1
	for k, v := range y {
		if math.Abs(v) > width {
			last = k
		}
	}
	r.SettlingS = float64(last+1) * r.T
	if !clamped {
		r.Settled = last < K-1
		return
	}
	tail := 0.0
	for _, v := range y[K/2:] {
		tail = math.Max(tail, math.Abs(v))
	}
	r.Settled = last+1 <= K/2 && tail <= width/2
}
