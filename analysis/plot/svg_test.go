package plot

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
	"ringside/analysis/pole"
)

// pixelTol is how close, in points (1 pt = 1 SVG user unit here), a drawn
// mark must be to where the plot's data-to-canvas transform puts it. The
// SVG writer prints 5 significant digits (≤ 0.01 pt at these sizes).
const pixelTol = 1.0

func checkFile(t *testing.T, path string) *analysis.Result {
	t.Helper()
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return analysis.Check(context.Background(), path, src, analysis.Env{})
}

func loopNamed(t *testing.T, res *analysis.Result, name string) *analysis.Loop {
	t.Helper()
	for _, l := range res.Loops {
		if l.Name == name {
			if !l.OK {
				t.Fatalf("loop %s not analysed", name)
			}
			return l
		}
	}
	t.Fatalf("no loop %s", name)
	return nil
}

// svgPath is a <path> of the drawing: its points in canvas coordinates
// (the root group flips y so the path data are canvas points as drawn).
type svgPath struct {
	cmds   []svgCmd
	fill   string // fill colour, "" when none
	stroke string // stroke colour, "" when none
}

type svgCmd struct {
	op   byte
	args []float64
}

type svgDoc struct {
	paths []svgPath
	texts []string
}

var (
	cmdRE = regexp.MustCompile(`[MLAZQC][^MLAZQC]*`)
	numRE = regexp.MustCompile(`-?\d*\.?\d+(?:[eE][-+]?\d+)?`)
)

func styleValue(style, key string) string {
	for _, part := range strings.Split(style, ";") {
		k, v, ok := strings.Cut(part, ":")
		if ok && strings.TrimSpace(k) == key {
			return strings.TrimSpace(v)
		}
	}
	return ""
}

// parseSVG reads every path outside nested transforms (those hold only
// rotated text) and every text of an SVG document.
func parseSVG(t *testing.T, b []byte) svgDoc {
	t.Helper()
	var doc svgDoc
	dec := xml.NewDecoder(bytes.NewReader(b))
	depth := 0 // transformed groups inside the root flip
	var stack []bool
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG does not parse: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			switch e.Name.Local {
			case "g":
				tr := false
				for _, a := range e.Attr {
					if a.Name.Local == "transform" {
						tr = true
					}
				}
				stack = append(stack, tr)
				if tr {
					depth++
				}
			case "path":
				if depth > 1 {
					continue
				}
				var p svgPath
				for _, a := range e.Attr {
					switch a.Name.Local {
					case "d":
						for _, c := range cmdRE.FindAllString(a.Value, -1) {
							cmd := svgCmd{op: c[0]}
							for _, n := range numRE.FindAllString(c[1:], -1) {
								v, err := strconv.ParseFloat(n, 64)
								if err != nil {
									t.Fatal(err)
								}
								cmd.args = append(cmd.args, v)
							}
							p.cmds = append(p.cmds, cmd)
						}
					case "style":
						if f := styleValue(a.Value, "fill"); f != "none" {
							p.fill = f
							if f == "" {
								p.fill = "#000000"
							}
						}
						if s := styleValue(a.Value, "stroke"); s != "none" && s != "" {
							p.stroke = s
						}
					}
				}
				doc.paths = append(doc.paths, p)
			case "text":
				var s string
				if err := dec.DecodeElement(&s, &e); err != nil {
					t.Fatal(err)
				}
				doc.texts = append(doc.texts, s)
			}
		case xml.EndElement:
			if e.Name.Local == "g" && len(stack) > 0 {
				if stack[len(stack)-1] {
					depth--
				}
				stack = stack[:len(stack)-1]
			}
		}
	}
	return doc
}

// points returns the end points of M and L commands.
func (p svgPath) points() [][2]float64 {
	var out [][2]float64
	for _, c := range p.cmds {
		if (c.op == 'M' || c.op == 'L') && len(c.args) == 2 {
			out = append(out, [2]float64{c.args[0], c.args[1]})
		}
	}
	return out
}

// glyphCentre returns the centre of a circle glyph (M at x+r, y, then arcs
// of radius r) and its radius.
func (p svgPath) glyphCentre() (x, y, r float64, ok bool) {
	if len(p.cmds) < 2 || p.cmds[0].op != 'M' || p.cmds[1].op != 'A' || len(p.cmds[1].args) < 2 {
		return 0, 0, 0, false
	}
	r = p.cmds[1].args[0]
	return p.cmds[0].args[0] - r, p.cmds[0].args[1], r, true
}

// crossCentre returns the centre of a × glyph: M a L b M c L d.
func (p svgPath) crossCentre() (x, y float64, ok bool) {
	pts := p.points()
	if len(pts) != 4 || len(p.cmds) != 4 || p.cmds[2].op != 'M' {
		return 0, 0, false
	}
	return (pts[0][0] + pts[1][0]) / 2, (pts[0][1] + pts[1][1]) / 2, true
}

