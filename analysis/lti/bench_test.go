package lti

import (
	"math/cmplx"
	"testing"

	"ringside/analysis/poly"
)

// thirdOrder is a PI controller, a second-order plant (zero-order hold of
// 40/(s² + 9s + 40) at 1 ms, as the conveyor demo) and a one-sample delay:
// the loop shape of the speed benchmarks.
func thirdOrder(b *testing.B) (fwd, fb []Factored) {
	pi, err := FromRational(poly.R(poly.New(-0.8, 0.805), poly.New(-1, 1)))
	if err != nil {
		b.Fatal(err)
	}
	plant, err := FromRational(poly.R(poly.New(1.9734e-5, 2.0e-5), poly.New(0.99104, -1.99100, 1)))
	if err != nil {
		b.Fatal(err)
	}
	return []Factored{pi, plant}, []Factored{{Gain: 1, Poles: []complex128{0}}}
}

// BenchmarkLoopNumerics: model, closed-loop poles with bounds, margins and
// step response of one third-order loop (plus delay).
func BenchmarkLoopNumerics(b *testing.B) {
	fwd, fb := thirdOrder(b)
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		l := NewLoop(fwd, fb, false)
		ps, err := l.Poles()
		if err != nil {
			b.Fatal(err)
		}
		if _, err := l.Margins(1e-3, ps); err != nil {
			b.Fatal(err)
		}
		if _, err := l.Step(1e-3, cmplx.Abs(ps[0].Z)); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPoles: the closed-loop poles with bounds alone (what each gain
// value of a search costs).
func BenchmarkPoles(b *testing.B) {
	fwd, fb := thirdOrder(b)
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := NewLoop(fwd, fb, false).Poles(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkMargins: the margins alone, block by block.
func BenchmarkMargins(b *testing.B) {
	fwd, fb := thirdOrder(b)
	l := NewLoop(fwd, fb, false)
	ps, _ := l.Poles()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := l.Margins(1e-3, ps); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkStepFigures: the step figures alone (the simulation stops once
// the rest of the response cannot change them).
func BenchmarkStepFigures(b *testing.B) {
	fwd, fb := thirdOrder(b)
	l := NewLoop(fwd, fb, false)
	ps, _ := l.Poles()
	r := 0.0
	for _, p := range ps {
		r = max(r, cmplx.Abs(p.Z))
	}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := l.StepFigures(1e-3, r); err != nil {
			b.Fatal(err)
		}
	}
}
