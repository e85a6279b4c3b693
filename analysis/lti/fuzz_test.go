package lti

import (
	"math"
	"math/cmplx"
	"testing"

	"ringside/analysis/internal/fuzzin"
)

// fuzzTol is the on-circle tolerance the checker uses by default.
const fuzzTol = 1e-6

// FuzzLoopModel builds loops of up to four blocks from bytes (factored from
// fuzzed rational functions: zero, non-finite, huge, tiny coefficients,
// repeated roots on the circle, cancellations) and checks that the model
// never panics; that the closed-loop poles number the loop's order (or an
// error is returned); that every bound is a non-negative number or +Inf;
// that a Stable verdict has every pole's disk strictly inside 1 − tol and an
// Unstable one a pole certainly outside; and that margins, the step and the
// disk margin of a stable loop are numbers.
func FuzzLoopModel(f *testing.F) {
	f.Add([]byte{}, byte(0))
	f.Add([]byte{2, 1, 0, 0, 6, 1, 1, 6, 1, 0, 0}, byte(1))                         // one integrator
	f.Add([]byte{3, 1, 0, 0, 6, 1, 2, 6, 1, 0, 1, 1, 0, 0, 6, 1, 1, 6, 1}, byte(0)) // cancellation on the circle
	f.Add([]byte{4, 0, 1, 7, 8, 4, 6, 1, 2, 6, 1, 0, 0, 2, 0, 0, 0}, byte(3))
	f.Fuzz(func(t *testing.T, data []byte, sign byte) {
		fb := fuzzin.New(data)
		n := 1 + int(fb.Byte())%4
		var blocks []Factored
		order := 0
		for i := 0; i < n; i++ {
			r := fb.Rational(8)
			if r.Num.Degree() > r.Den.Degree() {
				return // non-causal: refused before a loop is built
			}
			b, err := FromRational(r)
			if err != nil {
				return
			}
			blocks = append(blocks, b)
			order += len(b.Poles)
		}
		cut := int(sign>>1) % (len(blocks) + 1)
		l := NewLoop(blocks[:cut], blocks[cut:], sign&1 == 1)
		ps, err := l.Poles()
		if err != nil {
			return
		}
		if len(ps) != order {
			t.Fatalf("%d poles for order %d", len(ps), order)
		}
		for _, p := range ps {
			if math.IsNaN(p.Bound) || p.Bound < 0 || math.IsNaN(p.CentroidBound) || cmplx.IsNaN(p.Z) {
				t.Fatalf("pole %+v", p)
			}
		}
		v, i := Decide(ps, fuzzTol)
		switch v {
		case Stable:
			for _, p := range ps {
				if !(cmplx.Abs(p.Z)+p.Bound < 1-fuzzTol) {
					t.Fatalf("stable with pole %+v", p)
				}
			}
		case Unstable:
			if !(cmplx.Abs(ps[i].Z)-ps[i].Bound > 1+fuzzTol) {
				t.Fatalf("unstable by pole %+v", ps[i])
			}
		}
		m, err := l.Margins(1e-3, ps)
		if err == nil {
			for _, x := range []*float64{m.GainMarginDB, m.PhaseMarginDeg, m.DelayMarginS, m.PeakSensitivityDB} {
				if x != nil && math.IsNaN(*x) {
					t.Fatalf("margin NaN: %+v", m)
				}
			}
		}
		if v == Stable && len(ps) > 0 && order <= 24 {
			if st, err := l.Step(1e-3, cmplx.Abs(ps[0].Z)); err == nil && (math.IsNaN(st.Final) || math.IsNaN(st.OvershootPct)) {
				t.Fatalf("step %+v", st)
			}
			if resp, err := l.Response(1e-3, ps); err == nil {
				if d, err := resp.DiskMargin(); err == nil && !(d.Alpha > 0) {
					t.Fatalf("disk margin %+v", d)
				}
			}
		}
	})
}
