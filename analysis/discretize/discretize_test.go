package discretize

import (
	"math"
	"math/cmplx"
	"math/rand"
	"testing"
	"time"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// closeTol is the coefficient tolerance for closed forms: the hold
// equivalents go through a matrix exponential (Padé, accurate to a few
// ulps) and short sums, so 1e-13 relative to the largest coefficient leaves
// room for both while catching any wrong term.
const closeTol = 1e-13

func must(t *testing.T, c poly.Rational, o Options) poly.Rational {
	t.Helper()
	r, err := Discretize(c, o)
	if err != nil {
		t.Fatalf("Discretize(%v, %+v): %v", c, o, err)
	}
	if r.Den.Lead() != 1 {
		t.Fatalf("denominator %v is not monic", r.Den)
	}
	return r
}

func scaleOf(r poly.Rational) float64 {
	s := 0.0
	for _, v := range append(append(poly.Poly(nil), r.Num...), r.Den...) {
		s = max(s, math.Abs(v))
	}
	return s
}

func expect(t *testing.T, name string, got, want poly.Rational) {
	t.Helper()
	// Bring want to a monic denominator too.
	l := want.Den.Lead()
	want = poly.R(want.Num.Scale(1/l), want.Den.Scale(1/l))
	tol := closeTol * max(1, scaleOf(want))
	if !got.Num.Equal(want.Num, tol) || !got.Den.Equal(want.Den, tol) {
		t.Errorf("%s: got %v / %v, want %v / %v", name, got.Num, got.Den, want.Num, want.Den)
	}
}

func TestMethodNames(t *testing.T) {
	for _, m := range []Method{ZOH, FOH, Tustin, Matched} {
		back, ok := ParseMethod(m.String())
		if !ok || back != m || m.Title() == "" {
			t.Errorf("%v: round trip %v %v, title %q", m, back, ok, m.Title())
		}
	}
	if _, ok := ParseMethod("ZOH"); ok {
		t.Error("keywords are lower case")
	}
	if Tustin.Title() != "Tustin (bilinear)" || FOH.Title() != "first-order hold (triangle hold)" {
		t.Error("titles")
	}
}

func TestErrors(t *testing.T) {
	ok := poly.R(poly.Poly{1}, poly.Poly{1, 1})
	cases := map[string]struct {
		c poly.Rational
		o Options
	}{
		"T zero":                {ok, Options{Method: ZOH}},
		"T negative":            {ok, Options{Method: ZOH, T: -1}},
		"T NaN":                 {ok, Options{Method: ZOH, T: math.NaN()}},
		"T Inf":                 {ok, Options{Method: ZOH, T: math.Inf(1)}},
		"improper":              {poly.R(poly.Poly{0, 0, 1}, poly.Poly{1, 1}), Options{Method: Tustin, T: 0.1}},
		"zero denominator":      {poly.R(poly.Poly{1}, nil), Options{Method: ZOH, T: 0.1}},
		"NaN coefficient":       {poly.R(poly.Poly{math.NaN()}, poly.Poly{1, 1}), Options{Method: ZOH, T: 0.1}},
		"Inf coefficient":       {poly.R(poly.Poly{1}, poly.Poly{math.Inf(-1), 1}), Options{Method: FOH, T: 0.1}},
		"prewarp at Nyquist":    {ok, Options{Method: Tustin, T: 0.1, PrewarpHz: 5}},
		"prewarp above":         {ok, Options{Method: Tustin, T: 0.1, PrewarpHz: 7}},
		"prewarp negative":      {ok, Options{Method: Tustin, T: 0.1, PrewarpHz: -1}},
		"prewarp with ZOH":      {ok, Options{Method: ZOH, T: 0.1, PrewarpHz: 1}},
		"unknown method":        {ok, Options{Method: 0, T: 0.1}},
		"Tustin pole at 2/T":    {poly.R(poly.Poly{1}, poly.Poly{-20, 1}), Options{Method: Tustin, T: 0.1}},
		"ZOH exp overflow":      {poly.R(poly.Poly{1}, poly.Poly{-1e6, 1}), Options{Method: ZOH, T: 1}},
		"matched pole at 2πi/T": {poly.R(poly.Poly{1}, poly.Poly{4 * math.Pi * math.Pi / 0.01, 0, 1}), Options{Method: Matched, T: 0.1}},
	}
	for name, c := range cases {
		if r, err := Discretize(c.c, c.o); err == nil {
			t.Errorf("%s: no error, got %v", name, r)
		}
	}
}

// TestClosedForms checks against standard z-transform table entries for
// hold equivalents and the bilinear substitution (from memory).
func TestClosedForms(t *testing.T) {
	const a, T = 3.0, 0.1
	e := math.Exp(-a * T)
	lag := poly.R(poly.Poly{a}, poly.Poly{a, 1}) // a/(s+a)
	// ZOH of a/(s+a) = (1−e^{−aT})/(z−e^{−aT}).
	expect(t, "zoh a/(s+a)", must(t, lag, Options{Method: ZOH, T: T}), poly.R(poly.Poly{1 - e}, poly.Poly{-e, 1}))
	// ZOH of 1/s = T/(z−1).
	integ := poly.R(poly.Poly{1}, poly.Poly{0, 1})
	expect(t, "zoh 1/s", must(t, integ, Options{Method: ZOH, T: T}), poly.R(poly.Poly{T}, poly.Poly{-1, 1}))
	// ZOH of 1/s² = T²(z+1)/(2(z−1)²).
	dbl := poly.R(poly.Poly{1}, poly.Poly{0, 0, 1})
	expect(t, "zoh 1/s^2", must(t, dbl, Options{Method: ZOH, T: T}),
		poly.R(poly.Poly{T * T / 2, T * T / 2}, poly.Poly{1, -2, 1}))
	// FOH (triangle hold) of 1/s is the trapezoidal rule (T/2)(z+1)/(z−1).
	expect(t, "foh 1/s", must(t, integ, Options{Method: FOH, T: T}), poly.R(poly.Poly{T / 2, T / 2}, poly.Poly{-1, 1}))
	// Tustin of a/(s+a) = aT(z+1) / ((2+aT)z − (2−aT)).
	expect(t, "tustin a/(s+a)", must(t, lag, Options{Method: Tustin, T: T}),
		poly.R(poly.Poly{a * T, a * T}, poly.Poly{-(2 - a*T), 2 + a*T}))
	// Matched a/(s+a): pole e^{−aT}, no zero at −1 (relative degree 1),
	// DC gain 1: (1−e^{−aT})/(z−e^{−aT}).
	expect(t, "matched a/(s+a)", must(t, lag, Options{Method: Matched, T: T}), poly.R(poly.Poly{1 - e}, poly.Poly{-e, 1}))
	// Matched ab/((s+a)(s+b)): one zero at −1, DC gain 1:
	// K(z+1)/((z−e^{−aT})(z−e^{−bT})), K = (1−e^{−aT})(1−e^{−bT})/2.
	const b = 7.0
	eb := math.Exp(-b * T)
	k := (1 - e) * (1 - eb) / 2
	two := poly.R(poly.Poly{a * b}, poly.Poly{a, 1}.Mul(poly.Poly{b, 1}))
	expect(t, "matched ab/((s+a)(s+b))", must(t, two, Options{Method: Matched, T: T}),
		poly.R(poly.Poly{k, k}, poly.Poly{-e, 1}.Mul(poly.Poly{-eb, 1})))
	// Matched 1/s: pole at 1, low-frequency asymptote 1/s ↔ T/(z−1).
	expect(t, "matched 1/s", must(t, integ, Options{Method: Matched, T: T}), poly.R(poly.Poly{T}, poly.Poly{-1, 1}))
	// A static gain stays itself.
	expect(t, "gain", must(t, poly.R(poly.Poly{6}, poly.Poly{2}), Options{Method: FOH, T: T}), poly.R(poly.Poly{3}, poly.Poly{1}))
}

const eps = 0x1p-52

func absSum(p poly.Poly) float64 {
	var s float64
	for _, v := range p {
		s += math.Abs(v)
	}
	return s
}

func randomStable(rng *rand.Rand, n int) poly.Rational {
	den := poly.Poly{1}
	for den.Degree() < n {
		if n-den.Degree() >= 2 && rng.Intn(2) == 0 {
			re, im := -0.2-2*rng.Float64(), 3*rng.Float64()
			den = den.Mul(poly.Poly{re*re + im*im, -2 * re, 1})
		} else {
			den = den.Mul(poly.Poly{0.2 + 3*rng.Float64(), 1})
		}
	}
	num := make(poly.Poly, rng.Intn(n+1)+1)
	for i := range num {
		num[i] = rng.NormFloat64()
	}
	if num[0] == 0 {
		num[0] = 1
	}
	return poly.R(num, den)
}

// TestDCGain: ZOH, FOH and Tustin keep the DC gain of a stable system
// (H(z=1) = H(s=0): common practice); matched does by construction.
func TestDCGain(t *testing.T) {
	rng := rand.New(rand.NewSource(7))
	for trial := 0; trial < 50; trial++ {
		c := randomStable(rng, 1+rng.Intn(6))
		want := real(c.EvalC(0))
		for _, m := range []Method{ZOH, FOH, Tustin, Matched} {
			o := Options{Method: m, T: 0.01 + rng.Float64()}
			r := must(t, c, o)
			got := real(r.EvalC(1))
			// Evaluating at z = 1 sums the coefficients; with poles near 1
			// (small T) the sums cancel, so the tolerance carries the
			// condition Σ|c_i|/|Σc_i| of both sums.
			cond := absSum(r.Num)/math.Abs(r.Num.Eval(1)) + absSum(r.Den)/math.Abs(r.Den.Eval(1))
			if math.Abs(got-want) > 1e3*eps*cond*math.Abs(want) {
				t.Errorf("trial %d %v: DC gain %g, want %g", trial, m, got, want)
			}
		}
	}
}

// TestPoleMapping: the hold equivalents have their poles at z = e^{pT}
// (spectral mapping of Φ = e^{AT}: common practice).
func TestPoleMapping(t *testing.T) {
	c := poly.R(poly.Poly{2, 1}, poly.Poly{1, 0.5}.Mul(poly.Poly{4.25, 1, 1}).Mul(poly.Poly{-0.3, 1}))
	const T = 0.2
	for _, m := range []Method{ZOH, FOH, Matched} {
		r := must(t, c, Options{Method: m, T: T})
		for _, p := range []complex128{-2, complex(-0.5, 2), complex(-0.5, -2), 0.3} {
			z := cmplx.Exp(p * T)
			// The monic denominator vanishes at z to rounding level.
			if v := cmplx.Abs(r.Den.EvalC(z)); v > 1e-14 {
				t.Errorf("%v: |den(e^{%v·T})| = %g", m, p, v)
			}
		}
	}
}

// TestPrewarp: prewarped Tustin matches the continuous frequency response
// exactly at the prewarp frequency (common practice).
func TestPrewarp(t *testing.T) {
	c := poly.R(poly.Poly{100}, poly.Poly{100, 4, 1}) // resonance near 1.6 Hz
	const T, f = 0.05, 1.6
	w := 2 * math.Pi * f
	r := must(t, c, Options{Method: Tustin, T: T, PrewarpHz: f})
	got := r.EvalC(cmplx.Exp(complex(0, w*T)))
	want := c.EvalC(complex(0, w))
	if cmplx.Abs(got-want) > 1e-12*cmplx.Abs(want) {
		t.Errorf("prewarped response %v, want %v", got, want)
	}
	plain := must(t, c, Options{Method: Tustin, T: T})
	if g := plain.EvalC(cmplx.Exp(complex(0, w*T))); cmplx.Abs(g-want) < 1e-3*cmplx.Abs(want) {
		t.Errorf("unwarped response %v should differ from %v", g, want)
	}
}

// TestZOHRepeatedPoles: 1/(s+1)^3 has the triple pole e^{−T}; ZOH keeps it
// as a cluster.
func TestZOHRepeatedPoles(t *testing.T) {
	c := poly.R(poly.Poly{1}, poly.Poly{1, 1}.Pow(3))
	const T = 0.5
	r := must(t, c, Options{Method: ZOH, T: T})
	res, err := roots.Find(r.Den)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Clusters) != 1 || res.Clusters[0].Multiplicity != 3 || math.Abs(real(res.Clusters[0].Value)-math.Exp(-T)) > 1e-12 {
		t.Errorf("clusters %v, want e^{-T} = %g three times", res.Clusters, math.Exp(-T))
	}
}

