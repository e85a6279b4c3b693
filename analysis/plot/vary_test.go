package plot

import "testing"

// TestVaryRegionAndEnvelope: for the dosing demo (two varying gains) the
// z-plane carries the region of closed-loop poles over the range (one
// marker per pole kept, in the range colour, with its legend) and the Bode
// panel the envelope (a lower and an upper curve on each of |L| and arg L).
func TestVaryRegionAndEnvelope(t *testing.T) {
	res := checkFile(t, "../../testdata/demo/dosing.loop")
	l := loopNamed(t, res, "residual")
	if l.Robust == nil || len(l.Robust.Region) == 0 || len(l.Robust.Family) == 0 {
		t.Fatalf("no range data: %+v", l.Robust)
	}
	_, doc, _ := drawn(t, res, l)
	if !hasText(doc, "poles over the vary range") {
		t.Errorf("legend entry missing; texts %q", doc.texts)
	}
	markers, curves := 0, 0
	for _, p := range doc.paths {
		if p.fill == hex(colRange) {
			markers++
		}
		if p.stroke == hex(colRange) && p.fill == "" {
			curves++
		}
	}
	if markers < len(l.Robust.Region) {
		t.Errorf("%d range markers for %d poles", markers, len(l.Robust.Region))
	}
	if curves < 4 {
		t.Errorf("%d envelope curves, want at least 4 (lower and upper, magnitude and phase)", curves)
	}
}
