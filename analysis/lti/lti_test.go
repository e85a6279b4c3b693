package lti

import (
	"math"
	"math/cmplx"
	"testing"

	"ringside/analysis/poly"
)

// transfer evaluates C (zI − A)⁻¹ B + D by solving (zI − A) x = B.
func transfer(s System, z complex128) complex128 {
	n := s.N
	M := make([][]complex128, n)
	for i := range M {
		M[i] = make([]complex128, n+1)
		for j := 0; j < n; j++ {
			M[i][j] = complex(-s.A[i*n+j], 0)
		}
		M[i][i] += z
		M[i][n] = complex(s.B[i], 0)
	}
	if !solveInPlace(M, n) {
		return cmplx.NaN()
	}
	v := complex(s.D, 0)
	for i := 0; i < n; i++ {
		v += complex(s.C[i], 0) * M[i][n]
	}
	return v
}

// The realization is the block: its transfer function equals the factored
// form at points off the poles (closed form: both evaluate one function).
func TestRealizeMatchesFactors(t *testing.T) {
	cases := []Factored{
		{Gain: 2.5, Poles: []complex128{0.9}},
		{Gain: -0.3, Zeros: []complex128{0.2}, Poles: []complex128{0.5, 0.7}},
		{Gain: 1, Zeros: []complex128{complex(0.1, 0.4), complex(0.1, -0.4)}, Poles: []complex128{0.3, 0.8}},
		{Gain: 4, Zeros: []complex128{-0.5, 0.25}, Poles: []complex128{complex(0.6, 0.7), complex(0.6, -0.7), 1}},
		{Gain: 1e-30, Poles: []complex128{0.5, 0.5, 0.5, 0.5}},
		{Gain: 3, Zeros: []complex128{0.1, 0.2}, Poles: []complex128{0.3, 0.4}},
	}
	for i, f := range cases {
		s := Realize(f)
		for _, z := range []complex128{complex(1.3, 0.2), complex(-0.4, 1.1), 2, complex(0, -0.9)} {
			got, want := transfer(s, z), f.At(z)
			if cmplx.Abs(got-want) > 1e-12*cmplx.Abs(want) {
				t.Errorf("case %d at %v: realization %v, factors %v", i, z, got, want)
			}
		}
	}
}

// Forty lags 1/(z − 0.5) closed by a gain k: the characteristic equation
// (z − 0.5)^40 + k = 0 has the closed-form roots 0.5 + k^(1/40)·e^{j(2i+1)π/40}
// (no polynomial is solved here).
func TestFortyLags(t *testing.T) {
	for _, k := range []float64{1e-30, 1e-12, 1e-3} {
		var fwd []Factored
		for i := 0; i < 40; i++ {
			fwd = append(fwd, Factored{Gain: 1, Poles: []complex128{0.5}})
		}
		fwd = append(fwd, Const(k))
		ps, err := NewLoop(fwd, nil, false).Poles()
		if err != nil {
			t.Fatal(err)
		}
		rho := math.Pow(k, 1.0/40)
		want := cmplx.Abs(0.5 + complex(rho, 0)*cmplx.Rect(1, math.Pi/40))
		got := cmplx.Abs(ps[0].Z)
		if math.Abs(got-want) > ps[0].Bound || ps[0].Bound > 1e-9 {
			t.Errorf("k=%g: largest radius %.15f ± %.3g, closed form %.15f", k, got, ps[0].Bound, want)
		}
		wantV := Stable
		if want >= 1 {
			wantV = Unstable
		}
		if v, _ := Decide(ps, 1e-6); v != wantV {
			t.Errorf("k=%g: verdict %v, want %v", k, v, wantV)
		}
	}
}

// A characteristic polynomial (z + 1)^3 (z − 0.75) with exact binary
// coefficients (L = N/z^4, N = (z+1)^3(z−0.75) − z^4): a triple pole
// exactly on the circle, which the eigenvalues scatter by about ε^(1/3);
// the cluster's centroid stays at −1, so the loop is marginal, never
// "unstable".
func TestTriplePoleOnCircle(t *testing.T) {
	n, err := FromRational(poly.R(poly.New(-0.75, -1.25, 0.75, 2.25), poly.Const(1)))
	if err != nil {
		t.Fatal(err)
	}
	f := n.Mul(Factored{Gain: 1, Poles: []complex128{0, 0, 0, 0}})
	ps, err := NewLoop([]Factored{f}, nil, false).Poles()
	if err != nil {
		t.Fatal(err)
	}
	v, i := Decide(ps, 1e-6)
	if v != Marginal || ps[i].Multiplicity != 3 || cmplx.Abs(ps[i].Z+1) > 1e-12 {
		t.Errorf("verdict %v, pole %+v; want marginal, triple at −1", v, ps[i])
	}
}

// A plant pole cancelled by a controller zero is an exact closed-loop pole
// and is absent from L.
func TestCommonFactor(t *testing.T) {
	plant := Factored{Gain: 0.5, Poles: []complex128{0.9, 1.2}}
	ctrl := Factored{Gain: 2, Zeros: []complex128{1.2}, Poles: []complex128{0.2}}
	l := NewLoop([]Factored{ctrl, plant}, nil, false)
	if len(l.Common()) != 1 || l.Common()[0].Z != 1.2 || l.Common()[0].Bound != 0 {
		t.Fatalf("common %+v", l.Common())
	}
	if len(l.Open().Poles) != 2 || len(l.Open().Zeros) != 0 {
		t.Fatalf("open %+v", l.Open())
	}
	ps, _ := l.Poles()
	if v, _ := Decide(ps, 1e-6); v != Unstable {
		t.Errorf("verdict %v, want unstable (hidden mode at 1.2)", v)
	}
}
