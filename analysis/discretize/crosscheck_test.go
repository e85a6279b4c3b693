package discretize

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"ringside/analysis/internal/scipyref"
	"testing"
	"time"

	"ringside/analysis/poly"
)

// The cross-check runs testdata/crosscheck/roots_discretize_ref.py and
// compares Discretize with scipy.signal.cont2discrete ('zoh', 'foh',
// 'bilinear') on its 220 random systems: denominator degree 1…8, a quarter
// unstable, numerator degree 0…n, random T up to 2 over the fastest pole.

type tf struct{ Num, Den []float64 }

type refData struct {
	Scipy   string
	Systems []struct {
		Num, Den []float64
		T        float64
		ZOH      tf `json:"zoh"`
		FOH      tf `json:"foh"`
		Bilinear tf `json:"bilinear"`
	}
}

// crossTol is the allowed coefficient difference, relative to the largest
// coefficient of the reference numerator and denominator together. Both
// sides are exact methods in floating point, but the coefficients of a
// degree-8 polynomial whose roots crowd near z = 1 (small T) are
// ill-conditioned functions of the poles: rounding in e^{AT} and in the
// conversion to a transfer function moves them by up to about 2^n·eps·κ.
// Measured worst cases (scipy 1.10.1): zoh 2.4e-14, foh 8.4e-14, tustin
// 7.2e-13 (Tustin's (z±1)^k expansions cancel most); 1e-11 leaves a margin
// of ten over the worst.
const crossTol = 1e-11

func TestCrossCheckScipy(t *testing.T) {
	py := scipyref.Python(t)
	out := filepath.Join(t.TempDir(), "ref.json")
	script := filepath.Join("..", "..", "testdata", "crosscheck", "roots_discretize_ref.py")
	t0 := time.Now()
	if b, err := exec.Command(py, script, out).CombinedOutput(); err != nil {
		t.Fatalf("%s %s: %v\n%s", py, script, err, b)
	}
	t.Logf("script %v", time.Since(t0))
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var d refData
	if err := json.Unmarshal(b, &d); err != nil {
		t.Fatal(err)
	}
	if len(d.Systems) < 200 {
		t.Fatalf("only %d reference systems", len(d.Systems))
	}
	worst := map[Method]float64{}
	for i, s := range d.Systems {
		c := poly.R(poly.New(s.Num...), poly.New(s.Den...))
		for _, mc := range []struct {
			m   Method
			ref tf
		}{{ZOH, s.ZOH}, {FOH, s.FOH}, {Tustin, s.Bilinear}} {
			got, err := Discretize(c, Options{Method: mc.m, T: s.T})
			if err != nil {
				t.Errorf("system %d %v: %v", i, mc.m, err)
				continue
			}
			ref := monic(poly.New(mc.ref.Num...), poly.New(mc.ref.Den...))
			scale := 0.0
			for _, v := range append(append([]float64(nil), ref.Num...), ref.Den...) {
				scale = max(scale, math.Abs(v))
			}
			diff := maxDiff(got.Num, ref.Num)
			diff = max(diff, maxDiff(got.Den, ref.Den)) / scale
			worst[mc.m] = max(worst[mc.m], diff)
			if diff > crossTol {
				t.Errorf("system %d %v (T=%g): relative difference %g above %g\n got %v / %v\n scipy %v / %v",
					i, mc.m, s.T, diff, crossTol, got.Num, got.Den, ref.Num, ref.Den)
			}
		}
	}
	t.Logf("scipy %s, %d systems: worst relative difference zoh %.2g, foh %.2g, tustin %.2g",
		d.Scipy, len(d.Systems), worst[ZOH], worst[FOH], worst[Tustin])
}

func maxDiff(a, b poly.Poly) float64 {
	var d float64
	for i := 0; i < max(len(a), len(b)); i++ {
		var x, y float64
		if i < len(a) {
			x = a[i]
		}
		if i < len(b) {
			y = b[i]
		}
		d = max(d, math.Abs(x-y))
	}
	return d
}
