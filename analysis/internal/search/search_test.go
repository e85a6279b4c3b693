package search

import (
	"math"
	"testing"
)

// TestGoldenMax: the maximum of sin on [0, 3] is 1 at π/2 (a fact of
// trigonometry); near a smooth maximum float64 values stop telling points
// apart at a distance of about sqrt(eps) ≈ 1.5e-8, so the location is
// checked to 1e-7 and the value to rounding. The maximum of −|x − 0.3| (not
// smooth) is located to the requested width.
func TestGoldenMax(t *testing.T) {
	if x := GoldenMax(math.Sin, 0, 3, 1e-10); math.Abs(x-math.Pi/2) > 1e-7 || math.Sin(x) < 1-1e-15 {
		t.Errorf("sin: %v", x)
	}
	if x := GoldenMax(func(x float64) float64 { return -math.Abs(x - 0.3) }, 0, 1, 1e-12); math.Abs(x-0.3) > 1e-11 {
		t.Errorf("|x − 0.3|: %v", x)
	}
}

// TestBrentMax: the same maxima as TestGoldenMax (sin on [0, 3] peaks at
// π/2, a fact of trigonometry; −|x − 0.3| at 0.3), plus a narrow smooth peak
// 1/(1 + ((x − 0.123456)/1e-3)²) (a resonance's shape) located to its √ε
// determinacy, and far fewer evaluations than golden section on the
// smooth peaks.
func TestBrentMax(t *testing.T) {
	count := func(f func(float64) float64, n *int) func(float64) float64 {
		return func(x float64) float64 { *n++; return f(x) }
	}
	var nb, ng int
	if x := BrentMax(count(math.Sin, &nb), 0, 3, 1e-12); math.Abs(x-math.Pi/2) > 1e-7 || math.Sin(x) < 1-1e-15 {
		t.Errorf("sin: %v", x)
	}
	GoldenMax(count(math.Sin, &ng), 0, 3, 1e-12)
	if nb*2 > ng {
		t.Errorf("sin: Brent took %d evaluations, golden section %d", nb, ng)
	}
	if x := BrentMax(func(x float64) float64 { return -math.Abs(x - 0.3) }, 0, 1, 1e-12); math.Abs(x-0.3) > 1e-8 {
		t.Errorf("|x − 0.3|: %v", x)
	}
	peak := func(x float64) float64 { u := (x - 0.123456) / 1e-3; return 1 / (1 + u*u) }
	if x := BrentMax(peak, 0.12, 0.13, 1e-12); math.Abs(x-0.123456) > 1e-8 || peak(x) < 1-1e-15 {
		t.Errorf("narrow peak: %v (value %v)", x, peak(x))
	}
}
