package gainlimit

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

func TestSchurStableKnown(t *testing.T) {
	cases := []struct {
		name string
		p    poly.Poly
		want bool
	}{
		// z² − z + 0.5: roots 0.5 ± 0.5j (quadratic formula), radius √0.5.
		{"z^2-z+0.5", poly.New(0.5, -1, 1), true},
		// (z − 2)(z − 0.5) = z² − 2.5z + 1: one root outside.
		{"z^2-2.5z+1", poly.New(1, -2.5, 1), false},
		// z − 1: the integrator's pole, on the circle.
		{"z-1", poly.New(-1, 1), false},
		// z² + 1: roots ±j, on the circle.
		{"z^2+1", poly.New(1, 0, 1), false},
		// (z − 0.5)³ = z³ − 1.5z² + 0.75z − 0.125: a triple root inside.
		{"(z-0.5)^3", poly.New(-0.125, 0.75, -1.5, 1), true},
		// z^6: all roots at 0.
		{"z^6", poly.Monomial(1, 6), true},
		// Nonzero constant: no roots at all.
		{"const", poly.New(3), true},
		// Scaling does not move roots, even near the float64 limits.
		{"1e300(z^2-z+0.5)", poly.New(0.5e300, -1e300, 1e300), true},
		{"1e-300(z^2-z+0.5)", poly.New(0.5e-300, -1e-300, 1e-300), true},
		// Root at radius 1 − 1e-6 is still inside; 1 + 1e-6 is not.
		{"z-(1-1e-6)", poly.New(-(1 - 1e-6), 1), true},
		{"z+(1+1e-6)", poly.New(1+1e-6, 1), false},
	}
	for _, c := range cases {
		got, err := SchurStable(c.p)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if got != c.want {
			t.Errorf("%s: SchurStable = %v, want %v", c.name, got, c.want)
		}
	}
}

func TestSchurStableErrors(t *testing.T) {
	for _, p := range []poly.Poly{nil, {0, 0}, {1, math.NaN()}, {math.Inf(1), 1}} {
		if _, err := SchurStable(p); err == nil {
			t.Errorf("SchurStable(%v): no error", p)
		}
	}
}

// TestSchurStableJuryTriangle checks the second-order Jury conditions: z² +
// a1·z + a0 has both roots inside the unit circle iff |a0| < 1,
// 1 + a1 + a0 > 0 and 1 − a1 + a0 > 0 (the stability triangle; Jury's test
// for n = 2, from memory). Points within 1e-6 of an edge are skipped.
func TestSchurStableJuryTriangle(t *testing.T) {
	for a1 := -2.5; a1 <= 2.5; a1 += 0.0625 {
		for a0 := -1.5; a0 <= 1.5; a0 += 0.0625 {
			e := math.Min(math.Min(1-math.Abs(a0), 1+a1+a0), 1-a1+a0)
			if math.Abs(e) < 1e-6 {
				continue
			}
			got, err := SchurStable(poly.New(a0, a1, 1))
			if err != nil {
				t.Fatal(err)
			}
			if got != (e > 0) {
				t.Errorf("z²%+gz%+g: SchurStable = %v, triangle says %v", a1, a0, got, e > 0)
			}
		}
	}
}

// TestSchurStableAgainstEigen compares with the largest root radius from
// gonum's eigenvalues of the companion matrix, for random real polynomials
// of degree 1..10 built from roots (identity: the roots are known).
func TestSchurStableAgainstEigen(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 400; trial++ {
		n := 1 + rng.IntN(10)
		var rs []complex128
		for len(rs) < n {
			r := 0.2 + 1.0*rng.Float64()
			if len(rs)+2 <= n && rng.IntN(2) == 0 {
				z := cmplx.Rect(r, math.Pi*rng.Float64())
				rs = append(rs, z, cmplx.Conj(z))
			} else {
				rs = append(rs, complex(r*float64(1-2*rng.IntN(2)), 0))
			}
		}
		p := poly.FromRoots(rs).Scale(0.1 + 10*rng.Float64())
		eig, ok := roots.Companion(p)
		if !ok {
			t.Fatal("eigen failed")
		}
		maxR := 0.0
		for _, r := range eig {
			maxR = math.Max(maxR, cmplx.Abs(r))
		}
		if math.Abs(maxR-1) < 1e-5 {
			continue
		}
		got, err := SchurStable(p)
		if err != nil {
			t.Fatal(err)
		}
		if got != (maxR < 1) {
			t.Errorf("roots %v: SchurStable = %v, max radius %g", rs, got, maxR)
		}
	}
}

