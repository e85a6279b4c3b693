package freq

import (
	"math"
	"math/cmplx"
	"testing"

	"ringside/analysis/poly"
)

func near(t *testing.T, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil {
		t.Errorf("%s = nil, want %.12g", what, want)
		return
	}
	if math.Abs(*got-want) > tol*math.Max(1, math.Abs(want)) {
		t.Errorf("%s = %.15g, want %.15g (tol %g)", what, *got, want, tol)
	}
}

func isNil(t *testing.T, what string, p *float64) {
	t.Helper()
	if p != nil {
		t.Errorf("%s = %g, want nil", what, *p)
	}
}

// TestIntegrator: L = K·T/(z − 1). At z = −1, L = −KT/2: the phase crossing
// is at Nyquist with GM = 20·log10(2/(KT)). On the circle
// e^{jθ} − 1 = 2 sin(θ/2)·e^{j(π/2 + θ/2)}, so |L| = 1 at
// θc = 2·asin(KT/2) and arg L = −90° − θc/2, PM = 90° − θc/2 (degrees);
// delay margin PM_rad/(θc/T). (Derivation here.)
func TestIntegrator(t *testing.T) {
	for _, c := range []struct{ K, T float64 }{{50, 0.01}, {5, 0.01}, {1500, 1e-3}, {0.2, 1}} {
		L := poly.R(poly.New(c.K*c.T), poly.New(-1, 1))
		m, err := Compute(L, c.T)
		if err != nil {
			t.Fatal(err)
		}
		ny := 1 / (2 * c.T)
		near(t, "GM", m.GainMarginDB, 20*math.Log10(2/(c.K*c.T)), 1e-9)
		near(t, "phase crossover", m.PhaseCrossoverHz, ny, 1e-9)
		thc := 2 * math.Asin(c.K*c.T/2)
		pm := 90 - thc/2*180/math.Pi
		near(t, "PM", m.PhaseMarginDeg, pm, 1e-9)
		near(t, "gain crossover", m.GainCrossoverHz, thc/(2*math.Pi*c.T), 1e-9)
		near(t, "delay margin", m.DelayMarginS, pm*math.Pi/180/(thc/c.T), 1e-9)
		near(t, "delay margin samples", m.DelayMarginSamples, pm*math.Pi/180/thc, 1e-9)
		if len(m.PhaseCrossings) != 1 || len(m.GainCrossings) != 1 {
			t.Errorf("K=%g: crossings %v %v, want one each (DC pole skipped)", c.K, m.PhaseCrossings, m.GainCrossings)
		}
		// S = (z − 1)/(z − 1 + KT): |S|² = (2 − 2c)/((c − 1 + KT)² + s²), which
		// for KT < 2 grows with θ on [0, π]: peak at Nyquist, 2/(2 − KT).
		near(t, "peak S", m.PeakSensitivityDB, 20*math.Log10(2/(2-c.K*c.T)), 1e-9)
	}
}

// TestFirstOrder: L = 1/(z − 0.5). L(−1) = −1/1.5, GM = 20·log10 1.5.
// |e^{jθ} − 0.5|² = 1.25 − cos θ = 1 at cos θc = 0.25. S = (z − 0.5)/(z + 0.5),
// |S|² = (1.25 − cos θ)/(1.25 + cos θ), largest at θ = π: |S| = 3.
func TestFirstOrder(t *testing.T) {
	const T = 0.002
	m, err := Compute(poly.R(poly.New(1), poly.New(-0.5, 1)), T)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "GM", m.GainMarginDB, 20*math.Log10(1.5), 1e-10)
	thc := math.Acos(0.25)
	near(t, "gain crossover", m.GainCrossoverHz, thc/(2*math.Pi*T), 1e-10)
	arg := cmplx.Phase(1 / (cmplx.Rect(1, thc) - 0.5))
	near(t, "PM", m.PhaseMarginDeg, 180+arg*180/math.Pi, 1e-9)
	near(t, "peak S", m.PeakSensitivityDB, 20*math.Log10(3), 1e-10)
	near(t, "peak S Hz", m.PeakSensitivityHz, 1/(2*T), 1e-9)
}

