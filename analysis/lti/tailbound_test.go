package lti

import (
	"math"
	"math/cmplx"
	"math/rand"
	"testing"

	"ringside/analysis/step"
)

// randomStable returns a random stable transfer function: poles of radius
// up to 0.998 (real, complex pairs, sometimes repeated), zeros anywhere
// within radius 1.5, relative degree ≥ 0.
func randomStable(rng *rand.Rand) Factored {
	f := Factored{Gain: rng.NormFloat64()}
	for len(f.Poles) < 1+rng.Intn(6) {
		r := 0.998 * math.Sqrt(rng.Float64())
		switch rng.Intn(3) {
		case 0:
			f.Poles = append(f.Poles, complex(r*float64(1-2*rng.Intn(2)), 0))
		case 1:
			p := cmplx.Rect(r, math.Pi*rng.Float64())
			f.Poles = append(f.Poles, p, cmplx.Conj(p))
		default: // a repeated pole
			f.Poles = append(f.Poles, complex(r, 0), complex(r, 0))
		}
	}
	for len(f.Zeros) < rng.Intn(len(f.Poles)+1) {
		f.Zeros = append(f.Zeros, complex(1.5*(2*rng.Float64()-1), 0))
	}
	return f
}

// The early stop gives the figures of the full horizon: settling time,
// rise time and Settled exactly, overshoot to step.OvershootSlack, and at
// least the samples a view keeps, equal to the full run's.
func TestEarlyStopKeepsFigures(t *testing.T) {
	rng := rand.New(rand.NewSource(9))
	stopped := 0
	for trial := 0; trial < 400; trial++ {
		f := randomStable(rng)
		s := Realize(f)
		final := real(f.At(1))
		r := 0.0
		for _, p := range f.Poles {
			r = math.Max(r, cmplx.Abs(p))
		}
		K, clamped := step.Horizon(s.N, r)
		full := plainStep(s, K)
		view := trial%2 == 0 // with and without the samples a view shows
		sim, err := simulate(s, K, final, view)
		if err != nil {
			t.Fatal(err)
		}
		if sim.stopped {
			stopped++
		}
		a, errA := step.FromSamples(full, 1, final, clamped)
		b, errB := sim.result(1, final, clamped && !sim.stopped)
		if errA != nil || errB != nil {
			t.Fatal(errA, errB)
		}
		if a.SettlingS != b.SettlingS || a.RiseTimeS != b.RiseTimeS || a.Settled != b.Settled ||
			math.Abs(a.OvershootPct-b.OvershootPct) > 100*step.OvershootSlack {
			t.Fatalf("trial %d (%d of %d samples): full %+v\nearly %+v", trial, sim.watch.Samples(), len(full),
				[]any{a.SettlingS, a.RiseTimeS, a.OvershootPct, a.Settled}, []any{b.SettlingS, b.RiseTimeS, b.OvershootPct, b.Settled})
		}
		if view {
			keep := step.StepShown(int(b.SettlingS))
			for k := 0; k < keep && k < len(sim.y); k++ {
				if sim.y[k] != full[k] {
					t.Fatalf("trial %d: sample %d differs", trial, k)
				}
			}
			if len(sim.y) < min(keep, len(full)) {
				t.Fatalf("trial %d: %d samples kept, a view shows %d", trial, len(sim.y), keep)
			}
		} else if final != 0 && len(sim.y) != 0 {
			t.Fatalf("trial %d: %d samples kept with no view", trial, len(sim.y))
		}
	}
	if stopped < 300 {
		t.Errorf("only %d of 400 loops stopped early", stopped)
	}
}

// plainStep is the reference: every sample of x[k+1] = A x[k] + B,
// y[k] = C x[k] + D from x = 0, dense and with no early stop.
func plainStep(s System, K int) []float64 {
	n := s.N
	x, nx := make([]float64, n), make([]float64, n)
	y := make([]float64, K)
	for k := range y {
		v := s.D
		for i, c := range s.C {
			v += c * x[i]
		}
		y[k] = v
		for i := 0; i < n; i++ {
			acc := s.B[i]
			for j := 0; j < n; j++ {
				acc += s.A[i*n+j] * x[j]
			}
			nx[i] = acc
		}
		x, nx = nx, x
	}
	return y
}
