package diskmargin

import (
	"math"
	"math/cmplx"
	"math/rand"
	"path/filepath"
	"testing"

	"ringside/analysis/internal/scipyref"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

func response(L poly.Rational) Response {
	return func(th float64) complex128 { return L.EvalC(cmplx.Rect(1, th)) }
}

func closedPoles(t *testing.T, L poly.Rational) []complex128 {
	t.Helper()
	r, err := roots.Find(L.Num.Add(L.Den))
	if err != nil {
		t.Fatal(err)
	}
	return r.Roots
}

// TestFirstOrderClosedForm checks Compute against a closed form derived for
// L(z) = k/(z − p) (k, p real):
//
//	S − 1/2 = (1 − L)/(2(1 + L)) = (z − a)/(2(z − b)),  a = p + k, b = p − k.
//
// On z = e^{jθ}, |z − a|² = 1 + a² − 2a·cosθ, so with c = cosθ in [−1, 1]
//
//	|S − 1/2|² = (1 + a² − 2ac) / (4(1 + b² − 2bc)),
//
// a linear-fractional function of c, hence monotone in c: its maximum over
// the circle is at c = 1 (θ = 0) or c = −1 (θ = π), so
//
//	max |S − 1/2| = ½·max(|1 − a|/|1 − b|, |1 + a|/|1 + b|),  alpha = 1/that.
//
// The closed loop z − b is stable for |b| < 1.
func TestFirstOrderClosedForm(t *testing.T) {
	cases := []struct{ k, p float64 }{{0.3, 0.5}, {0.05, 0.95}, {0.9, 0.9}, {-0.2, 0.6}, {1.2, 0.4}, {0.5, -0.3}}
	for _, tc := range cases {
		a, b := tc.p+tc.k, tc.p-tc.k
		want := 1 / (0.5 * math.Max(math.Abs(1-a)/math.Abs(1-b), math.Abs(1+a)/math.Abs(1+b)))
		L := poly.R(poly.New(tc.k), poly.New(-tc.p, 1))
		m, err := Compute(response(L), closedPoles(t, L))
		if err != nil {
			t.Fatalf("k=%g p=%g: %v", tc.k, tc.p, err)
		}
		if math.Abs(m.Alpha-want) > 1e-12*want {
			t.Errorf("k=%g p=%g: alpha %.15g, closed form %.15g", tc.k, tc.p, m.Alpha, want)
		}
		// Ranges from alpha (the contract's formulas).
		if want < 2 {
			lo := 20 * math.Log10((1-want/2)/(1+want/2))
			if m.GainLowDB == nil || math.Abs(*m.GainLowDB-lo) > 1e-9 || math.Abs(*m.GainHighDB+lo) > 1e-9 {
				t.Errorf("k=%g p=%g: gain range %v..%v, want %g..%g", tc.k, tc.p, m.GainLowDB, m.GainHighDB, lo, -lo)
			}
		} else if m.GainLowDB != nil || m.GainHighDB != nil {
			t.Errorf("k=%g p=%g: alpha %g ≥ 2 must leave the gain range unbounded", tc.k, tc.p, want)
		}
		if ph := 2 * math.Atan(want/2) * 180 / math.Pi; math.Abs(m.PhaseDeg-ph) > 1e-9 {
			t.Errorf("k=%g p=%g: phase %g, want %g", tc.k, tc.p, m.PhaseDeg, ph)
		}
	}
}

// TestIntegratorPoleOnCircle: L with a pole at z = 1 (S = 0 there) has a
// disk margin; 1 + L = 0 on the circle has none.
func TestIntegratorPoleOnCircle(t *testing.T) {
	L := poly.R(poly.New(0.2), poly.New(-1, 1)) // 0.2/(z − 1): closed loop z − 0.8
	m, err := Compute(response(L), closedPoles(t, L))
	if err != nil || !(m.Alpha > 0) {
		t.Fatalf("integrator loop: %+v, %v", m, err)
	}
	// Closed form above with p = 1, k = 0.2: a = 1.2, b = 0.8; at θ = 0 the
	// ratio is |1 − a|/|1 − b| = 1, at θ = π 2.2/1.8.
	if want := 1 / (0.5 * 2.2 / 1.8); math.Abs(m.Alpha-want) > 1e-12 {
		t.Errorf("alpha %g, want %g", m.Alpha, want)
	}
	L2 := poly.R(poly.New(-1.5), poly.New(0.5, 1)) // closed loop z − 1
	if _, err := Compute(response(L2), closedPoles(t, L2)); err != ErrOnCircle {
		t.Errorf("closed-loop pole at z = 1: err %v, want ErrOnCircle", err)
	}
}

// TestCrossCheckNumpy compares alpha with testdata/crosscheck/diskmargin_ref.py
// (numpy on 400001 angles refined by scipy's bounded Brent minimiser) on
// random stable loops of order 1 to 5, to 1e-6 relative in max|S − 1/2|.
func TestCrossCheckNumpy(t *testing.T) {
	if testing.Short() {
		t.Skip("numpy cross-check skipped with -short")
	}
	py := scipyref.Python(t)
	script, err := filepath.Abs("../../testdata/crosscheck/diskmargin_ref.py")
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewSource(12))
	type refLoop struct {
		Num []float64 `json:"num"`
		Den []float64 `json:"den"`
	}
	var loops []poly.Rational
	var in []refLoop
	for len(loops) < 60 {
		n := 1 + rng.Intn(5)
		var ps, zs []complex128
		for len(ps) < n {
			r, th := 0.2+0.79*rng.Float64(), math.Pi*rng.Float64()
			if n-len(ps) >= 2 && rng.Intn(2) == 0 {
				ps = append(ps, cmplx.Rect(r, th), cmplx.Rect(r, -th))
			} else {
				ps = append(ps, complex(r*math.Copysign(1, rng.Float64()-0.3), 0))
			}
		}
		for i := 0; i < rng.Intn(n); i++ {
			zs = append(zs, complex(1.6*rng.Float64()-0.8, 0))
		}
		L := poly.R(poly.FromRoots(zs).Scale(0.05+rng.Float64()), poly.FromRoots(ps))
		r, err := roots.Find(L.Num.Add(L.Den))
		if err != nil {
			t.Fatal(err)
		}
		stable := true
		for _, z := range r.Roots {
			stable = stable && cmplx.Abs(z) < 0.999
		}
		if !stable {
			continue
		}
		loops = append(loops, L)
		in = append(in, refLoop{L.Num.HighFirst(), L.Den.HighFirst()})
	}
	var ref []struct{ Peak, Theta float64 }
	scipyref.RunJSON(t, py, []string{script}, in, &ref)
	if len(ref) != len(loops) {
		t.Fatalf("reference output: %d results for %d loops", len(ref), len(loops))
	}
	worst := 0.0
	for i, L := range loops {
		m, err := Compute(response(L), closedPoles(t, L))
		if err != nil {
			t.Fatalf("loop %d: %v", i, err)
		}
		rel := math.Abs(1/m.Alpha-ref[i].Peak) / ref[i].Peak
		worst = math.Max(worst, rel)
		if rel > 1e-6 {
			t.Errorf("loop %d: max|S − 1/2| %.12g (θ %.6g), numpy/scipy %.12g (θ %.6g)", i, 1/m.Alpha, m.PeakTheta, ref[i].Peak, ref[i].Theta)
		}
	}
	t.Logf("%d loops, worst relative difference %.2g", len(loops), worst)
}

// TestZeroLoop: L ≡ 0 (an open loop) has S = 1, |S − 1/2| = 1/2 at every
// frequency, so alpha = 2 exactly and the gain range is unbounded.
func TestZeroLoop(t *testing.T) {
	m, err := Compute(func(float64) complex128 { return 0 }, nil)
	if err != nil || m.Alpha != 2 || m.GainLowDB != nil || m.GainHighDB != nil || math.Abs(m.PhaseDeg-90) > 1e-12 {
		t.Errorf("L = 0: %+v, %v; want alpha 2, unbounded gains, ±90°", m, err)
	}
}
