package plot

import (
	"strings"
	"testing"
)

// One display rule for figures within the tolerance of zero, everywhere:
// the demo's pan_rate loop sits on the circle, and its phase and delay
// margins come out as 7.9e-07° and 8.8e-12 s. The page's figures must say
// 0, as the command line's loop summary does.
func TestPageShowsZeroFiguresAsTheCommandLine(t *testing.T) {
	res := checkFile(t, "../../testdata/demo/gimbal.loop")
	l := loopNamed(t, res, "pan_rate")
	if pm := *l.Margins.PhaseMarginDeg; pm == 0 || pm > 1e-6 {
		t.Fatalf("the case needs a phase margin that is tiny but not 0, got %g", pm)
	}
	rows := map[string]string{}
	for _, r := range figureRows(l) {
		rows[r[0]] = r[1]
	}
	for name, want := range map[string]string{"Phase margin": "0° at", "Delay margin": "0 s (0 samples)", "Gain margin": "0 dB at"} {
		if !strings.HasPrefix(rows[name], want) {
			t.Errorf("page %s = %q, want it to start %q", name, rows[name], want)
		}
	}
	if s := l.Summary(); !strings.Contains(s, "phase margin 0° at") || !strings.Contains(s, "delay margin 0 s (0 samples)") {
		t.Errorf("command-line summary %q", s)
	}
	page, err := Page(res)
	if err != nil {
		t.Fatal(err)
	}
	for _, bad := range []string{"e-07°", "e-06 µs", "e-12"} {
		if strings.Contains(string(page), bad) {
			t.Errorf("the page prints %q", bad)
		}
	}
}
