package roots

import (
	"math"
	"math/cmplx"
	"math/rand"
	"testing"

	"ringside/analysis/poly"
)

// checkInvariants verifies the layout promised by Result: count, conjugate
// pairs exact and adjacent with Im > 0 first, real roots with Im exactly 0,
// descending modulus, and clusters that account for every root.
func checkInvariants(t *testing.T, p poly.Poly, r Result) {
	t.Helper()
	if got, want := len(r.Roots), p.Degree(); got != want {
		t.Fatalf("%d roots, want %d", got, want)
	}
	for i := 0; i < len(r.Roots); i++ {
		z := r.Roots[i]
		if i > 0 && cmplx.Abs(z) > cmplx.Abs(r.Roots[i-1]) {
			t.Errorf("root %d: modulus %g above previous %g", i, cmplx.Abs(z), cmplx.Abs(r.Roots[i-1]))
		}
		if imag(z) == 0 {
			continue
		}
		if imag(z) < 0 || i+1 >= len(r.Roots) || r.Roots[i+1] != cmplx.Conj(z) {
			t.Fatalf("root %d = %v is not followed by its exact conjugate: %v", i, z, r.Roots)
		}
		i++
	}
	total := 0
	for _, c := range r.Clusters {
		total += c.Multiplicity
	}
	if total != len(r.Roots) {
		t.Errorf("clusters hold %d roots, want %d", total, len(r.Roots))
	}
}

func mustFind(t *testing.T, p poly.Poly) Result {
	t.Helper()
	r, err := Find(p)
	if err != nil {
		t.Fatalf("Find(%v): %v", p, err)
	}
	checkInvariants(t, p, r)
	return r
}

