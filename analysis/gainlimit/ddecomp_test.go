package gainlimit

import (
	"math"
	"math/rand/v2"
	"testing"

	"ringside/analysis/poly"
)

func hasNear(vals []float64, want, tol float64) bool {
	for _, v := range vals {
		if math.Abs(v-want) <= tol*math.Max(1, math.Abs(want)) {
			return true
		}
	}
	return false
}

// TestDBoundaryPoleAtGain: p = z − s has its root at s, on the circle for
// s = ±1 exactly (the two real points of the circle).
func TestDBoundaryPoleAtGain(t *testing.T) {
	got, err := DBoundary([]poly.Poly{poly.New(0, 1), poly.New(-1)})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []float64{1, -1} {
		if !hasNear(got, want, 1e-12) {
			t.Errorf("candidates %v miss %g", got, want)
		}
	}
}

// TestDBoundaryQuadraticInGain: p = (z − 1)(z − 0.9) + 0.1s²(z − 0.5)
// (a gain in two blocks). Its boundary values, by hand (Jury conditions for
// z² + b z + c with b = 0.1s² − 1.9, c = 0.9 − 0.05s²): p(1) = 0.05s² = 0
// at s = 0; p(−1) = 3.8 − 0.15s² = 0 at s² = 76/3; a complex pair on the
// circle needs c = 1, never for real s. Both must be among the candidates.
func TestDBoundaryQuadraticInGain(t *testing.T) {
	got, err := DBoundary([]poly.Poly{poly.New(0.9, -1.9, 1), nil, poly.New(-0.05, 0.1)})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []float64{0, math.Sqrt(76.0 / 3), -math.Sqrt(76.0 / 3)} {
		if !hasNear(got, want, 1e-9) && !(want == 0 && hasNear(got, 0, 1e-7)) {
			t.Errorf("candidates %v miss %g", got, want)
		}
	}
}

// TestDBoundaryAgreesWithAffine: for random second- and third-order
// polynomials affine in s, the exact affine method's ends (Affine, its own
// algebra) are among the D-decomposition's candidates.
func TestDBoundaryAgreesWithAffine(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	for i := 0; i < 200; i++ {
		n := 2 + rng.IntN(2)
		a, b := make(poly.Poly, n+1), make(poly.Poly, n)
		for j := range a {
			a[j] = rng.Float64()*1.6 - 0.8
		}
		a[n] = 1
		for j := range b {
			b[j] = rng.Float64()*2 - 1
		}
		iv, err := Affine(a, b, 0)
		if err != nil || !iv.Exact || !iv.Found {
			continue
		}
		got, err := DBoundary([]poly.Poly{a, b})
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range []*float64{iv.Lo, iv.Hi} {
			if e != nil && !hasNear(got, *e, 1e-7) {
				t.Errorf("a=%v b=%v: candidates %v miss the affine end %g", a, b, got, *e)
			}
		}
	}
}

func TestDBoundaryRefusesHighDegree(t *testing.T) {
	q := make([]poly.Poly, MaxGainDegree+2)
	for i := range q {
		q[i] = poly.New(1, 1)
	}
	if _, err := DBoundary(q); err != ErrGainDegree {
		t.Errorf("err %v, want ErrGainDegree", err)
	}
}
