package plot

import (
	"math/cmplx"
	"testing"
)

// The open-loop poles and zeros drawn are the blocks' own; they are the
// roots of L's expanded polynomials (up to the root finder's accuracy,
// 1e-6 here for repeated roots), so nothing is found a second time.
func TestOpenPolesZerosAreLsRoots(t *testing.T) {
	compared := 0
	for _, file := range []string{"testdata/three.loop", "testdata/blower.loop"} {
		res := checkFile(t, file)
		for _, l := range res.Loops {
			if l.Model == nil {
				continue
			}
			compared++
			poles, zeros, err := openPolesZeros(l)
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range []struct {
				what string
				got  []complex128
				p    []float64
			}{{"poles", poles, l.Open.Den}, {"zeros", zeros, l.Open.Num}} {
				want, err := openRoots(c.p, c.what)
				if err != nil {
					t.Fatal(err)
				}
				if !sameMultiset(c.got, want, 1e-6) {
					t.Errorf("%s/%s: open-loop %s %v, roots of L %v", file, l.Name, c.what, c.got, want)
				}
			}
		}
	}
	if compared < 3 {
		t.Errorf("%d loops with a model compared", compared)
	}
}

func sameMultiset(a, b []complex128, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	used := make([]bool, len(b))
	for _, z := range a {
		found := false
		for j, w := range b {
			if !used[j] && cmplx.Abs(z-w) <= tol*max(1, cmplx.Abs(z)) {
				used[j], found = true, true
				break
			}
		}
		if !found {
			return false
		}
	}
	return true
}
