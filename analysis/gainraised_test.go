package analysis

import (
	"context"
	"fmt"
	"math"
	"math/rand"
	"strings"
	"testing"
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