func near(t *testing.T, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil {
		t.Errorf("%s = nil, want %g", what, want)
		return
	}
	if math.Abs(*got-want) > tol*math.Max(1, math.Abs(want)) {
		t.Errorf("%s = %.15g, want %.15g (tol %g)", what, *got, want, tol)
	}
}

// TestAffineFirstOrder: L = K/(z − a) with negative feedback gives
// 1 + L = 0 ⇔ z − a + K = 0, a single pole z = a − K; |a − K| < 1 ⇔
// a − 1 < K < a + 1 (derivation here).
func TestAffineFirstOrder(t *testing.T) {
	for _, a := range []float64{0.5, 0.9, -0.3, 1.2} {
		iv, err := Affine(poly.New(-a, 1), poly.New(1), a)
		if err != nil {
			t.Fatal(err)
		}
		if !iv.Found || !iv.ContainsCurrent || !iv.Exact {
			t.Errorf("a=%g: %+v", a, iv)
		}
		near(t, "Lo", iv.Lo, a-1, 1e-12)
		near(t, "Hi", iv.Hi, a+1, 1e-12)

		// From an unstable k0 the nearest stable interval is the same one.
		iv, err = Affine(poly.New(-a, 1), poly.New(1), a+5)
		if err != nil {
			t.Fatal(err)
		}
		if !iv.Found || iv.ContainsCurrent {
			t.Errorf("a=%g, k0 unstable: %+v", a, iv)
		}
		near(t, "Lo", iv.Lo, a-1, 1e-12)
		near(t, "Hi", iv.Hi, a+1, 1e-12)
	}
}

// TestAffinePureDelay: L = K z^-d: zᵈ + K = 0, roots of radius |K|^(1/d),
// stable iff −1 < K < 1 (derivation here).
func TestAffinePureDelay(t *testing.T) {
	for d := 1; d <= 6; d++ {
		iv, err := Affine(poly.Monomial(1, d), poly.New(1), 0.3)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "Lo", iv.Lo, -1, 1e-9)
		near(t, "Hi", iv.Hi, 1, 1e-9)
		n, err := Numeric(func(k float64) (poly.Poly, error) { return poly.Monomial(1, d).Add(poly.New(k)), nil }, 0.3)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "numeric Lo", n.Lo, -1, 1e-8)
		near(t, "numeric Hi", n.Hi, 1, 1e-8)
	}
}

// TestAffineJuryTriangle: c(k) = z² + a1·z + k; from the Jury triangle
// (from memory) the stable k satisfy |k| < 1, k > −1 − a1, k > a1 − 1:
// k ∈ (|a1| − 1, 1) for |a1| < 2.
func TestAffineJuryTriangle(t *testing.T) {
	for _, a1 := range []float64{0, 0.5, -1.2, 1.9} {
		iv, err := Affine(poly.New(0, a1, 1), poly.New(1), (math.Abs(a1)-1+1)/2)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "Lo", iv.Lo, math.Abs(a1)-1, 1e-9)
		near(t, "Hi", iv.Hi, 1, 1e-9)
	}
}

