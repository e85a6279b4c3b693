package analysis

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand"
	"strings"
	"testing"

	"ringside/analysis/poly"
)

// TestRaisedLoopBoundsTheMargin checks the fact the safe-value search
// relies on (raisedLoops): a stable loop whose loop gain, raised by r dB,
// gives an unstable loop has a gain margin below r dB. (Were every phase
// crossing's margin outside (0, r) dB, no factor in (1, 10^(r/20)) could
// put a closed-loop pole on the circle: Neimark's D-decomposition of the
// loop-gain axis.) The loops are PI controllers around second- and
// fourth-order plants (a lightly damped resonance gives several phase
// crossings), at invented gains spread over stable and unstable values;
// the raised copy multiplies the forward path by a constant block.
func TestRaisedLoopBoundsTheMargin(t *testing.T) {
	const r = 6.0 // dB, the default requirement
	rng := rand.New(rand.NewSource(7))
	var b strings.Builder
	fmt.Fprintf(&b, "sample 1 ms\nblock d = z^-1\nblock up = %.17g\n", math.Pow(10, r/20))
	const n = 150
	for i := 0; i < n; i++ {
		wn, zeta := 5+60*rng.Float64(), 0.1+0.9*rng.Float64()
		plant := fmt.Sprintf("%.6g / (s^2 + %.6gs + %.6g)", wn*wn, 2*zeta*wn, wn*wn)
		if i%2 == 1 {
			w2, z2 := 80+300*rng.Float64(), 0.01+0.1*rng.Float64()
			plant = fmt.Sprintf("%.6g * %.6g / ((s^2 + %.6gs + %.6g)(s^2 + %.6gs + %.6g))", wn*wn, w2*w2, 2*zeta*wn, wn*wn, 2*z2*w2, w2*w2)
		}
		fmt.Fprintf(&b, "block c%d = %.6g + %.6g * 0.001 * z / (z - 1)\n", i, 0.1+8*rng.Float64(), 1+80*rng.Float64())
		fmt.Fprintf(&b, "block p%d = %s via zoh\n", i, plant)
		fmt.Fprintf(&b, "loop a%d {\n  forward c%d p%d\n  feedback d\n}\n", i, i, i)
		fmt.Fprintf(&b, "loop r%d {\n  forward c%d p%d up\n  feedback d\n}\n", i, i, i)
	}
	opt := DefaultOptions()
	opt.NoStepSamples = true
	res := Check(context.Background(), "/t/raised.loop", []byte(b.String()), Env{Roots: []string{"/t"}, Options: opt})
	loops := map[string]*Loop{}
	for _, l := range res.Loops {
		loops[l.Name] = l
	}
	exercised := 0
	for i := 0; i < n; i++ {
		a, up := loops[fmt.Sprintf("a%d", i)], loops[fmt.Sprintf("r%d", i)]
		if a == nil || up == nil || !a.OK || !up.OK {
			t.Fatalf("loop pair %d not analysed", i)
		}
		if !a.Stable || up.Stable || up.Marginal || up.Undecided {
			continue
		}
		exercised++
		if gm := a.Margins.GainMarginDB; gm == nil || *gm >= r {
			t.Errorf("loop a%d: stable, unstable when raised by %g dB, yet gain margin %v dB", i, r, fmtPtr(gm))
		}
	}
	if exercised < n/10 {
		t.Fatalf("only %d of %d pairs are stable and unstable when raised: the corpus does not exercise the claim", exercised, n)
	}
}

// TestSafeValueWithClusteredPoles: the plant's double pole near z = 1,
// squared in the second loop beside the controller's integrator, puts five
// closed-loop poles close together, where the expanded characteristic
// polynomial cannot place its roots. The current value of ki is unstable;
// values below it keep 6 dB in both loops, so a safe value exists, and the
// loops checked again at it (rounded down, as the fix offers it) keep the
// margin.
func TestSafeValueWithClusteredPoles(t *testing.T) {
	src := `sample 1 ms
block d = z^-1
gain kp = 0.0794606
gain ki = %s
block c = kp + ki * 0.001 * z / (z - 1)
block p = 1388.9 * (s/3.71908 + 1)^2 / ((s + 0.557862)^2 (s + 11.1572)) via zoh
loop one {
  forward c p
  feedback d
}
loop two {
  forward c p p
  feedback d
}
`
	opt := DefaultOptions()
	opt.NoStepSamples = true
	check := func(ki string) *Result {
		return Check(context.Background(), "/t/cluster.loop", []byte(fmt.Sprintf(src, ki)), Env{Roots: []string{"/t"}, Options: opt})
	}
	res := check("2.62577")
	lim := res.Gains[1].Limits
	if res.Gains[1].Name != "ki" || lim == nil || lim.SafeMax == nil {
		t.Fatalf("no safe value for ki: %+v", lim)
	}
	v := roundDown(*lim.SafeMax)
	for _, l := range check(fmtNum(v)).Loops {
		if gm := l.Margins.GainMarginDB; !l.Stable || gm == nil || *gm < 6 {
			t.Errorf("ki = %s: loop %s stable %v, gain margin %v dB", fmtNum(v), l.Name, l.Stable, fmtPtr(gm))
		}
	}
}

// fromRoots expands Π(z − r) over real roots and Π(z² − 2·Re c·z + |c|²)
// over complex pairs c, c̄.
func fromRoots(reals []float64, pairs []complex128) poly.Poly {
	p := poly.New(1)
	for _, r := range reals {
		p = p.Mul(poly.New(-r, 1))
	}
	for _, c := range pairs {
		p = p.Mul(poly.New(cmplx.Abs(c)*cmplx.Abs(c), -2*real(c), 1))
	}
	return p
}