func TestErrors(t *testing.T) {
	big := make(poly.Poly, MaxDegree+2)
	big[MaxDegree+1] = 1
	for name, p := range map[string]poly.Poly{
		"zero":      nil,
		"all zeros": {0, 0, 0},
		"NaN":       {1, math.NaN(), 1},
		"Inf":       {math.Inf(1), 1},
		"degree 65": big,
		// root −1e308/1e-308 does not fit in float64
		"root overflow": {1e308, 1e-308},
	} {
		if _, err := Find(p); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	top := make(poly.Poly, MaxDegree+1)
	top[0], top[MaxDegree] = -1, 1
	if _, err := Find(top); err != nil {
		t.Errorf("degree MaxDegree: %v", err)
	}
}

func TestConstantAndZeroRoots(t *testing.T) {
	r := mustFind(t, poly.Poly{3})
	if len(r.Roots) != 0 || len(r.Clusters) != 0 || r.BackwardError != 0 {
		t.Errorf("constant: %+v", r)
	}
	// z³(z − 2): the zero roots come out exactly, before the others.
	r = mustFind(t, poly.Poly{0, 0, 0, -2, 1})
	want := []complex128{2, 0, 0, 0}
	for i, z := range want {
		if r.Roots[i] != z {
			t.Errorf("roots %v, want %v", r.Roots, want)
			break
		}
	}
	last := r.Clusters[len(r.Clusters)-1]
	if last != (Cluster{0, 3}) {
		t.Errorf("zero cluster %+v", last)
	}
}

func TestClosedForms(t *testing.T) {
	// Degree 1 and 2 against Vieta's formulas (common practice).
	r := mustFind(t, poly.Poly{3, 2})
	if r.Roots[0] != -1.5 {
		t.Errorf("2z+3: %v", r.Roots)
	}
	// z² − 1e8·z + 1: roots 1e8 and 1e-8 (product 1); the small one is lost
	// by the naive formula through cancellation.
	r = mustFind(t, poly.Poly{1, -1e8, 1})
	if math.Abs(real(r.Roots[0])-1e8) > 1e-8 || math.Abs(real(r.Roots[1])-1e-8)/1e-8 > 4*eps {
		t.Errorf("cancellation case: %v", r.Roots)
	}
	// z² + 2z + 5: −1 ± 2i.
	r = mustFind(t, poly.Poly{5, 2, 1})
	if r.Roots[0] != complex(-1, 2) {
		t.Errorf("z²+2z+5: %v", r.Roots)
	}
}

func TestClusters(t *testing.T) {
	pair := poly.Poly{0.5*0.5 + 0.6*0.6, -1, 1} // (z − (0.5±0.6i))
	cases := []struct {
		name string
		p    poly.Poly
		want []Cluster
	}{
		{"(z-0.9)^4", poly.Poly{-0.9, 1}.Pow(4), []Cluster{{0.9, 4}}},
		{"(z-1)^2", poly.Poly{-1, 1}.Pow(2), []Cluster{{1, 2}}},
		{"(z+1)^3", poly.Poly{1, 1}.Pow(3), []Cluster{{-1, 3}}},
		{"pair^2", pair.Pow(2), []Cluster{{complex(0.5, 0.6), 2}, {complex(0.5, -0.6), 2}}},
		{"pair^3 z^2", pair.Pow(3).Shift(2), []Cluster{{complex(0.5, 0.6), 3}, {complex(0.5, -0.6), 3}, {0, 2}}},
		{"(z-0.9)^8", poly.Poly{-0.9, 1}.Pow(8), []Cluster{{0.9, 8}}},
		{"(z+0.3)^6 pair^2 (z-2)", poly.Poly{0.3, 1}.Pow(6).Mul(pair.Pow(2)).Mul(poly.Poly{-2, 1}),
			[]Cluster{{2, 1}, {complex(0.5, 0.6), 2}, {complex(0.5, -0.6), 2}, {-0.3, 6}}},
	}
	// ClusterValueTol: the cluster means measured reach 1e-15 or so; 1e-12
	// leaves room while still far below the spread of the members
	// (eps^(1/m): 1e-4 for m = 4, 1e-8 for m = 2).
	const clusterValueTol = 1e-12
	for _, c := range cases {
		r := mustFind(t, c.p)
		if len(r.Clusters) != len(c.want) {
			t.Errorf("%s: clusters %v, want %v", c.name, r.Clusters, c.want)
			continue
		}
		for i, w := range c.want {
			g := r.Clusters[i]
			if g.Multiplicity != w.Multiplicity || cmplx.Abs(g.Value-w.Value) > clusterValueTol {
				t.Errorf("%s: cluster %d = %v, want %v", c.name, i, g, w)
			}
		}
		if r.BackwardError > 1e-14 {
			t.Errorf("%s: backward error %g above 1e-14", c.name, r.BackwardError)
		}
	}
}

// TestWilkinson checks the degree-20 polynomial ∏(z − j), j = 1…20, whose
// roots are the integers (Wilkinson 1959, from memory). The coefficients are
// not exact in float64, so each root is only determined to within its
// componentwise condition number κ_j = Σ|c_i| j^i / (j·|p'(j)|) times eps,
// relative; the check allows 16 times that.
func TestWilkinson(t *testing.T) {
	p := poly.Poly{1}
	for j := 1; j <= 20; j++ {
		p = p.Mul(poly.Poly{-float64(j), 1})
	}
	r := mustFind(t, p)
	if len(r.Clusters) != 20 {
		t.Errorf("clusters %v: the roots are distinct", r.Clusters)
	}
	for i, z := range r.Roots {
		j := float64(20 - i)
		var s float64
		for k, c := range p {
			s += math.Abs(c) * math.Pow(j, float64(k))
		}
		// p'(j) = ∏_{k≠j} (j − k)
		d := 1.0
		for k := 1; k <= 20; k++ {
			if float64(k) != j {
				d *= j - float64(k)
			}
		}
		kappa := s / (j * math.Abs(d))
		if err := cmplx.Abs(z - complex(j, 0)); err > 16*eps*kappa*j {
			t.Errorf("root %g: error %g above 16·eps·κ·j = %g", j, err, 16*eps*kappa*j)
		}
	}
	if r.BackwardError > 1e-13 {
		t.Errorf("backward error %g", r.BackwardError)
	}
	t.Logf("Wilkinson 20: backward error %.2g", r.BackwardError)
}

func TestRandomDegree40(t *testing.T) {
	rng := rand.New(rand.NewSource(40))
	var worst float64
	for trial := 0; trial < 20; trial++ {
		p := make(poly.Poly, 41)
		for i := range p {
			p[i] = rng.NormFloat64()
		}
		r := mustFind(t, p)
		worst = max(worst, r.BackwardError)
		// Each simple root must make the residual small relative to the
		// evaluation's rounding scale (its componentwise backward error).
		for _, z := range r.Roots {
			v, s := evalAbs(p, z)
			if cmplx.Abs(v) > 1e3*eps*s {
				t.Errorf("trial %d: root %v residual %g, scale %g", trial, z, cmplx.Abs(v), s)
			}
		}
	}
	// The companion eigenvalues alone reach only about 1e-8 here (measured);
	// polishing brings it to 4e-11 at worst over these 20 trials, bounded
	// by the rounding of rebuilding a degree-40 product from its roots.
	if worst > 1e-9 {
		t.Errorf("worst backward error %g above 1e-9", worst)
	}
	t.Logf("degree 40 random: worst backward error %.2g", worst)
}

// TestScales checks that coefficient scale does not matter: the roots of
// a·q(z/σ) are σ times those of q, for scales far from 1.
func TestScales(t *testing.T) {
	q := poly.Poly{-0.9, 1}.Pow(3).Mul(poly.Poly{2, 3}).Mul(poly.Poly{5, 2, 1})
	base := mustFind(t, q)
	for _, sc := range []struct{ a, sigma float64 }{{1e-300, 1}, {1e300, 1}, {1, 1e-50}, {1, 1e50}, {1e-100, 1e30}, {1e100, 1e-30}} {
		p := make(poly.Poly, len(q))
		for i, c := range q {
			p[i] = sc.a * c * math.Pow(sc.sigma, -float64(i))
		}
		r := mustFind(t, p)
		if len(r.Clusters) != len(base.Clusters) {
			t.Errorf("scale %+v: clusters %v, want %v", sc, r.Clusters, base.Clusters)
			continue
		}
		for i, c := range base.Clusters {
			want := c.Value * complex(sc.sigma, 0)
			if cmplx.Abs(r.Clusters[i].Value-want) > 1e-12*cmplx.Abs(want) {
				t.Errorf("scale %+v: cluster %v, want %v", sc, r.Clusters[i].Value, want)
			}
		}
		if r.BackwardError > 1e-14 {
			t.Errorf("scale %+v: backward error %g", sc, r.BackwardError)
		}
	}
}

// TestFindCoefficientRangeTooWide is the regression for a fuzz crasher
// (testdata/fuzz/FuzzRoots/2b538c978f16a9ef): rescaling underflowed the
// leading coefficient to zero and Find panicked on the lost degree. The
// polynomial has a root near −c0/c1 ≈ −1e-600, below the smallest float64
// (4.9e-324, IEEE 754), so an error is the right answer.
func TestFindCoefficientRangeTooWide(t *testing.T) {
	p := poly.Poly{1.0390625e-300, 1.0078125e+300, 0, -106.25, -0.04, 71875, -0.6875}
	if res, err := Find(p); err == nil {
		t.Fatalf("Find = %v, want an error", res.Roots)
	}
}

// TestFindBackwardErrorOnRescaled is the regression for a fuzz crasher
// (testdata/fuzz/FuzzRoots/c54ff6f715c6d921): when the monic input does not
// fit in float64 the backward error is measured on the rescaled polynomial,
// but it was given the roots already scaled back to z, and came out NaN.
// 1.1875e-300·z³ + z + 1.1875e300 has roots of modulus ~1e200 (|z|³ ≈
// c0/c3 = 1e600): they fit, their monic polynomial does not.
func TestFindBackwardErrorOnRescaled(t *testing.T) {
	res, err := Find(poly.Poly{1.1875e300, 1, 0, 1.1875e-300})
	if err != nil {
		t.Fatal(err)
	}
	if !(res.BackwardError >= 0 && res.BackwardError <= 1e-14) {
		t.Errorf("backward error %v, want ≤ 1e-14", res.BackwardError)
	}
	for _, z := range res.Roots {
		if m := cmplx.Abs(z); math.Abs(math.Log10(m)-200) > 0.01 {
			t.Errorf("root %v: modulus %v, want ~1e200", z, m)
		}
	}
}

// TestFindSubnormalAfterRescale is the regression for a fuzz crasher
// (testdata/fuzz/FuzzRoots/ad0a8cfa18e85fc0): rescaling left the leading
// coefficient subnormal (5e-315), the companion matrix overflowed to NaN
// eigenvalues, and the clustering panicked. The coefficients span 1e-300 to
// 1e300 with a leading 2.5e-265: a clear error is the answer.
func TestFindSubnormalAfterRescale(t *testing.T) {
	p := poly.Poly{-1e+300, 0, -0.0054375000000000005, 0, -1.2265625e-300, 1.20703125e+300, -0.6875, 1, 1, 2.481040258324024e-265}
	res, err := Find(p)
	if err != nil {
		return
	}
	for _, z := range res.Roots {
		if cmplx.IsNaN(z) || cmplx.IsInf(z) {
			t.Fatalf("Find = %v: non-finite root", res.Roots)
		}
	}
}

// A conjugate pair beside a triple root: (z² + 2z + 2)(z + 1)³ has the
// simple roots −1 ± j and the triple root −1 (closed form). The pair's mean
// is the triple root itself, so a cluster radius taken from the second
// Taylor coefficient alone (zero there) would merge the pair into it.
func TestPairBesideTripleRootStaysApart(t *testing.T) {
	r, err := Find(poly.New(2, 8, 13, 11, 5, 1))
	if err != nil {
		t.Fatal(err)
	}
	var simple, triple int
	for _, c := range r.Clusters {
		switch {
		case c.Multiplicity == 3 && cmplx.Abs(c.Value+1) < 1e-6:
			triple++
		case c.Multiplicity == 1 && math.Abs(cmplx.Abs(c.Value+1)-1) < 1e-9 && math.Abs(real(c.Value)+1) < 1e-9:
			simple++
		default:
			t.Errorf("unexpected cluster %v ×%d", c.Value, c.Multiplicity)
		}
	}
	if triple != 1 || simple != 2 {
		t.Errorf("clusters %v: want −1 ×3 and −1 ± j simple", r.Clusters)
	}
}
