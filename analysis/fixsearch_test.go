package analysis

import (
	"os"
	"strings"
	"testing"
)

// The demo pump with more written requirements: the gain margin's safe
// value (kpp = 10.9) leaves 55.8 % overshoot. Every "set kpp" fix, applied,
// must leave the loop stable with every requirement met: checked by
// running the whole check again on the edited file.
func TestGainFixKeepsEveryRequirement(t *testing.T) {
	src, err := os.ReadFile("../testdata/demo/pump.loop")
	if err != nil {
		t.Fatal(err)
	}
	s := strings.Replace(string(src), "  require phase_margin >= 35 deg\n",
		"  require phase_margin >= 35 deg\n  require overshoot <= 25 %\n  require peak_sensitivity <= 6 dB\n", 1)
	r := checkSrc(t, s, nil)
	fixes := 0
	for _, d := range r.Diagnostics {
		for _, fx := range d.Fixes {
			if !strings.HasPrefix(fx.Title, "Set kpp to ") {
				continue
			}
			fixes++
			if !strings.Contains(fx.Title, "meets every requirement of loop line_pressure") {
				t.Errorf("%s: fix %q does not claim every requirement", d.Code, fx.Title)
			}
			out := applyEdits(s, fx.Edits)
			r2 := checkSrc(t, out, nil)
			l := loopNamed(t, r2, "line_pressure")
			if !l.Stable {
				t.Fatalf("fix %q leaves the loop unstable", fx.Title)
			}
			for _, q := range l.Requirements {
				if !q.Met {
					t.Errorf("fix %q: %s %s %g missed (got %s)", fx.Title, q.Metric, q.Op, q.Want, q.GotText)
				}
			}
			for _, d2 := range r2.Diagnostics {
				if d2.Severity == Error {
					t.Errorf("fix %q leaves an error: %s", fx.Title, d2.Message)
				}
			}
		}
	}
	if fixes == 0 {
		t.Fatalf("no set-gain fix: %v", r.Diagnostics)
	}
}

// Where no value meets a requirement, the fix says which one and meets
// the rest. Here char(z) = z(z − 0.9) + 0.1k: the roots' sum is 0.9, so
// the largest radius is at least 0.45 for every k (closed form), and
// "radius <= 0.3" is out of reach; k = 12 is unstable (stable for
// −1 < k < 10) and the fix must restore stability and the gain margin.
func TestGainFixNamesTheRequirementOutOfReach(t *testing.T) {
	src := "sample 1 ms\ngain k = 12\nblock p = 0.1 / (z - 0.9)\nblock d = z^-1\nloop l {\n  forward k p\n  feedback d\n  require gain_margin >= 6 dB\n  require radius <= 0.3\n}\n"
	r := checkSrc(t, src, nil)
	var title string
	for _, d := range r.Diagnostics {
		for _, fx := range d.Fixes {
			if strings.HasPrefix(fx.Title, "Set k to ") {
				title = fx.Title
			}
		}
	}
	if !strings.Contains(title, "no value found meets radius <= 0.3 (loop l)") {
		t.Fatalf("fix title %q does not name the requirement out of reach; diagnostics %v", title, r.Diagnostics)
	}
}

func TestRoundSig(t *testing.T) {
	cases := []struct {
		v    float64
		n    int
		down bool
		want float64
	}{
		{10.987, 3, true, 10.9}, {10.901, 3, false, 11}, {0.34567, 3, true, 0.345}, {-2.345, 3, true, -2.35}, {7, 3, true, 7},
	}
	for _, c := range cases {
		if got := roundSig(c.v, c.n, c.down); got != c.want {
			t.Errorf("roundSig(%g, %d, %v) = %g, want %g", c.v, c.n, c.down, got, c.want)
		}
	}
}
