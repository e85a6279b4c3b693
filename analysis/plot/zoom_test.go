package plot

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// The 1 kHz conveyor drive of the demo puts every pole near z = 1: on the
// full view they merge into one blot. The zoom panel must show each
// closed-loop pole of the crowd at its place, apart from the others by
// more than a marker, and its title must give the scale.
func TestZoomSeparatesCrowdedPoles(t *testing.T) {
	res := checkFile(t, "../../testdata/demo/conveyor.loop")
	l := loopNamed(t, res, "belt_speed")
	f, doc, _ := drawn(t, res, l)
	if f.Zoom == nil {
		t.Fatal("no zoom panel for a 1 kHz loop whose poles crowd near z = 1")
	}
	var want []complex128
	for _, p := range l.Poles {
		if cmplx.Abs(p.Z-f.zoom.center) < f.zoom.halfSpan {
			want = append(want, p.Z)
		}
	}
	if len(want) < 2 {
		t.Fatalf("zoom around %v ±%g holds %d closed-loop poles", f.zoom.center, f.zoom.halfSpan, len(want))
	}
	got := markersAt(doc, hex(colClosedPole), f.zoomData, true)
	if len(got) != len(want) {
		t.Fatalf("%d closed-loop markers in the zoom, want %d", len(got), len(want))
	}
	for _, z := range want {
		x, y := toCanvas(f.Zoom, f.zoomData, real(z), imag(z))
		found := false
		for _, g := range got {
			found = found || math.Hypot(g[0]-x, g[1]-y) <= pixelTol
		}
		if !found {
			t.Errorf("no marker at z = %v in the zoom", z)
		}
	}
	for i := range got {
		for j := i + 1; j < len(got); j++ {
			if d := math.Hypot(got[i][0]-got[j][0], got[i][1]-got[j][1]); d < 3*markerSize {
				t.Errorf("zoomed markers %v and %v only %.1f pt apart", got[i], got[j], d)
			}
		}
	}
	if !hasText(doc, f.Zoom.Title.Text) || !strings.HasPrefix(f.Zoom.Title.Text, "zoom ×") {
		t.Errorf("zoom title %q not drawn or without its scale", f.Zoom.Title.Text)
	}
	if !hasText(doc, "region of the zoom") {
		t.Error("the full view does not mark the zoomed region")
	}
}

// A loop whose poles are apart on the full view gets no zoom.
func TestNoZoomWhenPolesAreApart(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	f, _, _ := drawn(t, res, loopNamed(t, res, "arm_wobble"))
	if f.Zoom != nil {
		t.Errorf("zoom panel %q for poles far apart", f.Zoom.Title.Text)
	}
}

// An unstable loop's step panel shows the growing response, clipped to
// its view, under the unstable title.
func TestUnstableStepShowsTheRunaway(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	l := loopNamed(t, res, "arm_wobble")
	f, doc, _ := drawn(t, res, l)
	if !hasText(doc, UnstableStepText) {
		t.Fatalf("no %q title", UnstableStepText)
	}
	var curve [][2]float64
	for _, p := range doc.paths {
		if pts := p.points(); p.stroke == hex(colViolation) && len(pts) > 50 && inside(f.stepData, pts[0][0], pts[0][1]) {
			curve = pts
		}
	}
	if curve == nil {
		t.Fatal("no response drawn in the step panel")
	}
	top := float64(f.stepData.Max.Y)
	bottom := float64(f.stepData.Min.Y)
	clipped := 0
	for _, p := range curve {
		if p[1] > top+pixelTol || p[1] < bottom-pixelTol {
			t.Fatalf("point %v leaves the panel (%g..%g)", p, bottom, top)
		}
		_, y := toData(f.Step, f.stepData, p[0], p[1])
		if math.Abs(math.Abs(y)-f.Step.Y.Max/1.05) < 1e-3*f.Step.Y.Max {
			clipped++
		}
	}
	if clipped == 0 {
		t.Error("a response growing like 1.45^k is never clipped in its view")
	}
}