// TestAffineDegreeDrop: c(k) = k·z + (z − 0.5)... written as a = z − 0.5,
// b = z: c(k) = (1 + k)z − 0.5, one root 0.5/(1 + k); |0.5/(1+k)| < 1 ⇔
// k > −0.5 or k < −1.5. At k = −1 the degree drops (root at infinity) —
// inside the unstable gap, so the interval around 0 is (−0.5, ∞).
func TestAffineDegreeDrop(t *testing.T) {
	iv, err := Affine(poly.New(-0.5, 1), poly.New(0, 1), 0)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Lo", iv.Lo, -0.5, 1e-12)
	if iv.Hi != nil {
		t.Errorf("Hi = %v, want unbounded", *iv.Hi)
	}
	iv, err = Affine(poly.New(-0.5, 1), poly.New(0, 1), -3)
	if err != nil {
		t.Fatal(err)
	}
	if iv.Lo != nil || !iv.ContainsCurrent {
		t.Errorf("k0=-3: %+v", iv)
	}
	near(t, "Hi", iv.Hi, -1.5, 1e-12)
	// k0 = −1 (degree drop, unstable): the nearest stable interval is
	// (−0.5, ∞) at distance 0.5 (the other, (−∞, −1.5), is also 0.5 away;
	// either is acceptable, but it must not contain −1).
	iv, err = Affine(poly.New(-0.5, 1), poly.New(0, 1), -1)
	if err != nil {
		t.Fatal(err)
	}
	if iv.ContainsCurrent || !iv.Found {
		t.Errorf("k0=-1: %+v", iv)
	}
}

// TestAffineNeverStable: a common root at z = 2 stays for every k.
func TestAffineNeverStable(t *testing.T) {
	g := poly.New(-2, 1)
	iv, err := Affine(g.Mul(poly.New(-0.5, 1)), g, 0)
	if err != nil {
		t.Fatal(err)
	}
	if iv.Found || iv.Lo != nil || iv.Hi != nil {
		t.Errorf("%+v", iv)
	}
}

func TestAffineErrors(t *testing.T) {
	if _, err := Affine(poly.New(1, 1), nil, 0); err == nil {
		t.Error("b = 0: no error")
	}
	if _, err := Affine(poly.New(1, math.NaN()), poly.New(1), 0); err == nil {
		t.Error("NaN: no error")
	}
	if _, err := Affine(poly.New(1, 1), poly.New(1), math.Inf(1)); err == nil {
		t.Error("k0 = Inf: no error")
	}
}

// TestAffineRandomAgainstEigenAndNumeric: for random a, b the ends of the
// affine interval must be where gonum's companion eigenvalues of c(k) reach
// radius 1 (within 1e-6), and Numeric must find the same ends.
func TestAffineRandomAgainstEigenAndNumeric(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	checked := 0
	for trial := 0; trial < 150; trial++ {
		n := 1 + rng.IntN(6)
		var rs []complex128
		for len(rs) < n {
			r := 0.3 + 0.65*rng.Float64()
			if len(rs)+2 <= n && rng.IntN(2) == 0 {
				z := cmplx.Rect(r, math.Pi*rng.Float64())
				rs = append(rs, z, cmplx.Conj(z))
			} else {
				rs = append(rs, complex(r*float64(1-2*rng.IntN(2)), 0))
			}
		}
		a := poly.FromRoots(rs) // c(0) = a is stable
		m := rng.IntN(n)
		b := make(poly.Poly, m+1)
		for i := range b {
			b[i] = rng.NormFloat64()
		}
		iv, err := Affine(a, b, 0)
		if err != nil {
			t.Fatal(err)
		}
		if !iv.ContainsCurrent || !iv.Exact {
			t.Fatalf("trial %d: %+v", trial, iv)
		}
		num, err := Numeric(func(k float64) (poly.Poly, error) { return a.Add(b.Scale(k)), nil }, 0)
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range []struct {
			name   string
			ex, nu *float64
		}{{"Lo", iv.Lo, num.Lo}, {"Hi", iv.Hi, num.Hi}} {
			if e.ex == nil {
				if e.nu != nil {
					t.Errorf("trial %d %s: affine unbounded, numeric %g", trial, e.name, *e.nu)
				}
				continue
			}
			near(t, e.name+" numeric", e.nu, *e.ex, 1e-7)
			rs, _ := roots.Companion(a.Add(b.Scale(*e.ex)))
			maxR := 0.0
			for _, r := range rs {
				maxR = math.Max(maxR, cmplx.Abs(r))
			}
			if math.Abs(maxR-1) > 1e-6 {
				t.Errorf("trial %d %s=%g: max radius %g, want 1", trial, e.name, *e.ex, maxR)
			}
			checked++
		}
	}
	if checked < 100 {
		t.Errorf("only %d ends checked", checked)
	}
}

