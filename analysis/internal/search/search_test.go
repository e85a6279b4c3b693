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
