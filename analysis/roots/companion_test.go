package roots

import (
	"math"
	"math/cmplx"
	"testing"

	"ringside/analysis/poly"
)

// Companion on polynomials of known roots (the product of its factors:
// z² − 3z + 2 has roots 1 and 2, z² + 1 has ±j), and refusals, quickly,
// of what has no finite companion matrix: infinite or NaN coefficients, a
// leading coefficient so small that the ratios overflow, the zero
// polynomial.
func TestCompanion(t *testing.T) {
	for _, tc := range []struct {
		p    poly.Poly
		want []complex128
	}{
		{poly.New(2, -3, 1), []complex128{1, 2}},
		{poly.New(1, 0, 1), []complex128{1i, -1i}},
		{poly.New(0, 0, 5), []complex128{0, 0}},
	} {
		got, ok := Companion(tc.p)
		if !ok || len(got) != len(tc.want) {
			t.Fatalf("%v: %v %v", tc.p, got, ok)
		}
		for _, w := range tc.want {
			near := false
			for _, g := range got {
				near = near || cmplx.Abs(g-w) < 1e-12
			}
			if !near {
				t.Errorf("%v: roots %v, want %v", tc.p, got, tc.want)
			}
		}
	}
	for _, p := range []poly.Poly{
		{1, math.Inf(1), 1},
		{math.NaN(), 1, 1},
		{1e300, 1, 1e-300},
		{},
	} {
		if got, ok := Companion(p); ok {
			t.Errorf("%v: roots %v, want a refusal", p, got)
		}
	}
}
