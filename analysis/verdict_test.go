package analysis

import (
	"strings"
	"testing"

	"ringside/analysis/pole"
)

// A pole just beyond radius 1 but within the tolerance is on the circle:
// every wording says "not stable", none counts it as outside (the page once
// counted radius > 1 while the diagnostic counted radius > 1 + tolerance).
func TestVerdictWordsAgree(t *testing.T) {
	tol := DefaultTolerance
	on := pole.Describe(complex(1+tol/2, 0), 1e-3, tol)
	out := pole.Describe(complex(1.01, 0), 1e-3, tol)
	marginal := &Loop{Name: "m", OK: true, Marginal: true, Poles: []pole.Info{on}, MaxRadius: on.Radius}
	if n := marginal.PolesOutside(); n != 0 {
		t.Errorf("pole at 1 + tol/2 counted outside (%d)", n)
	}
	for _, s := range []string{marginal.VerdictWord(), marginal.Verdict(), marginal.Summary()} {
		if !strings.Contains(s, "NOT STABLE (pole on the unit circle)") {
			t.Errorf("marginal loop worded %q", s)
		}
	}
	unstable := &Loop{Name: "u", OK: true, Poles: []pole.Info{out, on}, MaxRadius: out.Radius}
	if n := unstable.PolesOutside(); n != 1 {
		t.Errorf("%d poles outside, want 1", n)
	}
	if r := unstable.VerdictReason(); !strings.HasPrefix(r, "1 closed-loop pole(s) lie outside") {
		t.Errorf("reason %q", r)
	}
	for _, s := range []string{unstable.Verdict(), unstable.Summary()} {
		if !strings.Contains(s, "UNSTABLE") {
			t.Errorf("unstable loop worded %q", s)
		}
	}
}