// TestNumericNonlinear: c(k) = z² − k·z + k²/2. Jury triangle (from
// memory): |k²/2| < 1, 1 − k + k²/2 > 0 and 1 + k + k²/2 > 0 (both always
// true), so the stable gains are |k| < √2.
func TestNumericNonlinear(t *testing.T) {
	c := func(k float64) (poly.Poly, error) { return poly.New(k*k/2, -k, 1), nil }
	iv, err := Numeric(c, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	if !iv.ContainsCurrent || iv.Exact {
		t.Errorf("%+v", iv)
	}
	near(t, "Lo", iv.Lo, -math.Sqrt2, 1e-8)
	near(t, "Hi", iv.Hi, math.Sqrt2, 1e-8)

	iv, err = Numeric(c, 5)
	if err != nil {
		t.Fatal(err)
	}
	if !iv.Found || iv.ContainsCurrent {
		t.Errorf("k0=5: %+v", iv)
	}
	near(t, "Lo", iv.Lo, -math.Sqrt2, 1e-8)
	near(t, "Hi", iv.Hi, math.Sqrt2, 1e-8)

	never := func(k float64) (poly.Poly, error) { return poly.New(-2, 1), nil }
	iv, err = Numeric(never, 1)
	if err != nil || iv.Found {
		t.Errorf("never stable: %+v, %v", iv, err)
	}
	always := func(k float64) (poly.Poly, error) { return poly.New(0.5, 1), nil }
	iv, err = Numeric(always, 1)
	if err != nil || !iv.Found || iv.Lo != nil || iv.Hi != nil {
		t.Errorf("always stable: %+v, %v", iv, err)
	}
}

func TestLargestMeeting(t *testing.T) {
	k, ok := LargestMeeting(func(k float64) bool { return k*k <= 2 }, 0, 10)
	if !ok || math.Abs(k-math.Sqrt2) > 1e-9*math.Sqrt2 || k*k > 2 {
		t.Errorf("got %.15g, %v; want √2", k, ok)
	}
	if k, ok := LargestMeeting(func(k float64) bool { return true }, 1, 3); !ok || k != 3 {
		t.Errorf("always ok: %g %v", k, ok)
	}
	if _, ok := LargestMeeting(func(k float64) bool { return false }, 1, 3); ok {
		t.Error("never ok: reported ok")
	}
	if _, ok := LargestMeeting(func(k float64) bool { return true }, 3, 1); ok {
		t.Error("lo > hi: reported ok")
	}
	if _, ok := LargestMeeting(func(k float64) bool { return true }, math.NaN(), 1); ok {
		t.Error("NaN: reported ok")
	}
}

// TestCircleAngles: c(k) = zⁿ + k has a root on the unit circle exactly at
// θ = mπ/n (m = 0 … n), where zⁿ is real (sin nθ = 0, trigonometry). Both
// ways of finding the angles, the reduced polynomial in cos θ (n up to
// chebyshevMaxDegree) and the degree-2n companion beyond, must find every
// inner angle.
func TestCircleAngles(t *testing.T) {
	for n := 1; n <= chebyshevMaxDegree+4; n++ {
		got := circleAngles(poly.Monomial(1, n), poly.New(1), n)
		for m := 1; m < n; m++ {
			want := float64(m) * math.Pi / float64(n)
			found := false
			for _, th := range got {
				found = found || math.Abs(th-want) < 1e-9
			}
			if !found {
				t.Errorf("n = %d: angle %d·π/%d = %.12f not among %v", n, m, n, want, got)
			}
		}
		for _, th := range got {
			m := th * float64(n) / math.Pi
			if math.Abs(m-math.Round(m)) > 1e-6 {
				t.Errorf("n = %d: angle %v is not a multiple of π/%d", n, th, n)
			}
		}
	}
}
