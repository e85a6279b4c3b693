package plot

import (
	"fmt"
	"image/color"
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
	"ringside/analysis/freq"
	"ringside/analysis/poly"
)

const (
	// bodeDecades is how far below the Nyquist frequency the Bode plot
	// starts: 1e-3·Nyquist shows the low-frequency gain of ordinary loops.
	bodeDecades = 3
	// bodeMaxDecades is the farthest the start moves down to show a
	// crossover below 1e-3·Nyquist; a crossover lower still is drawn at
	// the left edge with its frequency written in its label.
	bodeMaxDecades = 6
	// bodePoints is the number of log-spaced frequencies: ~130 per decade
	// keeps the phase step between points far below the 180° that
	// freq.Response needs to unwrap, except at lightly damped resonances
	// sharper than any loop worth drawing.
	bodePoints = 400
	// magFloorDB bounds the magnitude axis from below: values under
	// −200 dB (a zero on the circle) would squash the useful range.
	magFloorDB = -200
)

// bode is the Bode panel: magnitude over phase, with aligned frequency axes.
type bode struct {
	mag, phase *gplot.Plot
}

// bodeGrid returns log-spaced frequencies from fmin to the Nyquist
// frequency ny (inclusive at both ends).
func bodeGrid(fmin, ny float64, n int) []float64 {
	out := make([]float64, n)
	la, lb := math.Log10(fmin), math.Log10(ny)
	for i := range out {
		out[i] = math.Pow(10, la+(lb-la)*float64(i)/float64(n-1))
	}
	out[0], out[n-1] = fmin, ny
	return out
}

// segments splits (x, y) into runs of finite y, since a plotter line
// cannot hold NaN or ±Inf (a pole or zero of L on the circle).
func segments(x, y []float64, floor float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for i := range x {
		v := y[i]
		if math.IsNaN(v) || math.IsInf(v, 1) {
			if len(cur) > 0 {
				out = append(out, cur)
			}
			cur = nil
			continue
		}
		cur = append(cur, plotter.XY{X: x[i], Y: math.Max(v, floor)})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

func addLine(p *gplot.Plot, pts plotter.XYs, sty draw.LineStyle) error {
	ln, err := plotter.NewLine(pts)
	if err != nil {
		return err
	}
	ln.LineStyle = sty
	p.Add(ln)
	return nil
}

// addLabel writes txt at data point (x, y), just right of it, or just left
// of it when alignRight is set.
func addLabel(p *gplot.Plot, x, y float64, txt string, alignRight bool, col color.Color) error {
	lb, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x, Y: y}}, Labels: []string{txt}})
	if err != nil {
		return err
	}
	for i := range lb.TextStyle {
		st := &lb.TextStyle[i]
		st.Font.Typeface, st.Font.Variant = sans.Typeface, sans.Variant
		st.Font.Size = vg.Points(8.5)
		st.YAlign = text.YCenter
		st.Color = col
		// Slightly above the point, so a label on a short margin line
		// does not sit on the reference line.
		lb.Offset = vg.Point{X: vg.Points(3), Y: vg.Points(6)}
		if alignRight {
			st.XAlign = text.XRight
			lb.Offset.X = -lb.Offset.X
		}
	}
	p.Add(lb)
	return nil
}

// clampHz places a frequency on the axis [fmin, ny]; moved reports that it
// had to be moved (then its label must say where it really is).
func clampHz(f, fmin, ny float64) (float64, bool) {
	switch {
	case f < fmin:
		return fmin, true
	case f > ny:
		return ny, true
	}
	return f, false
}

// rightHalf reports whether f lies in the right 40 % of the log axis, where
// a label goes to the left of its line.
func rightHalf(f, fmin, ny float64) bool {
	return math.Log(f/fmin) > 0.6*math.Log(ny/fmin)
}

func newBode(res *analysis.Result, l *analysis.Loop) (*bode, error) {
	T := res.SampleT
	ny := 1 / (2 * T)
	m := l.Margins
	fmin := ny * math.Pow(10, -bodeDecades)
	lowest := ny * math.Pow(10, -bodeMaxDecades)
	for _, f := range []*float64{m.PhaseCrossoverHz, m.GainCrossoverHz} {
		if f != nil && *f > lowest && *f < fmin {
			fmin = *f / 2
		}
	}
	hz := bodeGrid(fmin, ny, bodePoints)
	magDB, phaseDeg := freq.Response(poly.Rational{Num: l.Open.Num, Den: l.Open.Den}, T, hz)
	if len(segments(hz, magDB, magFloorDB)) == 0 {
		return nil, fmt.Errorf("plot: loop %s: the frequency response of L could not be evaluated", l.Name)
	}

	b := &bode{mag: newPlot(), phase: newPlot()}
	b.mag.Title.Text = "Bode plot of the open loop L"
	b.mag.Y.Label.Text = "|L| (dB)"
	b.phase.Y.Label.Text = "arg L (deg)"
	b.phase.X.Label.Text = "frequency (Hz)"
	for _, p := range []*gplot.Plot{b.mag, b.phase} {
		p.X.Scale = gplot.LogScale{}
		p.X.Tick.Marker = gplot.LogTicks{Prec: -1}
		p.Add(plotter.NewGrid())
	}
	curve := draw.LineStyle{Color: colCurve, Width: vg.Points(curveWidth)}
	ref := draw.LineStyle{Color: colReference, Width: vg.Points(refWidth), Dashes: dashed()}
	marg := draw.LineStyle{Color: colMargin, Width: vg.Points(curveWidth + 0.4)}

	// Reference lines: 0 dB, and the phase's odd multiples of 180°.
	if err := addLine(b.mag, plotter.XYs{{X: fmin, Y: 0}, {X: ny, Y: 0}}, ref); err != nil {
		return nil, err
	}
	if err := addEnvelope(b.mag, b.phase, l, T, hz); err != nil {
		return nil, err
	}
	for _, s := range segments(hz, magDB, magFloorDB) {
		if err := addLine(b.mag, s, curve); err != nil {
			return nil, err
		}
	}
	if err := addPhaseReferences(b.phase, phaseDeg, fmin, ny, ref); err != nil {
		return nil, err
	}
	for _, s := range segments(hz, phaseDeg, math.Inf(-1)) {
		if err := addLine(b.phase, s, curve); err != nil {
			return nil, err
		}
	}
	span := bodeSpan{fmin: fmin, ny: ny, T: T, hz: hz, phaseDeg: phaseDeg, style: marg}
	if err := span.gainMarginMark(b.mag, m); err != nil {
		return nil, err
	}
	if err := span.phaseMarginMark(b.phase, l, m); err != nil {
		return nil, err
	}
	for _, p := range []*gplot.Plot{b.mag, b.phase} {
		p.X.Min, p.X.Max = fmin, ny
	}
	b.phase.Y.Min = math.Floor(b.phase.Y.Min/45) * 45
	b.phase.Y.Max = math.Ceil(b.phase.Y.Max/45) * 45
	b.phase.Y.Tick.Marker = phaseTicks(b.phase.Y.Min, b.phase.Y.Max)
	return b, nil
}

