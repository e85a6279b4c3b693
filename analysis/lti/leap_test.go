package lti

import (
	"math"
	"math/cmplx"
	"math/rand"
	"testing"
)

// Long responses, the case the leap is for: a dominant pole pair or real
// pole of radius 0.995 … 0.9998 (hundreds to thousands of samples to
// settle), beside faster poles, zeros anywhere. The leap must give the full
// run's figures exactly (compareEarlyStop: settling, rise and Settled
// exactly, overshoot to step.OvershootSlack), and it must be taken on most
// of them.
func TestLeapKeepsFigures(t *testing.T) {
	rng := rand.New(rand.NewSource(23))
	leapt, total := 0, 0
	for trial := 0; trial < 300; trial++ {
		f := Factored{Gain: rng.NormFloat64()}
		r := 1 - math.Pow(10, -2.3-1.4*rng.Float64())
		if trial%2 == 0 {
			p := cmplx.Rect(r, 0.2*rng.Float64())
			f.Poles = append(f.Poles, p, cmplx.Conj(p))
		} else {
			f.Poles = append(f.Poles, complex(r, 0))
		}
		for i := 0; i < rng.Intn(3); i++ {
			p := cmplx.Rect(0.95*rng.Float64(), math.Pi*rng.Float64())
			f.Poles = append(f.Poles, p, cmplx.Conj(p))
		}
		for len(f.Zeros) < rng.Intn(len(f.Poles)) {
			f.Zeros = append(f.Zeros, complex(0.5+rng.Float64(), 0))
		}
		final := real(f.At(1))
		if math.Abs(final) < 1e-3 || math.IsInf(final, 0) {
			continue
		}
		_, sim, _ := compareEarlyStop(t, trial, f, final, false)
		total++
		if sim.leapt {
			leapt++
		}
	}
	t.Logf("leapt %d of %d", leapt, total)
	if leapt < total/2 {
		t.Errorf("the leap was taken on only %d of %d long responses", leapt, total)
	}
}