func hex(c interface{ RGBA() (r, g, b, a uint32) }) string {
	r, g, b, _ := c.RGBA()
	return "#" + strings.ToUpper(strconv.FormatInt(int64(1<<24|(r>>8)<<16|(g>>8)<<8|b>>8), 16)[1:])
}

func inside(dc draw.Canvas, x, y float64) bool {
	return x >= float64(dc.Min.X)-pixelTol && x <= float64(dc.Max.X)+pixelTol &&
		y >= float64(dc.Min.Y)-pixelTol && y <= float64(dc.Max.Y)+pixelTol
}

// toCanvas maps data coordinates of plot p to canvas points.
func toCanvas(p *gplot.Plot, dc draw.Canvas, x, y float64) (float64, float64) {
	tx, ty := p.Transforms(&dc)
	return float64(tx(x)), float64(ty(y))
}

// toData inverts toCanvas for linear axes.
func toData(p *gplot.Plot, dc draw.Canvas, cx, cy float64) (float64, float64) {
	x0, y0 := toCanvas(p, dc, 0, 0)
	x1, y1 := toCanvas(p, dc, 1, 1)
	return (cx - x0) / (x1 - x0), (cy - y0) / (y1 - y0)
}

func drawn(t *testing.T, res *analysis.Result, l *analysis.Loop) (*Figure, svgDoc, []byte) {
	t.Helper()
	f, err := LoopFigure(res, l)
	if err != nil {
		t.Fatal(err)
	}
	b, err := f.SVG()
	if err != nil {
		t.Fatal(err)
	}
	return f, parseSVG(t, b), b
}

func hasText(doc svgDoc, want string) bool {
	for _, s := range doc.texts {
		if s == want {
			return true
		}
	}
	return false
}

func TestUnitCircleIsRoundAndAtRadiusOne(t *testing.T) {
	res := checkFile(t, "testdata/blower.loop")
	f, doc, _ := drawn(t, res, loopNamed(t, res, "blower_speed"))
	want := hex(colCircle)
	found := 0
	for _, p := range doc.paths {
		pts := p.points()
		if p.stroke != want || len(pts) < circlePoints {
			continue
		}
		found++
		minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
		for _, q := range pts {
			x, y := toData(f.ZPlane, f.zData, q[0], q[1])
			// 5 printed digits of a ~300 pt coordinate are 0.005 pt, i.e.
			// ~5e-5 data units here; 1e-3 leaves ample room.
			if r := math.Hypot(x, y); math.Abs(r-1) > 1e-3 {
				t.Fatalf("unit circle point at radius %g", r)
			}
			minX, maxX = math.Min(minX, q[0]), math.Max(maxX, q[0])
			minY, maxY = math.Min(minY, q[1]), math.Max(maxY, q[1])
		}
		// Equal axis scaling: the circle is as wide as it is high.
		if w, h := maxX-minX, maxY-minY; math.Abs(w-h) > pixelTol || w < 100 {
			t.Errorf("unit circle drawn %g pt wide and %g pt high", w, h)
		}
	}
	if found != 1 {
		t.Fatalf("found %d unit-circle paths, want 1", found)
	}
}

// markersAt returns the centres of the filled circle glyphs of colour col
// inside the data area dc.
func markersAt(doc svgDoc, col string, dc draw.Canvas, filled bool) [][2]float64 {
	var out [][2]float64
	for _, p := range doc.paths {
		if filled && p.fill != col || !filled && p.stroke != col {
			continue
		}
		if x, y, _, ok := p.glyphCentre(); ok && inside(dc, x, y) {
			out = append(out, [2]float64{x, y})
		}
	}
	return out
}

func matchAll(t *testing.T, what string, got [][2]float64, want []complex128, f *Figure) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d markers drawn, want %d", what, len(got), len(want))
	}
	used := make([]bool, len(got))
	for _, z := range want {
		x, y := toCanvas(f.ZPlane, f.zData, real(z), imag(z))
		ok := false
		for i, g := range got {
			if !used[i] && math.Hypot(g[0]-x, g[1]-y) <= pixelTol {
				used[i], ok = true, true
				break
			}
		}
		if !ok {
			t.Errorf("%s: no marker within %g pt of z = %v (canvas %.2f, %.2f); markers %v", what, pixelTol, z, x, y, got)
		}
	}
}

