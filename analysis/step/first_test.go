package step

import (
	"math"
	"testing"

	"ringside/analysis/poly"
)

// h = 1/(z − 1.1): y[k] = 1 + 1.1·y[k−1] with y[0] = 0 (a one-sample
// delay), so y[k] = (1.1^k − 1)/0.1 (geometric sum, closed form).
func TestFirstFollowsAGrowingResponse(t *testing.T) {
	h := poly.R(poly.Poly{1}, poly.Poly{-1.1, 1})
	y, err := First(h, 50, math.Inf(1))
	if err != nil {
		t.Fatal(err)
	}
	if len(y) != 50 {
		t.Fatalf("%d samples", len(y))
	}
	for k, v := range y {
		want := (math.Pow(1.1, float64(k)) - 1) / 0.1
		if math.Abs(v-want) > 1e-9*math.Max(1, want) {
			t.Errorf("y[%d] = %g, want %g", k, v, want)
		}
	}
	// Stops at the first sample beyond the limit.
	y, _ = First(h, 50, 100)
	if last := y[len(y)-1]; last <= 100 || y[len(y)-2] > 100 {
		t.Errorf("stopped at %g after %g", last, y[len(y)-2])
	}
}
