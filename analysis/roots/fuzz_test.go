package roots

import (
	"math"
	"math/cmplx"
	"ringside/analysis/internal/fuzzin"
	"testing"
	"time"

	"ringside/analysis/poly"
)

// fuzzMaxBackward is the backward error FuzzRoots accepts for polynomials
// whose coefficients are well scaled (every nonzero one within 1e-3..1e3 of
// the others' size after making it monic): the README's measured worst case
// on random degree-40 polynomials is 4.1e-11, and 1e-9 leaves a factor of 25
// for the harder clustered inputs the fuzzer builds (repeated roots on the
// circle). Badly scaled inputs are only held to an honest report.
const fuzzMaxBackward = 1e-9

// fuzzTimeLimit bounds one Find call; a degree-64 companion eigenproblem
// takes milliseconds, so anything near a second is a hang.
const fuzzTimeLimit = 5 * time.Second

// FuzzRoots checks that Find never panics or hangs, that it rejects bad input
// with an error, and that on success it returns deg p finite roots whose
// rebuilt monic polynomial matches the monic input within the reported
// backward error (recomputed here independently).
func FuzzRoots(f *testing.F) {
	f.Add([]byte{})
	f.Add([]byte{0, 2, 6, 6, 6})                         // 1 + z + z^2
	f.Add([]byte{1, 4, 6, 1, 0, 3})                      // (z-1)^4 on the circle
	f.Add([]byte{1, 4, 6, 0, 64, 1})                     // (z^2+1)^2: repeated ±j
	f.Add([]byte{0, 3, 1, 6, 6, 6})                      // NaN coefficient
	f.Add([]byte{0, 2, 3, 9, 4, 9, 6})                   // huge and tiny
	f.Add([]byte{1, 64, 6, 4, 10, 3, 2, 0, 6, 5, 9, 70}) // degree 64, mixed roots
	f.Add([]byte{1, 70, 6, 2, 0, 3})                     // degree 70, above MaxDegree
	f.Fuzz(func(t *testing.T, data []byte) {
		fb := fuzzin.New(data)
		p := fb.Poly(MaxDegree + 8)
		var res Result
		var err error
		done := make(chan struct{})
		go func() {
			defer close(done)
			res, err = Find(p)
		}()
		select {
		case <-done:
		case <-time.After(fuzzTimeLimit):
			t.Fatalf("Find(%v) did not return within %v", p, fuzzTimeLimit)
		}
		q := p.Trim()
		bad := q.IsZero() || !q.Finite() || q.Degree() > MaxDegree
		if err != nil {
			return
		}
		if bad {
			t.Fatalf("Find(%v) = %v, want an error", p, res.Roots)
		}
		if len(res.Roots) != q.Degree() {
			t.Fatalf("Find(%v): %d roots for degree %d", p, len(res.Roots), q.Degree())
		}
		for _, z := range res.Roots {
			if cmplx.IsNaN(z) || cmplx.IsInf(z) {
				t.Fatalf("Find(%v): non-finite root %v", p, z)
			}
		}
		n := 0
		for _, c := range res.Clusters {
			n += c.Multiplicity
		}
		if n != len(res.Roots) {
			t.Fatalf("Find(%v): clusters hold %d roots, want %d", p, n, len(res.Roots))
		}
		be := res.BackwardError
		if math.IsNaN(be) || be < 0 {
			t.Fatalf("Find(%v): backward error %v", p, be)
		}
		monic := q.Scale(1 / q.Lead())
		if !monic.Finite() {
			return // measured on the rescaled polynomial: nothing to recompute
		}
		rebuilt := poly.FromRoots(res.Roots)
		if !rebuilt.Finite() {
			return
		}
		num, den := 0.0, 0.0
		small, large := math.Inf(1), 0.0
		for i, c := range monic {
			num = math.Max(num, math.Abs(c-rebuilt[i]))
			den = math.Max(den, math.Abs(c))
			if c != 0 {
				small = math.Min(small, math.Abs(c))
				large = math.Max(large, math.Abs(c))
			}
		}
		got := num / den
		// The reported error is computed in a different order (and on the
		// rescaled polynomial); they agree to rounding, so allow 10× + eps.
		if got > 10*be+1e-15 {
			t.Fatalf("Find(%v): recomputed backward error %.3g, reported %.3g", p, got, be)
		}
		if large/small <= 1e6 && got > fuzzMaxBackward {
			t.Fatalf("Find(%v): backward error %.3g above %.0e (roots %v)", p, got, fuzzMaxBackward, res.Roots)
		}
	})
}
