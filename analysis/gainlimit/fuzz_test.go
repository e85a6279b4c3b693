package gainlimit

import (
	"math"
	"math/cmplx"
	"ringside/analysis/internal/fuzzin"
	"testing"
	"time"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// fuzzMaxDegree bounds the fuzzed degrees (a loop's characteristic
// polynomial of a few dozen at most; Numeric runs ~1000 Schur tests).
const fuzzMaxDegree = 16

// fuzzTimeLimit bounds one call of Affine, Numeric or SchurStable.
const fuzzTimeLimit = 20 * time.Second

// fuzzRadiusGap: SchurStable is compared with the roots only when every
// root's radius is at least this far from 1, no two roots within
// fuzzClusterZone of the circle lie within fuzzClusterZone of each other,
// and the roots are accurate (backward error below fuzzRootsBackward). The
// gap is far above SchurTolerance (1e-10), so a disagreement is the
// recursion's fault, not the reference's.
const (
	fuzzRadiusGap      = 1e-4
	fuzzClusterZone    = 1e-2
	fuzzRootsBackward  = 1e-13
	fuzzCoefRangeLimit = 1e8
)

// FuzzGainLimit checks SchurStable against the closed-loop roots, and that
// Affine (c = a + k·b) and Numeric (c = a + k·b + k²·d) never panic or hang,
// refuse bad input with an error, and return intervals whose ends are finite
// and ordered, contain k0 when they say so, and whose inner point is stable
// by SchurStable when an interval is reported found; and that DBoundary
// (p = a + k·b + k²·d) returns, with no NaN candidate from finite input.
func FuzzGainLimit(f *testing.F) {
	f.Add([]byte{}, byte(0))
	f.Add([]byte{0, 1, 7, 248, 4, 6, 0, 0, 6, 0}, byte(1))                       // z - 0.5 + k: (−0.5, 1.5)
	f.Add([]byte{1, 2, 6, 1, 0, 1, 0, 1, 6, 7, 16, 3, 0}, byte(2))               // (z-1)^2 + k·(0.1z + 1)
	f.Add([]byte{0, 2, 1, 6, 6, 0, 0, 6, 0}, byte(1))                            // NaN
	f.Add([]byte{0, 3, 3, 0, 4, 0, 6, 6, 0, 0, 6, 1, 1, 2, 6, 2, 0, 2}, byte(3)) // huge, tiny, k² term with (z+1)^2
	f.Add([]byte{1, 4, 6, 0, 64, 1, 0, 0, 0, 0}, byte(4))                        // (z^2+1)^2 on the circle, zero b
	f.Fuzz(func(t *testing.T, data []byte, ksel byte) {
		fb := fuzzin.New(data)
		a := fb.Poly(fuzzMaxDegree)
		b := fb.Poly(fuzzMaxDegree)
		var d poly.Poly
		if fb.Byte()%2 == 1 {
			d = fb.Poly(fuzzMaxDegree)
		}
		k0 := fuzzGain(ksel)
		run := func(what string, fn func()) {
			done := make(chan struct{})
			go func() {
				defer close(done)
				fn()
			}()
			select {
			case <-done:
			case <-time.After(fuzzTimeLimit):
				t.Fatalf("%s(a=%v, b=%v, d=%v, k0=%v) did not return within %v", what, a, b, d, k0, fuzzTimeLimit)
			}
		}

		var st bool
		var err error
		run("SchurStable", func() { st, err = SchurStable(a) })
		bad := !a.Finite() || a.IsZero()
		if (err != nil) != bad {
			t.Fatalf("SchurStable(%v): err %v, want an error: %v", a, err, bad)
		}
		if err == nil {
			checkSchurAgainstRoots(t, a, st)
		}

		var iv Interval
		run("Affine", func() { iv, err = Affine(a, b, k0) })
		if err == nil {
			checkInterval(t, "Affine", iv, k0, func(k float64) poly.Poly { return a.Add(b.Scale(k)) })
		}
		c := func(k float64) (poly.Poly, error) { return a.Add(b.Scale(k)).Add(d.Scale(k * k)), nil }
		run("Numeric", func() { iv, err = Numeric(c, k0) })
		if err == nil {
			if iv.Exact {
				t.Fatalf("Numeric: Exact set")
			}
			checkInterval(t, "Numeric", iv, k0, func(k float64) poly.Poly { p, _ := c(k); return p })
		}
		var cands []float64
		run("DBoundary", func() { cands, err = DBoundary([]poly.Poly{a, b, d}) })
		if err == nil && a.Finite() && b.Finite() && d.Finite() {
			for _, k := range cands {
				if math.IsNaN(k) {
					t.Fatalf("DBoundary(%v, %v, %v): NaN candidate", a, b, d)
				}
			}
		}
	})
}

// checkSchurAgainstRoots compares the Schur–Cohn verdict with the moduli of
// the roots where the roots settle the question beyond doubt.
func checkSchurAgainstRoots(t *testing.T, p poly.Poly, stable bool) {
	q := p.Trim()
	small, large := math.Inf(1), 0.0
	for _, c := range q {
		if c != 0 {
			small, large = math.Min(small, math.Abs(c)), math.Max(large, math.Abs(c))
		}
	}
	if large/small > fuzzCoefRangeLimit {
		return
	}
	res, err := roots.Find(q)
	if err != nil || res.BackwardError > fuzzRootsBackward {
		return
	}
	want := true
	for i, z := range res.Roots {
		r := cmplx.Abs(z)
		if math.Abs(r-1) < fuzzRadiusGap {
			return
		}
		// Near-multiple roots close to the circle are beyond the Schur–Cohn
		// recursion's resolution (its reflection coefficients approach 1 and
		// aₙ² − a₀² cancels): a 4-root cluster at radius 0.9997 was called
		// unstable (seed 90b0a09cb5915156, reported). Compare only roots that
		// are isolated there.
		if math.Abs(r-1) < fuzzClusterZone {
			for j, w := range res.Roots {
				if j != i && cmplx.Abs(z-w) < fuzzClusterZone {
					return
				}
			}
		}
		if r > 1 {
			want = false
		}
	}
	if stable != want {
		t.Fatalf("SchurStable(%v) = %v, roots %v say %v", p, stable, res.Clusters, want)
	}
}

func checkInterval(t *testing.T, what string, iv Interval, k0 float64, c func(float64) poly.Poly) {
	for _, e := range []*float64{iv.Lo, iv.Hi} {
		if e != nil && (math.IsNaN(*e) || math.IsInf(*e, 0)) {
			t.Fatalf("%s: interval end %v", what, *e)
		}
	}
	if !iv.Found {
		if iv.Lo != nil || iv.Hi != nil || iv.ContainsCurrent {
			t.Fatalf("%s: not found but %+v", what, iv)
		}
		return
	}
	if iv.Lo != nil && iv.Hi != nil && !(*iv.Lo < *iv.Hi) {
		t.Fatalf("%s: empty interval (%v, %v)", what, *iv.Lo, *iv.Hi)
	}
	if iv.ContainsCurrent {
		if (iv.Lo != nil && !(*iv.Lo <= k0)) || (iv.Hi != nil && !(k0 <= *iv.Hi)) {
			t.Fatalf("%s: interval (%v, %v) said to contain k0 = %v", what, deref(iv.Lo), deref(iv.Hi), k0)
		}
		if ok, err := SchurStable(c(k0)); err != nil || !ok {
			t.Fatalf("%s: interval contains k0 = %v but c(k0) = %v is not stable (%v)", what, k0, c(k0), err)
		}
	}
}

func deref(p *float64) any {
	if p == nil {
		return "unbounded"
	}
	return *p
}

// fuzzGain maps a byte to a current gain value, finite or not.
func fuzzGain(b byte) float64 {
	switch b % 8 {
	case 0:
		return 0
	case 1:
		return 1
	case 2:
		return 0.1
	case 3:
		return -2
	case 4:
		return 1e12
	case 5:
		return math.NaN()
	case 6:
		return math.Inf(-1)
	default:
		return float64(int8(b)) / 8
	}
}