// TestPureDelay: L = K z^-d has |L| = K and phase −dθ, crossing −180° at
// θ = (2i+1)π/d ≤ π with GM = −20·log10 K each; 1/(1 + L) peaks where
// z^-d = −1 at 1/(1 − K). (Derivation here.)
func TestPureDelay(t *testing.T) {
	const T = 1e-3
	for _, d := range []int{1, 2, 3, 4, 7} {
		for _, K := range []float64{0.5, 2} {
			m, err := Compute(poly.R(poly.New(K), poly.Monomial(1, d)), T)
			if err != nil {
				t.Fatal(err)
			}
			var want []float64
			for i := 0; float64(2*i+1) <= float64(d); i++ {
				want = append(want, float64(2*i+1)/float64(d)/(2*T))
			}
			if len(m.PhaseCrossings) != len(want) {
				t.Fatalf("d=%d K=%g: phase crossings %v, want at %v Hz", d, K, m.PhaseCrossings, want)
			}
			for i, c := range m.PhaseCrossings {
				if math.Abs(c.Hz-want[i]) > 1e-9*want[i] || math.Abs(c.Value+20*math.Log10(K)) > 1e-9 {
					t.Errorf("d=%d K=%g crossing %d: %+v, want %g Hz, %g dB", d, K, i, c, want[i], -20*math.Log10(K))
				}
			}
			near(t, "GM", m.GainMarginDB, -20*math.Log10(K), 1e-9)
			isNil(t, "PM", m.PhaseMarginDeg)
			isNil(t, "delay margin", m.DelayMarginS)
			if K < 1 {
				near(t, "peak S", m.PeakSensitivityDB, -20*math.Log10(1-K), 1e-9)
			}
		}
	}
	// K = 1: |L| = 1 everywhere and 1 + z^-3 has roots on the circle.
	m, err := Compute(poly.R(poly.New(1), poly.Monomial(1, 3)), T)
	if err != nil {
		t.Fatal(err)
	}
	isNil(t, "peak S (closed-loop pole on circle)", m.PeakSensitivityDB)
	if m.PhaseMarginDeg == nil || len(m.GainCrossings) != 1 {
		t.Errorf("all-pass: want one reported gain crossing, got %v", m.GainCrossings)
	}
}

// TestTangentialTouch: L = K/D with D = z² + a1 z + a0. On the circle
// |D|² = (1 + a1² + a0² − 2a0) + 2a1(1 + a0)c + 4a0c², c = cos θ, whose
// minimum is at c* = −a1(1 + a0)/(4a0). Choosing K = min|D| makes |L| touch
// 1 at θ* = acos c* without crossing. (Derivation here.)
func TestTangentialTouch(t *testing.T) {
	const T = 0.01
	a0, a1 := 0.81, -2*0.9*math.Cos(1)
	cs := -a1 * (1 + a0) / (4 * a0)
	minD2 := (1 + a1*a1 + a0*a0 - 2*a0) + 2*a1*(1+a0)*cs + 4*a0*cs*cs
	K := math.Sqrt(minD2)
	m, err := Compute(poly.R(poly.New(K), poly.New(a0, a1, 1)), T)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.GainCrossings) != 1 {
		t.Fatalf("gain crossings %v, want one touch", m.GainCrossings)
	}
	near(t, "touch Hz", m.GainCrossoverHz, math.Acos(cs)/(2*math.Pi*T), 1e-6)
	// Slightly lower gain: no crossing at all; slightly higher: two.
	for _, c := range []struct {
		f float64
		n int
	}{{1 - 1e-6, 0}, {1 + 1e-6, 2}} {
		m, err := Compute(poly.R(poly.New(K*c.f), poly.New(a0, a1, 1)), T)
		if err != nil {
			t.Fatal(err)
		}
		if len(m.GainCrossings) != c.n {
			t.Errorf("K·%g: %d gain crossings, want %d", c.f, len(m.GainCrossings), c.n)
		}
	}
}