// TestRootCertifiedOutside: polynomials built from known roots. A root
// well outside and apart from the others is certified; roots inside, on
// the circle within the tolerance, or in a cluster whose expanded
// polynomial scatters them across the circle ((z − 0.9995)⁵: computed
// roots reach radius 1.0002) are never claimed outside. Over random root
// sets the certificate never claims a root outside when none is.
func TestRootCertifiedOutside(t *testing.T) {
	const tol = 1e-6
	e := func(p poly.Poly) float64 { return 1e-13 * maxAbs(p) }
	cases := []struct {
		name string
		p    poly.Poly
		want bool
	}{
		{"one root at 1.1", fromRoots([]float64{0.5, 0.9, 1.1}, nil), true},
		{"a pair at radius 1.05", fromRoots([]float64{0.2}, []complex128{complex(0.6, 0.84)}), true},
		{"all inside", fromRoots([]float64{0.5, 0.9, 0.99}, []complex128{complex(0.3, 0.9)}), false},
		{"within the tolerance", fromRoots([]float64{1 + 1e-7, 0.3}, nil), false},
		{"five-fold cluster inside", fromRoots([]float64{0.9995, 0.9995, 0.9995, 0.9995, 0.9995}, nil), false},
	}
	for _, c := range cases {
		if got := rootCertifiedOutside(c.p, e(c.p), tol, false); got != c.want {
			t.Errorf("%s: certified outside %v, want %v", c.name, got, c.want)
		}
		// An auxiliary loop's root needs only be outside by twice its
		// bound: the one within the tolerance now counts, the cluster not.
		want := c.want || c.name == "within the tolerance"
		if got := rootCertifiedOutside(c.p, e(c.p), tol, true); got != want {
			t.Errorf("%s (auxiliary): certified outside %v, want %v", c.name, got, want)
		}
	}
	rng := rand.New(rand.NewSource(11))
	claimed := 0
	for trial := 0; trial < 2000; trial++ {
		re, pairs, rmax := randomRootSet(rng, 0.9, 0.2)
		outside, beyond := rmax > 1+tol, rmax > 1 // a root beyond 1 + tol; beyond 1
		p := fromRoots(re, pairs)
		aux := trial%2 == 0
		if rootCertifiedOutside(p, e(p), tol, aux) {
			claimed++
			if !outside && !(aux && beyond) {
				t.Fatalf("roots %v and pairs %v: no root outside, yet one was certified", re, pairs)
			}
		}
	}
	if claimed < 100 {
		t.Fatalf("only %d certificates in 2000 trials: the test does not exercise the claim", claimed)
	}
}

// TestRootsCertifiedWithin: the converse certificate unstableAt relies on.
// Roots well inside and apart are certified within; a root outside, a
// five-fold cluster (its computed roots scatter across the circle), or a
// polynomial short of its degree (a root gone to infinity) are not. Over
// random root sets the certificate never holds when a root lies beyond
// 1 + tol. (A cluster claims nothing even well inside: the first-order
// bounds do not hold there, and the eigenvalues decide instead.)
func TestRootsCertifiedWithin(t *testing.T) {
	const tol = 1e-6
	e := func(p poly.Poly) float64 { return 1e-13 * maxAbs(p) }
	cases := []struct {
		name   string
		p      poly.Poly
		degree int
		want   bool
	}{
		{"all inside", fromRoots([]float64{0.5, 0.9, 0.99}, []complex128{complex(0.3, 0.9)}), 5, true},
		{"one root at 1.1", fromRoots([]float64{0.5, 0.9, 1.1}, nil), 3, false},
		{"within the tolerance", fromRoots([]float64{1 + 1e-7, 0.3}, nil), 2, true},
		{"five-fold cluster inside", fromRoots([]float64{0.9995, 0.9995, 0.9995, 0.9995, 0.9995}, nil), 5, false},
		{"three-fold cluster well inside", fromRoots([]float64{0.9, 0.9, 0.9}, nil), 3, false},
		{"a degree short", fromRoots([]float64{0.5, 0.9}, nil), 3, false},
	}
	for _, c := range cases {
		if got := rootsCertifiedWithin(c.p, c.degree, e(c.p), tol); got != c.want {
			t.Errorf("%s: certified within %v, want %v", c.name, got, c.want)
		}
	}
	rng := rand.New(rand.NewSource(12))
	certified := 0
	for trial := 0; trial < 2000; trial++ {
		re, pairs, rmax := randomRootSet(rng, 0.8, 0.22)
		outside := rmax > 1+tol
		p := fromRoots(re, pairs)
		if rootsCertifiedWithin(p, p.Degree(), e(p), tol) {
			certified++
			if outside {
				t.Fatalf("roots %v and pairs %v: a root is outside, yet all were certified within", re, pairs)
			}
		}
	}
	if certified < 100 {
		t.Fatalf("only %d certificates in 2000 trials: the test does not exercise the claim", certified)
	}
}

// randomRootSet draws one to four roots of radius lo … lo + width (a third
// of them instead near 1, 0.999 … 1.001: clusters), each a real root of
// either sign or a complex pair's upper member; rmax is the largest radius.
func randomRootSet(rng *rand.Rand, lo, width float64) (re []float64, pairs []complex128, rmax float64) {
	for i := 0; i < 1+rng.Intn(4); i++ {
		r := lo + width*rng.Float64()
		if rng.Intn(3) == 0 {
			r = 0.999 + 0.002*rng.Float64()
		}
		if rng.Intn(2) == 0 {
			pairs = append(pairs, cmplx.Rect(r, rng.Float64()*3))
		} else {
			re = append(re, r*float64(1-2*rng.Intn(2)))
		}
		rmax = max(rmax, r)
	}
	return re, pairs, rmax
}
