package freq

import (
	"math"
	"math/cmplx"
	"math/rand"
	"path/filepath"
	"testing"

	"ringside/analysis/internal/scipyref"
	"ringside/analysis/poly"
	polyroots "ringside/analysis/roots"
)

// TestDiskMarginOnMarginGridNumpy checks the disk margin as the checker
// computes it, on the margins' own grid (Sampled.DiskMargin), against
// testdata/crosscheck/diskmargin_ref.py (numpy on 400,001 angles refined by
// scipy's bounded Brent minimiser): random stable factored loops of order 1
// to 6, some with an integrator, max|S − 1/2| to 1e-6 relative.
func TestDiskMarginOnMarginGridNumpy(t *testing.T) {
	if testing.Short() {
		t.Skip("numpy cross-check skipped with -short")
	}
	py := scipyref.Python(t)
	script, err := filepath.Abs("../../testdata/crosscheck/diskmargin_ref.py")
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewSource(31))
	type refLoop struct {
		Num []float64 `json:"num"`
		Den []float64 `json:"den"`
	}
	var loops []Factors
	var in []refLoop
	for len(loops) < 80 {
		n := 1 + rng.Intn(6)
		var ps, zs []complex128
		if rng.Intn(3) == 0 {
			ps = append(ps, 1) // an integrator: |S − 1/2| = 1/2 at θ = 0
		}
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
		k := 0.01 + 0.5*rng.Float64()
		num, den := poly.FromRoots(zs).Scale(k), poly.FromRoots(ps)
		closed, ok := polyroots.Companion(num.Add(den))
		if !ok || !insideBy(closed, 0.999) {
			continue
		}
		loops = append(loops, Factors{Gain: k, Zeros: zs, Poles: ps, Closed: closed})
		in = append(in, refLoop{num.HighFirst(), den.HighFirst()})
	}
	var ref []struct{ Peak, Theta float64 }
	scipyref.RunJSON(t, py, []string{script}, in, &ref)
	if len(ref) != len(loops) {
		t.Fatalf("reference output: %d results for %d loops", len(ref), len(loops))
	}
	worst := 0.0
	for i, f := range loops {
		s, err := SampleFactors(f, 1)
		if err != nil {
			t.Fatal(err)
		}
		m, err := s.DiskMargin()
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

func insideBy(zs []complex128, r float64) bool {
	for _, z := range zs {
		if cmplx.Abs(z) >= r {
			return false
		}
	}
	return true
}