// TestEndpointTouch: L = 0.5/(z − 0.5) has L(1) = 1 exactly: a gain
// crossing at 0 Hz with PM = 180°, which no delay can erode.
func TestEndpointTouch(t *testing.T) {
	m, err := Compute(poly.R(poly.New(0.5), poly.New(-0.5, 1)), 1)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "PM", m.PhaseMarginDeg, 180, 1e-12)
	near(t, "gain crossover", m.GainCrossoverHz, 0, 1e-12)
	isNil(t, "delay margin", m.DelayMarginS)
}

// TestScaleInvariance: scaling N and D by the same huge or tiny factor
// leaves L and every margin unchanged.
func TestScaleInvariance(t *testing.T) {
	N, D := poly.New(0.2, 0.1), poly.New(0.3, -1.1, 1).Mul(poly.New(-1, 1))
	ref, err := Compute(poly.R(N, D), 0.01)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []float64{1e200, 1e-200} {
		m, err := Compute(poly.R(N.Scale(s), D.Scale(s)), 0.01)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "GM", m.GainMarginDB, *ref.GainMarginDB, 1e-9)
		near(t, "PM", m.PhaseMarginDeg, *ref.PhaseMarginDeg, 1e-9)
		near(t, "peak S", m.PeakSensitivityDB, *ref.PeakSensitivityDB, 1e-9)
	}
}

func TestComputeErrors(t *testing.T) {
	good := poly.R(poly.New(1), poly.New(-0.5, 1))
	for _, T := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if _, err := Compute(good, T); err == nil {
			t.Errorf("T=%g: no error", T)
		}
	}
	for _, L := range []poly.Rational{
		poly.R(nil, poly.New(1, 1)),
		poly.R(poly.New(1), nil),
		poly.R(poly.New(math.NaN()), poly.New(1, 1)),
		poly.R(poly.New(1), poly.New(1, math.Inf(-1))),
	} {
		if _, err := Compute(L, 1); err == nil {
			t.Errorf("%v: no error", L)
		}
	}
}

// TestResponseUnwrap: z^-3 has phase −3θ exactly; unwrapped it runs past
// −180° continuously down to −540° at Nyquist; magnitude 0 dB.
func TestResponseUnwrap(t *testing.T) {
	const T = 1e-3
	hz := LogGrid(T, 400)
	mag, ph := Response(poly.R(poly.New(1), poly.Monomial(1, 3)), T, hz)
	for i, f := range hz {
		want := -3 * 360 * f * T
		if math.Abs(ph[i]-want) > 1e-9 || math.Abs(mag[i]) > 1e-12 {
			t.Fatalf("%g Hz: %g dB %g°, want 0 dB %g°", f, mag[i], ph[i], want)
		}
	}
	mag, _ = Response(poly.R(poly.New(1), poly.New(1)), 0, hz[:2])
	if !math.IsNaN(mag[0]) {
		t.Errorf("T = 0: magnitude %g, want NaN", mag[0])
	}
}

func TestLogGrid(t *testing.T) {
	g := LogGrid(0.01, 5)
	want := []float64{0.005, 0.05, 0.5, 5, 50}
	for i := range want {
		if math.Abs(g[i]-want[i]) > 1e-12*want[i] {
			t.Errorf("LogGrid[%d] = %g, want %g", i, g[i], want[i])
		}
	}
	if g[4] != 50 {
		t.Errorf("last point %v, want exactly Nyquist", g[4])
	}
	if LogGrid(0, 5) != nil || LogGrid(1, 0) != nil {
		t.Error("bad input: want nil")
	}
}

// TestComputeSizesBeyondFloat64 is the regression for a fuzz crasher
// (testdata/fuzz/FuzzMargins/8a59540a51b342ec): a numerator of 1e-300 over
// a denominator of size 1e300 underflowed to the zero polynomial when
// scaled, and Compute panicked. A subnormal denominator made 1/max|D|
// infinite. Both must be clear errors or finite results, never a panic.
func TestComputeSizesBeyondFloat64(t *testing.T) {
	if _, err := Compute(poly.R(poly.Poly{1e-300}, poly.Poly{1, 1e300}), 1e-3); err == nil {
		t.Error("1e-300/(1e300 z + 1): want an error")
	}
	// Crasher 5bc46034609dae14: numerator 1e303 over a denominator of size
	// 1e-300 overflowed to Inf when scaled, and Compute never returned.
	if _, err := Compute(poly.R(poly.Poly{1e303, 1e303}, poly.Poly{-1e-300, 1e-300}), 1); err == nil {
		t.Error("1e303(z+1)/(1e-300(z-1)): want an error")
	}
	m, err := Compute(poly.R(poly.Poly{5e-324}, poly.Poly{0, 5e-324}), 1e-3)
	if err != nil {
		t.Fatalf("5e-324/(5e-324 z): %v", err)
	}
	// L = 1/z: |L| = 1 everywhere, phase −θ, so L(−1) = −1: a phase
	// crossing at Nyquist with GM exactly 0 dB (closed form).
	if m.GainMarginDB == nil || math.Abs(*m.GainMarginDB) > 1e-9 {
		t.Errorf("1/z: gain margin %v, want 0 dB", m.GainMarginDB)
	}
}