func TestPoleMarkersAtTheirPlaces(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	l := loopNamed(t, res, "arm_wobble")
	f, doc, _ := drawn(t, res, l)

	// Closed loop of L = 1.6/(z² − 0.2z + 0.5): z² − 0.2z + 2.1 = 0, so
	// z = 0.1 ± j·√2.09 (quadratic formula).
	closed := []complex128{complex(0.1, math.Sqrt(2.09)), complex(0.1, -math.Sqrt(2.09))}
	matchAll(t, "closed-loop poles", markersAt(doc, hex(colClosedPole), f.zData, true), closed, f)
	// Both lie outside the unit circle: both get the red ring.
	matchAll(t, "rings", markersAt(doc, hex(colViolation), f.zData, false), closed, f)

	// Open-loop poles z² − 0.2z + 0.5 = 0: z = 0.1 ± 0.7j.
	var crosses [][2]float64
	for _, p := range doc.paths {
		if p.stroke != hex(colOpenPole) {
			continue
		}
		if x, y, ok := p.crossCentre(); ok && inside(f.zData, x, y) {
			crosses = append(crosses, [2]float64{x, y})
		}
	}
	matchAll(t, "open-loop poles", crosses, []complex128{complex(0.1, 0.7), complex(0.1, -0.7)}, f)

	for _, s := range []string{"unit circle", "closed-loop pole", "open-loop pole (of L)", "breaks a requirement", "damping limit ζ = 0.5", UnstableStepText} {
		if !hasText(doc, s) {
			t.Errorf("text %q missing; texts %q", s, doc.texts)
		}
	}
	if hasText(doc, "open-loop zero (of L)") {
		t.Error("L = 1.6/(z² − 0.2z + 0.5) has no zero, yet the legend lists one")
	}
}

func TestStableLoopMarkers(t *testing.T) {
	res := checkFile(t, "testdata/blower.loop")
	l := loopNamed(t, res, "blower_speed")
	f, doc, _ := drawn(t, res, l)
	var want []complex128
	for _, p := range l.Poles {
		want = append(want, p.Z)
	}
	matchAll(t, "closed-loop poles", markersAt(doc, hex(colClosedPole), f.zData, true), want, f)
	// PI zero: kp + ki·T·z/(z − 1) = ((kp + ki·T)z − kp)/(z − 1), zero at
	// kp/(kp + ki·T) = 0.6/0.64 = 0.9375 (hand algebra); the ZOH of a first
	// order lag and z⁻¹ add no finite zero.
	matchAll(t, "open-loop zeros", markersAt(doc, hex(colOpenZero), f.zData, false), []complex128{0.9375}, f)
	if rings := markersAt(doc, hex(colViolation), f.zData, false); len(rings) != 0 {
		t.Errorf("stable loop meeting its radius and damping limits has %d red rings", len(rings))
	}
	for _, s := range []string{"unit circle", "closed-loop pole", "open-loop pole (of L)", "open-loop zero (of L)", "radius limit 0.999"} {
		if !hasText(doc, s) {
			t.Errorf("legend text %q missing", s)
		}
	}
}

// verticalLine finds a two-point vertical stroke of colour col in dc.
func verticalLine(doc svgDoc, col string, dc draw.Canvas) (x, y0, y1 float64, ok bool) {
	for _, p := range doc.paths {
		pts := p.points()
		if p.stroke != col || len(pts) != 2 || math.Abs(pts[0][0]-pts[1][0]) > 0.01 || !inside(dc, pts[0][0], pts[0][1]) {
			continue
		}
		return pts[0][0], pts[0][1], pts[1][1], true
	}
	return 0, 0, 0, false
}

