package realize

import (
	"math/cmplx"
	"testing"

	"ringside/analysis/poly"
)

// BenchmarkRealize measures one realize with headroom, what the editor
// pays per realize line on each analysis.
func BenchmarkRealize(b *testing.B) {
	f, _ := ParseFormat("q1.14")
	b.Run("issue-sections-q1.14", func(b *testing.B) {
		tf := issueTF()
		for b.Loop() {
			if _, err := Realize(tf, Sections, f, 1e-4, 1e-6); err != nil {
				b.Fatal(err)
			}
		}
	})
	// Order 16, every pole at radius 0.99999: the work cap binds.
	var ps []complex128
	for k := 1; k <= 8; k++ {
		z := cmplx.Rect(0.99999, 0.3*float64(k))
		ps = append(ps, z, cmplx.Conj(z))
	}
	den := poly.FromRoots(ps)
	tf := poly.R(poly.Const(den.Eval(1)), den)
	wide, _ := ParseFormat("q1.40")
	b.Run("order16-r0.99999-sections-q1.40", func(b *testing.B) {
		for b.Loop() {
			if _, err := Realize(tf, Sections, wide, 1e-4, 1e-6); err != nil {
				b.Fatal(err)
			}
		}
	})
}