// GainMargin is Compute's gain margin (same crossings, same choice).
func TestGainMarginMatchesCompute(t *testing.T) {
	cases := []poly.Rational{
		poly.R(poly.New(0.5), poly.New(-1, 1)),                // 0.5/(z − 1)
		poly.R(poly.New(0.2), poly.New(-0.8, 1)),              // 0.2/(z − 0.8)
		poly.R(poly.New(0.3, 0.1), poly.New(0.5, -1.5, 1)),    // two poles, a zero
		poly.R(poly.New(0.05), poly.New(0, 0, -0.9, 1)),       // delay and a lag
		poly.R(poly.New(1), poly.New(0, 1)),                   // z^-1: |L| = 1
		poly.R(poly.New(2, 0, 1), poly.New(0.1, 0.2, 0.3, 1)), // conditionally shaped
	}
	for i, L := range cases {
		m, err := Compute(L, 1e-3)
		if err != nil {
			t.Fatal(err)
		}
		gm, err := GainMargin(L, 1e-3)
		if err != nil {
			t.Fatal(err)
		}
		if (gm == nil) != (m.GainMarginDB == nil) || gm != nil && *gm != *m.GainMarginDB {
			t.Errorf("case %d: GainMargin %v, Compute %v", i, gm, m.GainMarginDB)
		}
	}
}

// TestComputeDelayMarginHugePeriod is the regression for a fuzz find
// (testdata/fuzz/FuzzCheck/0aaa8993aafecb30): at T = 1e300 s the delay
// margin PM/(θ/T) came out +Inf (θ/T underflowed). L = 1/(z − 0.5) crosses
// |L| = 1 where |e^{jθ} − 0.5| = 1, cos θ = 1/4; there e^{jθ} − 0.5 has
// angle π − θ (the triangle 0, 0.5, e^{jθ} is isosceles), so PM = θ rad
// and the delay margin is exactly 1 sample (closed form), at any T.
func TestComputeDelayMarginHugePeriod(t *testing.T) {
	L := poly.R(poly.Poly{1}, poly.Poly{-0.5, 1})
	for _, T := range []float64{1e-3, 1e300} {
		m, err := Compute(L, T)
		if err != nil {
			t.Fatalf("T = %g: %v", T, err)
		}
		if m.DelayMarginSamples == nil || math.Abs(*m.DelayMarginSamples-1) > 1e-9 {
			t.Errorf("T = %g: delay margin %v samples, want 1", T, m.DelayMarginSamples)
		}
		if m.DelayMarginS == nil || math.IsInf(*m.DelayMarginS, 0) || math.Abs(*m.DelayMarginS/T-1) > 1e-9 {
			t.Errorf("T = %g: delay margin %v s, want %g", T, m.DelayMarginS, T)
		}
	}
	// L = 1e-9/(z − 1) crosses at θ ≈ 1e-9 with PM ≈ 90°: ~1.6e9 samples,
	// beyond float64 in seconds at T = 1e300 s. An error, never +Inf.
	m, err := Compute(poly.R(poly.Poly{1e-9}, poly.Poly{-1, 1}), 1e300)
	if err == nil && m.DelayMarginS != nil && math.IsInf(*m.DelayMarginS, 0) {
		t.Errorf("1e-9/(z-1) at T = 1e300 s: delay margin %v", *m.DelayMarginS)
	}
}