// TestDiscretizeUnknownMethodStaticGain is the regression for a fuzz
// crasher (testdata/fuzz/FuzzDiscretize/54b720614030ce44): a constant
// H(s) took the static-gain shortcut before the method was checked, so an
// unknown method was accepted.
func TestDiscretizeUnknownMethodStaticGain(t *testing.T) {
	for _, m := range []Method{0, Matched + 1} {
		if _, err := Discretize(poly.R(poly.Poly{2}, poly.Poly{1e300}), Options{Method: m, T: 1}); err == nil {
			t.Errorf("method %d: want an error", int(m))
		}
	}
}

// TestDiscretizeHoldMatrixOverflow is the regression for a fuzz hang
// (testdata/fuzz/FuzzDiscretize/bd77f702302d27a7): a pole at s ≈ −6e304
// with T = 1.43e8 s made ‖A·T‖ overflow, and the matrix exponential's
// squaring loop never ended. It must return an error promptly.
func TestDiscretizeHoldMatrixOverflow(t *testing.T) {
	c := poly.R(poly.Poly{1}, poly.Poly{0.30000000000000004, 72500, 1.1875e-300})
	for _, m := range []Method{ZOH, FOH} {
		done := make(chan error, 1)
		go func() {
			_, err := Discretize(c, Options{Method: m, T: 1.43e8})
			done <- err
		}()
		select {
		case err := <-done:
			if err == nil {
				t.Errorf("%s: want an error", m)
			}
		case <-time.After(5 * time.Second):
			t.Fatalf("%s: Discretize did not return", m)
		}
	}
}
