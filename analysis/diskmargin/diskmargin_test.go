package diskmargin_test

import (
	"math"
	"testing"

	"ringside/analysis/diskmargin"
	"ringside/analysis/freq"
)

// margin is the disk margin as the checker computes it: the loop sampled
// once on the margins' grid (freq), the peak found by FromGrid.
func margin(t *testing.T, f freq.Factors) (diskmargin.Margin, error) {
	t.Helper()
	s, err := freq.SampleFactors(f, 1)
	if err != nil {
		t.Fatal(err)
	}
	return s.DiskMargin()
}

// firstOrder is L = k/(z − p) with its closed-loop pole p − k.
func firstOrder(k, p float64) freq.Factors {
	return freq.Factors{Gain: k, Poles: []complex128{complex(p, 0)}, Closed: []complex128{complex(p-k, 0)}}
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
		m, err := margin(t, firstOrder(tc.k, tc.p))
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
	m, err := margin(t, firstOrder(0.2, 1)) // 0.2/(z − 1): closed loop z − 0.8
	if err != nil || !(m.Alpha > 0) {
		t.Fatalf("integrator loop: %+v, %v", m, err)
	}
	// Closed form above with p = 1, k = 0.2: a = 1.2, b = 0.8; at θ = 0 the
	// ratio is |1 − a|/|1 − b| = 1, at θ = π 2.2/1.8.
	if want := 1 / (0.5 * 2.2 / 1.8); math.Abs(m.Alpha-want) > 1e-12 {
		t.Errorf("alpha %g, want %g", m.Alpha, want)
	}
	if _, err := margin(t, firstOrder(-1.5, -0.5)); err != diskmargin.ErrOnCircle { // closed loop z − 1
		t.Errorf("closed-loop pole at z = 1: err %v, want ErrOnCircle", err)
	}
}

// TestZeroLoop: L ≡ 0 (an open loop) has S = 1, |S − 1/2| = 1/2 at every
// frequency, so alpha = 2 exactly and the gain range is unbounded.
func TestZeroLoop(t *testing.T) {
	grid := []float64{0, 1, 2, 3}
	half := func(float64) float64 { return 0.5 }
	m, err := diskmargin.FromGrid(grid, []float64{0.5, 0.5, 0.5, 0.5}, half)
	if err != nil || m.Alpha != 2 || m.GainLowDB != nil || m.GainHighDB != nil || math.Abs(m.PhaseDeg-90) > 1e-12 {
		t.Errorf("L = 0: %+v, %v; want alpha 2, unbounded gains, ±90°", m, err)
	}
	if _, err := diskmargin.FromGrid(grid, []float64{0.5, math.Inf(1), 0.5, 0.5}, half); err != diskmargin.ErrOnCircle {
		t.Errorf("1 + L = 0 at a grid point: err %v, want ErrOnCircle", err)
	}
}
