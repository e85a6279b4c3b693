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
		final := real(f.At(1))
		view := trial%2 == 0 // with and without the samples a view shows
		full, sim, b := compareEarlyStop(t, trial, f, final, view)
		if sim.stopped {
			stopped++
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
		denseStep(s, nx, x)
		x, nx = nx, x
	}
	return y
}

// denseStep sets dst = A x + B over every entry of A (the reference the
// sparse rows are checked against).
func denseStep(s System, dst, x []float64) {
	n := s.N
	for i := 0; i < n; i++ {
		acc := s.B[i]
		for j := 0; j < n; j++ {
			acc += s.A[i*n+j] * x[j]
		}
		dst[i] = acc
	}
}

// Slow real tails, the case the deflated certificate stops early on: one
// to three real poles in 0.99 … 0.9995 (residues of either sign, so a
// response may creep up, turn, or cross its final value late), beside
// faster poles, zeros anywhere. The early stop must give the full run's
// figures exactly (overshoot to step.OvershootSlack), and stop before the
// full horizon on most of them.
func TestEarlyStopSlowRealTails(t *testing.T) {
	rng := rand.New(rand.NewSource(17))
	stopped, total := 0, 0
	for trial := 0; trial < 300; trial++ {
		f := Factored{Gain: rng.NormFloat64()}
		for i := 0; i < 1+rng.Intn(3); i++ {
			f.Poles = append(f.Poles, complex(0.99+0.0095*rng.Float64(), 0))
		}
		for i := 0; i < rng.Intn(4); i++ {
			p := cmplx.Rect(0.9*rng.Float64(), math.Pi*rng.Float64())
			f.Poles = append(f.Poles, p, cmplx.Conj(p))
		}
		for len(f.Zeros) < rng.Intn(len(f.Poles)+1) {
			f.Zeros = append(f.Zeros, complex(0.9+0.2*rng.Float64()*float64(1-2*rng.Intn(2)), 0))
		}
		final := real(f.At(1))
		if math.Abs(final) < 1e-3 || math.IsInf(final, 0) {
			continue
		}
		_, sim, _ := compareEarlyStop(t, trial, f, final, false)
		total++
		if sim.stopped {
			stopped++
		}
	}
	if stopped < total*3/4 {
		t.Errorf("only %d of %d slow loops stopped early", stopped, total)
	}
}

// compareEarlyStop simulates the step response of f with the early stop
// and checks its figures against the full horizon's (plainStep): settling,
// rise and Settled exactly, overshoot to step.OvershootSlack. It returns
// the full samples, the simulation and its figures.
func compareEarlyStop(t *testing.T, trial int, f Factored, final float64, view bool) ([]float64, simulation, step.Result) {
	t.Helper()
	s := Realize(f)
	r := 0.0
	for _, p := range f.Poles {
		r = math.Max(r, cmplx.Abs(p))
	}
	K, clamped := step.Horizon(s.N, r)
	full := plainStep(s, K)
	sim, err := simulate(s, K, final, view)
	if err != nil {
		t.Fatal(err)
	}
	a, errA := step.FromSamples(full, 1, final, clamped)
	b, errB := sim.result(1, final, clamped && !sim.stopped)
	if errA != nil || errB != nil {
		t.Fatal(errA, errB)
	}
	if a.SettlingS != b.SettlingS || a.RiseTimeS != b.RiseTimeS || a.Settled != b.Settled ||
		math.Abs(a.OvershootPct-b.OvershootPct) > 100*step.OvershootSlack {
		t.Fatalf("trial %d (%d of %d samples): full %v\nearly %v", trial, sim.watch.Samples(), len(full),
			[]any{a.SettlingS, a.RiseTimeS, a.OvershootPct, a.Settled}, []any{b.SettlingS, b.RiseTimeS, b.OvershootPct, b.Settled})
	}
	return full, sim, b
}

// The certificate itself: from the state at a random sample k, bounds must
// hold for every later sample of the full horizon, |y[j] − final| ≤ dev
// and σ·(y[j] − final) ≤ over. Random stable loops (repeated poles, zeros
// anywhere) and slow real tails; each bound is also taken alone (the
// ∞-norm and the 2-norm forms), so a wrong β or contraction in either
// shows even where the other is the smaller.
func TestTailBoundHolds(t *testing.T) {
	rng := rand.New(rand.NewSource(41))
	checked := 0
	for trial := 0; trial < 400; trial++ {
		f := randomStable(rng)
		if trial%3 == 0 {
			f.Poles = append(f.Poles, complex(0.99+0.009*rng.Float64(), 0))
		}
		final := real(f.At(1))
		s := Realize(f)
		r := 0.0
		for _, p := range f.Poles {
			r = math.Max(r, cmplx.Abs(p))
		}
		K, _ := step.Horizon(s.N, r)
		tb, ok := newTailBound(s, K)
		if !ok {
			continue
		}
		y := plainStep(s, K)
		k := rng.Intn(min(K, 300))
		x := stateAt(s, k)
		next := make([]float64, s.N)
		sparseRows(s.A, s.N).step(next, x, s.B)
		for _, form := range []string{"both", "inf", "two"} {
			b := *tb
			switch form {
			case "inf":
				b.beta2 = math.Inf(1)
			case "two":
				b.beta = math.Inf(1)
			}
			dev, over := b.bounds(x, next, final)
			sigma := math.Copysign(1, final)
			for j := k; j < K; j++ {
				d := y[j] - final
				if math.Abs(d) > dev*(1+1e-9)+1e-12 || sigma*d > over*(1+1e-9)+1e-12 {
					t.Fatalf("trial %d (%s): from sample %d, y[%d] − final = %g beyond dev %g / over %g", trial, form, k, j, d, dev, over)
				}
			}
		}
		checked++
	}
	if checked < 300 {
		t.Fatalf("only %d certificates built", checked)
	}
}

// stateAt is the state after k samples of a unit step from x = 0.
func stateAt(s System, k int) []float64 {
	n := s.N
	x, nx := make([]float64, n), make([]float64, n)
	for ; k > 0; k-- {
		denseStep(s, nx, x)
		x, nx = nx, x
	}
	return x
}
