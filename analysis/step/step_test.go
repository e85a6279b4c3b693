package step

import (
	"math"
	"testing"

	"ringside/analysis/poly"
)

// stepOf is the response of a stable h = B/A over its horizon (Horizon, r
// its largest pole radius), run by First and read by FromSamples with the
// DC gain B(1)/A(1): the published figures below check both.
func stepOf(t *testing.T, h poly.Rational, T, r float64) Result {
	t.Helper()
	K, clamped := Horizon(h.Den.Trim().Degree(), r)
	y, err := First(h, K, math.MaxFloat64)
	if err != nil || len(y) < K {
		t.Fatalf("First: %d of %d samples, %v", len(y), K, err)
	}
	res, err := FromSamples(y, T, h.Num.Eval(1)/h.Den.Eval(1), clamped)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// TestFirstOrder (a chosen so no threshold is hit exactly): H = (1 − a)z/(z − a) gives y[k] = 1 − a^(k+1) (geometric
// series; derivation: y[k] = a·y[k−1] + (1 − a)). The 2 % band is left for
// the last time at the largest k with a^(k+1) > 0.02, so settling is at
// sample ceil(ln 0.02/ln a) − 1; 10 % and 90 % are first reached at
// ceil(ln 0.9/ln a) − 1 and ceil(ln 0.1/ln a) − 1.
func TestFirstOrder(t *testing.T) {
	const T = 0.01
	for _, a := range []float64{0.91, 0.5, 0.97, 0.3} {
		h := poly.R(poly.New(0, 1-a), poly.New(-a, 1))
		r := stepOf(t, h, T, a)
		for k, y := range r.Samples {
			if want := 1 - math.Pow(a, float64(k+1)); math.Abs(y-want) > 1e-12 {
				t.Fatalf("a=%g y[%d] = %.15g, want %.15g", a, k, y, want)
			}
		}
		if r.Final != 1 || r.SteadyStateError != 0 || r.OvershootPct != 0 || !r.Settled {
			t.Errorf("a=%g: %+v", a, r)
		}
		ceil := func(x float64) float64 { return math.Ceil(math.Log(x) / math.Log(a)) }
		if want := (ceil(0.02) - 1) * T; math.Abs(r.SettlingS-want) > 1e-12 {
			t.Errorf("a=%g settling %g, want %g", a, r.SettlingS, want)
		}
		if want := (ceil(0.1) - ceil(0.9)) * T; math.Abs(r.RiseTimeS-want) > 1e-12 {
			t.Errorf("a=%g rise %g, want %g", a, r.RiseTimeS, want)
		}
		// The last sample has decayed to the horizon's 1e-6.
		if e := 1 - r.Samples[len(r.Samples)-1]; e > HorizonDecay {
			t.Errorf("a=%g: residual %g at the end of %d samples", a, e, len(r.Samples))
		}
	}
}

// TestDelayedFirstOrder: H = (1 − a)/(z − a) is the same response one
// sample later: y[k] = 1 − a^k; a negative gain mirrors it.
func TestDelayedFirstOrder(t *testing.T) {
	const a = 0.8
	r := stepOf(t, poly.R(poly.New(-2*(1-a)), poly.New(-a, 1)), 1, a)
	for k, y := range r.Samples {
		if want := -2 * (1 - math.Pow(a, float64(k))); math.Abs(y-want) > 1e-12 {
			t.Fatalf("y[%d] = %g, want %g", k, y, want)
		}
	}
	if math.Abs(r.Final+2) > 1e-12 || math.Abs(r.SteadyStateError-3) > 1e-12 || r.OvershootPct != 0 {
		t.Errorf("%+v", r)
	}
}

// TestSecondOrderOvershoot: poles z = e^{sT} of s² + 2ζωn s + ωn², unit DC
// gain. For a fine sample period the peak overshoot approaches the
// continuous exp(−πζ/√(1 − ζ²)) (common practice; approximate for sampled
// systems, hence 0.5 percentage points).
func TestSecondOrderOvershoot(t *testing.T) {
	const wn, T = 10.0, 1e-4
	for _, zeta := range []float64{0.2, 0.5, 0.7} {
		sr, si := -zeta*wn, wn*math.Sqrt(1-zeta*zeta)
		r := math.Exp(sr * T)
		den := poly.New(r*r, -2*r*math.Cos(si*T), 1)
		res := stepOf(t, poly.R(poly.New(den.Eval(1)), den), T, r)
		want := 100 * math.Exp(-math.Pi*zeta/math.Sqrt(1-zeta*zeta))
		if math.Abs(res.OvershootPct-want) > 0.5 {
			t.Errorf("ζ=%g: overshoot %.3f %%, want %.3f %%", zeta, res.OvershootPct, want)
		}
		if math.Abs(res.Final-1) > 1e-12 || !res.Settled {
			t.Errorf("ζ=%g: final %g settled %v", zeta, res.Final, res.Settled)
		}
		// 2 % settling ≈ 4/(ζωn) (common practice, rough: within 40 %).
		if ts := 4 / (zeta * wn); math.Abs(res.SettlingS-ts) > 0.4*ts {
			t.Errorf("ζ=%g: settling %g s, rule of thumb %g s", zeta, res.SettlingS, ts)
		}
	}
}

// TestHorizon checks the stated rule K^(n−1)·r^K ≤ 1e-6 (plus n) and the
// clamps.
func TestHorizon(t *testing.T) {
	if k, c := Horizon(1, 0.9); k != 133 || c {
		// ln(1e6)/ln(1/0.9) = 131.1 → 132, plus 1.
		t.Errorf("Horizon(1, 0.9) = %d %v, want 133", k, c)
	}
	for _, n := range []int{2, 4, 6} {
		k, _ := Horizon(n, 0.95)
		m := float64(k - n)
		if math.Pow(m, float64(n-1))*math.Pow(0.95, m) > HorizonDecay*1.0001 {
			t.Errorf("n=%d: K=%d too short", n, k)
		}
	}
	if k, c := Horizon(2, 0); k != MinSamples || c {
		t.Errorf("r=0: %d %v", k, c)
	}
	if k, c := Horizon(1, 0.99999); k != MaxSamples || !c {
		t.Errorf("r≈1: %d %v", k, c)
	}
	// A clamped horizon that cannot show settling says so.
	const a = 0.99999
	r := stepOf(t, poly.R(poly.New(0, 1-a), poly.New(-a, 1)), 1, a)
	if r.Settled || len(r.Samples) != MaxSamples {
		t.Errorf("slow pole: settled %v with %d samples", r.Settled, len(r.Samples))
	}
}

func TestStaticGain(t *testing.T) {
	r := stepOf(t, poly.R(poly.New(3), poly.New(2)), 1, 0)
	if r.Final != 1.5 || r.Samples[0] != 1.5 || r.SettlingS != 0 || r.OvershootPct != 0 {
		t.Errorf("%+v", r)
	}
}

// TestFirstErrors: First refuses what has no difference equation.
func TestFirstErrors(t *testing.T) {
	cases := []struct {
		name string
		h    poly.Rational
	}{
		{"improper", poly.R(poly.New(0, 0, 1), poly.New(-0.5, 1))},
		{"zero num", poly.R(nil, poly.New(-0.5, 1))},
		{"zero den", poly.R(poly.New(1), nil)},
		{"NaN coef", poly.R(poly.New(math.NaN()), poly.New(-0.5, 1))},
	}
	for _, c := range cases {
		if _, err := First(c.h, 10, math.MaxFloat64); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
}

// TestFiguresOverflow is the regression for a fuzz crasher
// (testdata/fuzz/FuzzStep/e0160996939e6acd): h = 1.1875e-300/(0.0003z +
// 0.003) has its pole at z = −10 but was passed radius 0.96; the samples
// grew to ~1e50 over a final value of 3.6e-298 and the overshoot came out
// +Inf in a successful result. FromSamples must refuse it.
func TestFiguresOverflow(t *testing.T) {
	h := poly.R(poly.Poly{1.1875e-300}, poly.Poly{0.003, 0.00030000000000000003})
	K, clamped := Horizon(1, 0.96484375)
	y, err := First(h, K, math.MaxFloat64)
	if err != nil {
		t.Fatal(err)
	}
	if r, err := FromSamples(y, 1, h.Num.Eval(1)/h.Den.Eval(1), clamped); err == nil {
		t.Fatalf("FromSamples = overshoot %v, want an error", r.OvershootPct)
	}
}
