package analysis

import (
	"fmt"
	"math"
	"math/rand"
	"testing"
)

// randomFactoredCase draws a loop of first- and second-order factor blocks
// (exact binary coefficients, written as such in the .loop file): poles of
// radius up to 1.05, some repeated, zeros anywhere up to 1.5, a gain
// spanning six decades.
func randomFactoredCase(rng *rand.Rand, i int) refCase {
	c := refCase{Name: fmt.Sprintf("random%d", i), T: 1e-3}
	n := 2 + rng.Intn(20)
	pole := func() refBlock {
		r := 1.05 * math.Sqrt(rng.Float64())
		if rng.Intn(2) == 0 {
			return zblock([]float64{1}, []float64{-r * math.Cos(float64(rng.Intn(2))*math.Pi), 1})
		}
		th := rng.Float64() * math.Pi
		return zblock([]float64{1}, []float64{r * r, -2 * r * math.Cos(th), 1})
	}
	deg := 0
	var prev refBlock
	for k := 0; deg < n; k++ {
		b := pole()
		if k > 0 && rng.Intn(4) == 0 {
			b = prev // a repeated factor: a multiple open-loop pole
		}
		if rng.Intn(3) == 0 {
			z := 1.5 * (2*rng.Float64() - 1)
			b.Num = []float64{-z, 1}
		}
		name := fmt.Sprintf("f%d", k)
		c.add(name, b)
		c.Forward = append(c.Forward, name)
		deg += len(b.Den) - 1
		prev = b
	}
	c.add("k", zblock([]float64{math.Pow(10, -4+3*rng.Float64())}, []float64{1}))
	c.Forward = append(c.Forward, "k")
	return c
}

// TestRandomFactoredLoops is the property: on random factored loops, a
// decided verdict agrees with the largest closed-loop radius computed in
// 50-digit arithmetic (structure_ref.py), and a loop left undecided has a
// pole whose bound reaches across the circle's tolerance band.
func TestRandomFactoredLoops(t *testing.T) {
	if testing.Short() {
		t.Skip("mpmath references take a few seconds")
	}
	rng := rand.New(rand.NewSource(20261202))
	var cases []refCase
	for i := 0; i < 60; i++ {
		cases = append(cases, randomFactoredCase(rng, i))
	}
	ref := runStructureRef(t, cases)
	tol := DefaultTolerance
	decided := 0
	for _, c := range cases {
		r := ref[c.Name]
		res := checkSrc(t, c.source(), nil)
		l := loopNamed(t, res, c.Name)
		if !l.OK {
			t.Errorf("%s: not analysed", c.Name)
			continue
		}
		if l.Undecided {
			straddles := false
			for i, p := range l.Poles {
				b := l.PoleBounds[i]
				straddles = straddles || p.Radius+b >= 1-tol && p.Radius-b <= 1+tol
			}
			if !straddles {
				t.Errorf("%s: undecided, yet every pole's bound is clear of the circle", c.Name)
			}
			continue
		}
		decided++
		want := "stable"
		switch {
		case r.RadiusMP > 1+tol:
			want = "unstable"
		case r.RadiusMP >= 1-tol:
			want = "marginal"
		}
		if got := verdictWord(l); got != want {
			t.Errorf("%s: verdict %s, 50-digit radius %.15f (%s); ours %.15f ± %.2g", c.Name, got, r.RadiusMP, want, l.MaxRadius, l.PoleBounds[0])
		}
	}
	t.Logf("%d of %d random loops decided", decided, len(cases))
}
