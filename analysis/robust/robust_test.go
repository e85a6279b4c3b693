package robust

import (
	"fmt"
	"math"
	"testing"

	"ringside/analysis/gainlimit"
	"ringside/analysis/poly"
)

// affineFamily is c(x) = c0 + Σ x_i·c_i over [0, 1]^n.
func affineFamily(c0 poly.Poly, cs ...poly.Poly) Family {
	n := len(cs)
	f := Family{Lo: make([]float64, n), Hi: make([]float64, n), Tolerance: 1e-6}
	for i := range cs {
		f.Names = append(f.Names, fmt.Sprintf("q%d", i+1))
		f.Hi[i] = 1
	}
	f.Char = func(x []float64) (poly.Poly, bool) {
		p := c0
		for i, c := range cs {
			p = p.Add(c.Scale(x[i]))
		}
		return p, true
	}
	return f
}

// Lowest power first: P = z³ − 1.91z² + 1.02z − 0.08 and
// Q = z³ + 1.47z² + 1.25z + 0.33 are both Schur stable; their midpoint is
// not (the Schur polynomials of degree 3 are not a convex set).
var (
	cornerP = poly.New(-0.08, 1.02, -1.91, 1)
	cornerQ = poly.New(0.33, 1.25, 1.47, 1)
)

// TestCornersAreNotEnough: every corner of the box is stable, an edge is
// not; the edge theorem must say unstable, exactly.
func TestCornersAreNotEnough(t *testing.T) {
	f := affineFamily(cornerP, cornerQ.Sub(cornerP), poly.New(0, 0, 0.05))
	for _, x := range corners(f.Lo, f.Hi) {
		p, _ := f.Char(x)
		if st, err := gainlimit.SchurStable(p); err != nil || !st {
			t.Fatalf("corner %v not stable: the case is wrong", x)
		}
	}
	r := Analyse(f)
	if r.Stable == nil || *r.Stable || !r.Exact {
		t.Fatalf("want exactly unstable, got %+v", r)
	}
	if r.WorstRadius < 1 {
		t.Errorf("worst radius %g: the unstable stretch of the edge was not met", r.WorstRadius)
	}
	// The worst point lies on an edge with q2 at a corner value.
	if q2 := r.Worst[1]; q2 != 0 && q2 != 1 {
		t.Errorf("worst point %v is not on an edge", r.Worst)
	}
}

// TestProductIsNotAffine: c = P + q1·q2·(Q − P) is not affine in (q1, q2)
// (stable at the corners (0,1), (1,0), (0,0), the same segment at q1 = q2):
// the grid finds the unstable point and says unstable; with the range
// shrunk to a stable part it answers undecided, never stable.
func TestProductIsNotAffine(t *testing.T) {
	d := cornerQ.Sub(cornerP)
	f := Family{Names: []string{"q1", "q2"}, Lo: []float64{0, 0}, Hi: []float64{1, 1}, Tolerance: 1e-6,
		Char: func(x []float64) (poly.Poly, bool) { return cornerP.Add(d.Scale(x[0] * x[1])), true }}
	r := Analyse(f)
	if r.Exact || r.Stable == nil || *r.Stable || r.WorstRadius < 1 {
		t.Fatalf("want an unstable grid verdict with a witness, got %+v", r)
	}
	f.Hi = []float64{0.2, 0.2}
	r = Analyse(f)
	if r.Stable != nil || r.Why == "" {
		t.Fatalf("a grid must not prove stability: %+v", r)
	}
}

// TestOneGainInterval: for one gain the verdict is the gain's stable
// interval. c(k) = z − 0.5 + k·0.1 has its root at 0.5 − 0.1k: stable for
// −5 < k < 15 (the root at −1 and +1), a closed form.
func TestOneGainInterval(t *testing.T) {
	f := affineFamily(poly.New(-0.5, 1), poly.New(0.1))
	f.Lo[0], f.Hi[0] = -2, 14
	r := Analyse(f)
	if r.Stable == nil || !*r.Stable || r.Interval == nil || r.Interval.Lo == nil || r.Interval.Hi == nil ||
		math.Abs(*r.Interval.Lo+5) > 1e-9 || math.Abs(*r.Interval.Hi-15) > 1e-9 {
		t.Fatalf("want stable with interval (−5, 15), got %+v (interval %+v)", r, r.Interval)
	}
	// The worst radius: |0.5 − 0.1k| is largest at k = 14: 0.9.
	if math.Abs(r.WorstRadius-0.9) > 1e-9 || r.Worst[0] != 14 {
		t.Errorf("worst %v radius %g, want k = 14 radius 0.9", r.Worst, r.WorstRadius)
	}
	f.Hi[0] = 15 // the root reaches the circle at the end of the range
	if r := Analyse(f); r.Stable == nil || *r.Stable {
		t.Errorf("range ending on the stability boundary called stable: %+v", r)
	}
}

// BenchmarkAnalyse measures the exact method's growth with the number of
// varying gains n on a degree-6 family: 2^n corners and n·2^(n−1) edges,
// each an affine stable interval and 17 root computations.
func BenchmarkAnalyse(b *testing.B) {
	c0 := poly.FromRoots([]complex128{0.5, -0.3, 0.2 + 0.4i, 0.2 - 0.4i, 0.6 + 0.1i, 0.6 - 0.1i})
	for n := 1; n <= 6; n++ {
		var cs []poly.Poly
		for i := 0; i < n; i++ {
			c := make(poly.Poly, 6)
			c[i%6] = 0.01 * float64(i+1)
			cs = append(cs, c)
		}
		f := affineFamily(c0, cs...)
		b.Run(fmt.Sprintf("gains=%d", n), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if r := Analyse(f); r.Stable == nil || !*r.Stable {
					b.Fatalf("family not stable: %+v", r)
				}
			}
		})
	}
}

// TestDegreeLostOnAnEdge: c = q1·z² + z − 0.3 + 0.1·q2 loses its leading
// coefficient along the whole edge q1 = 0 (a pole at infinity: the loop is
// ill-posed there), so the box is not stable and the point is reported.
func TestDegreeLostOnAnEdge(t *testing.T) {
	f := affineFamily(poly.New(-0.3, 1), poly.New(0, 0, 1), poly.New(0.1))
	r := Analyse(f)
	if r.Stable == nil || *r.Stable || r.IllPosed == nil || r.IllPosed[0] != 0 {
		t.Fatalf("want unstable with an ill-posed point at q1 = 0, got %+v", r)
	}
	if math.IsInf(r.WorstRadius, 0) || math.IsNaN(r.WorstRadius) {
		t.Errorf("worst radius %v must be a finite figure", r.WorstRadius)
	}
}
