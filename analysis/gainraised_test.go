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
