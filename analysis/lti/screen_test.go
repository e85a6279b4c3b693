package lti

import (
	"math"
	"math/rand"
	"testing"
)

// CannotBeStable is a screen: whenever it says a loop cannot be stable,
// the bounded poles must not decide Stable. Random loops around a random
// stable block, closed with gains spread across their stability limits
// (and repeated open-loop poles, whose closed-loop poles cluster), with
// both feedback signs. The screen must also let most stable loops through
// (it would otherwise hide nothing but cost a check), and reject most
// unstable ones (its point).
func TestCannotBeStableScreensOnlyUnstable(t *testing.T) {
	const tol = 1e-6
	rng := rand.New(rand.NewSource(31))
	var stable, passed, unstable, rejected int
	for trial := 0; trial < 3000; trial++ {
		f := randomStable(rng)
		f.Gain *= math.Pow(10, 2*rng.Float64()-1)
		l := NewLoop([]Factored{f}, nil, trial%3 == 0)
		ps, err := l.Poles()
		if err != nil {
			continue
		}
		v, _ := Decide(ps, tol)
		screened := l.CannotBeStable(tol)
		if screened && v == Stable {
			t.Fatalf("trial %d: screened out, yet the bounded poles decide stable: %v", trial, ps)
		}
		switch {
		case v == Stable:
			stable++
			if !screened {
				passed++
			}
		case v == Unstable:
			unstable++
			if screened {
				rejected++
			}
		}
	}
	if stable < 300 || unstable < 300 {
		t.Fatalf("%d stable and %d unstable loops: the corpus does not exercise the screen", stable, unstable)
	}
	if passed < stable*9/10 || rejected < unstable*9/10 {
		t.Errorf("the screen passed %d of %d stable loops and rejected %d of %d unstable ones", passed, stable, rejected, unstable)
	}
}