func TestMarginsDrawnAndLabelled(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	l := loopNamed(t, res, "valve_flow")
	f, doc, _ := drawn(t, res, l)
	// L = 0.2/(z − 0.8): the phase is −180° only at Nyquist, z = −1, where
	// L = −0.2/1.8, so GM = 20·log10(9) = 19.085 dB at 500 Hz (T = 1 ms).
	gm := 20 * math.Log10(9)
	if !hasText(doc, "GM 19.1 dB") {
		t.Errorf("GM label missing; texts %q", doc.texts)
	}
	x, y0, y1, ok := verticalLine(doc, hex(colMargin), f.magData)
	if !ok {
		t.Fatal("no gain-margin line on the magnitude plot")
	}
	wx, wy0 := toCanvas(f.Magnitude, f.magData, 500, -gm)
	_, wy1 := toCanvas(f.Magnitude, f.magData, 500, 0)
	if math.Abs(x-wx) > pixelTol || math.Abs(y0-wy0) > pixelTol || math.Abs(y1-wy1) > pixelTol {
		t.Errorf("GM line at x %.2f from %.2f to %.2f, want x %.2f from %.2f to %.2f", x, y0, y1, wx, wy0, wy1)
	}

	res = checkFile(t, "testdata/blower.loop")
	l = loopNamed(t, res, "blower_speed")
	f, doc, _ = drawn(t, res, l)
	m := l.Margins
	for _, s := range []string{
		"GM " + strconv.FormatFloat(*m.GainMarginDB, 'g', 3, 64) + " dB",
		"PM " + strconv.FormatFloat(*m.PhaseMarginDeg, 'g', 3, 64) + "°",
	} {
		if !hasText(doc, s) {
			t.Errorf("label %q missing; texts %q", s, doc.texts)
		}
	}
	// The PM line stands at the gain crossover and is PM degrees long.
	x, y0, y1, ok = verticalLine(doc, hex(colMargin), f.phaseData)
	if !ok {
		t.Fatal("no phase-margin line on the phase plot")
	}
	wx, a := toCanvas(f.Phase, f.phaseData, *m.GainCrossoverHz, -180)
	_, b := toCanvas(f.Phase, f.phaseData, *m.GainCrossoverHz, -180+*m.PhaseMarginDeg)
	if math.Abs(x-wx) > pixelTol || math.Abs(y0-a) > pixelTol || math.Abs(y1-b) > pixelTol {
		t.Errorf("PM line at x %.2f from %.2f to %.2f, want x %.2f from %.2f to %.2f", x, y0, y1, wx, a, b)
	}
	if !hasText(doc, "blower_speed: "+l.Verdict()) {
		t.Error("title with loop name and verdict missing")
	}
}

func TestStepSettlingMarked(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	l := loopNamed(t, res, "valve_flow")
	f, doc, _ := drawn(t, res, l)
	// Closed loop 0.2/(z − 0.6): y[k] = 0.5(1 − 0.6^k) (geometric series).
	// |y − 0.5| ≤ 0.01 from 0.6^k ≤ 0.02, k ≥ 7.66: y[7] is the last sample
	// outside the 2 % band, so the settling time is 8 samples = 8 ms.
	if !hasText(doc, "in the band from 8 ms on (settling time)") {
		t.Errorf("settling legend missing; texts %q", doc.texts)
	}
	x, _, _, ok := verticalLine(doc, hex(colMargin), f.stepData)
	if !ok {
		t.Fatal("no settling line")
	}
	if wx, _ := toCanvas(f.Step, f.stepData, 8, 0); math.Abs(x-wx) > pixelTol { // axis in ms
		t.Errorf("settling line at %.2f pt, want %.2f", x, wx)
	}
	// The stairs: one horizontal run per sample, at y[k].
	for _, p := range doc.paths {
		pts := p.points()
		if p.stroke != hex(colCurve) || len(pts) < 2*stepMinSamples || !inside(f.stepData, pts[0][0], pts[0][1]) {
			continue
		}
		for k := 0; k < 10; k++ {
			want := 0.5 * (1 - math.Pow(0.6, float64(k)))
			wx0, wy := toCanvas(f.Step, f.stepData, float64(k), want)
			wx1, _ := toCanvas(f.Step, f.stepData, float64(k+1), want)
			a, b := pts[2*k], pts[2*k+1]
			if math.Abs(a[0]-wx0) > pixelTol || math.Abs(b[0]-wx1) > pixelTol || math.Abs(a[1]-wy) > pixelTol || math.Abs(b[1]-wy) > pixelTol {
				t.Fatalf("stair %d from %v to %v, want (%.2f, %.2f) to (%.2f, %.2f)", k, a, b, wx0, wy, wx1, wy)
			}
		}
		return
	}
	t.Fatal("no step-response stairs")
}

func TestPoleBreaksRule(t *testing.T) {
	const T, tol = 1e-3, analysis.DefaultTolerance
	r := func(v float64) *float64 { return &v }
	cases := []struct {
		z    complex128
		c    poleChecks
		want bool
	}{
		{0.5, poleChecks{}, false},
		{1.2, poleChecks{}, true},                  // outside the circle
		{-1, poleChecks{}, true},                   // on the circle
		{complex(0, 1), poleChecks{}, true},        // on the circle
		{0.5, poleChecks{maxRadius: r(0.4)}, true}, // beyond the radius limit
		{0.5, poleChecks{maxRadius: r(0.6)}, false},
		// z = −0.5: s·T = ln 0.5 + jπ, ζ = 0.693/√(0.693² + π²) ≈ 0.215.
		{-0.5, poleChecks{minDamping: r(0.3)}, true},
		{-0.5, poleChecks{minDamping: r(0.2)}, false},
		{0, poleChecks{minDamping: r(0.99)}, false}, // a pure delay has no damping to speak of
	}
	for _, c := range cases {
		if got := c.c.breaks(pole.Describe(c.z, T, tol)); got != c.want {
			t.Errorf("pole %v with %+v: breaks = %v, want %v", c.z, c.c, got, c.want)
		}
	}
}