// addPhaseReferences draws every odd multiple of 180° the phase reaches
// (the unwrapped phase may sit on another branch than −180°).
func addPhaseReferences(p *gplot.Plot, phaseDeg []float64, fmin, ny float64, ref draw.LineStyle) error {
	pmin, pmax := math.Inf(1), math.Inf(-1)
	for _, v := range phaseDeg {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			pmin, pmax = math.Min(pmin, v), math.Max(pmax, v)
		}
	}
	lo := math.Min(pmin, -180)
	hi := math.Max(pmax, -180)
	for k := math.Ceil((lo+180)/360) * 360; k-180 <= hi; k += 360 {
		if err := addLine(p, plotter.XYs{{X: fmin, Y: k - 180}, {X: ny, Y: k - 180}}, ref); err != nil {
			return err
		}
	}
	return nil
}

// bodeSpan is what the margin marks need of a drawn Bode plot: its
// frequency span, the sample period, the grid and the drawn phase.
type bodeSpan struct {
	fmin, ny, T  float64
	hz, phaseDeg []float64
	style        draw.LineStyle
}

// gainMarginMark draws the gain margin at the phase crossover, from |L|
// up (or down) to 0 dB.
func (sp bodeSpan) gainMarginMark(p *gplot.Plot, m freq.Margins) error {
	if m.GainMarginDB == nil || m.PhaseCrossoverHz == nil {
		return nil
	}
	gm := *m.GainMarginDB
	f, moved := clampHz(*m.PhaseCrossoverHz, sp.fmin, sp.ny)
	label := "GM " + analysis.FormatMetric("gain_margin", gm)
	if moved {
		label += " at " + analysis.FormatHz(*m.PhaseCrossoverHz)
	}
	if err := addLine(p, plotter.XYs{{X: f, Y: -gm}, {X: f, Y: 0}}, sp.style); err != nil {
		return err
	}
	return addLabel(p, f, -gm/2, label, rightHalf(f, sp.fmin, sp.ny), colMargin)
}

// phaseMarginMark draws the phase margin at the gain crossover, from the
// −180° line of the branch the phase is on, to the phase.
func (sp bodeSpan) phaseMarginMark(p *gplot.Plot, l *analysis.Loop, m freq.Margins) error {
	if m.PhaseMarginDeg == nil || m.GainCrossoverHz == nil {
		return nil
	}
	pm := *m.PhaseMarginDeg
	f, moved := clampHz(*m.GainCrossoverHz, sp.fmin, sp.ny)
	_, ph := freq.Response(poly.Rational{Num: l.Open.Num, Den: l.Open.Den}, sp.T, []float64{f})
	phi := ph[0]
	if i := nearestIndex(sp.hz, f); !math.IsNaN(sp.phaseDeg[i]) {
		// Put the crossover's phase on the branch of the drawn curve.
		phi -= 360 * math.Round((phi-sp.phaseDeg[i])/360)
	}
	if math.IsNaN(phi) {
		return nil
	}
	label := "PM " + analysis.FormatMetric("phase_margin", pm)
	if moved {
		label += " at " + analysis.FormatHz(*m.GainCrossoverHz)
	}
	if err := addLine(p, plotter.XYs{{X: f, Y: phi - pm}, {X: f, Y: phi}}, sp.style); err != nil {
		return err
	}
	return addLabel(p, f, phi-pm/2, label, rightHalf(f, sp.fmin, sp.ny), colMargin)
}

func nearestIndex(xs []float64, x float64) int {
	best, bi := math.Inf(1), 0
	for i, v := range xs {
		if d := math.Abs(math.Log(v / x)); d < best {
			best, bi = d, i
		}
	}
	return bi
}

// phaseTicks labels the phase axis at multiples of 15°, 30°, 45°, 90°,
// 180°, ..., the finest that gives at most eight labels over [lo, hi].
func phaseTicks(lo, hi float64) gplot.ConstantTicks {
	step := 15.0
	for _, s := range []float64{30, 45} {
		if (hi-lo)/step > 8 {
			step = s
		}
	}
	for (hi-lo)/step > 8 {
		step *= 2
	}
	var ts gplot.ConstantTicks
	for v := math.Ceil(lo/step) * step; v <= hi; v += step {
		ts = append(ts, gplot.Tick{Value: v, Label: fmt.Sprintf("%g", v)})
	}
	return ts
}
