package plot

import (
	"fmt"
	"math"
	"math/cmplx"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
	"ringside/analysis/step"
)

const (
	// settlingBand is the format's settling band: 2 % of |final value|
	// (of max|y| when the final value is 0, as in package step).
	settlingBand = 0.02
	// stepShowAfterSettling: the view runs to this multiple of the settling
	// time, so the response is seen to stay in the band.
	stepShowAfterSettling = 1.5
	// stepMinSamples and stepMaxSamples bound the samples shown: at least
	// a few to see the shape, at most what an SVG draws quickly.
	stepMinSamples = 20
	stepMaxSamples = 2000
)

// NoStepText is the step panel's message when no response can be drawn.
const NoStepText = "no step response"

// UnstableStepText labels the step panel of a loop that is not stable: it
// shows the first samples of the response, clipped.
const UnstableStepText = "UNSTABLE: step response grows (first samples, clipped)"

// HiddenStepText titles the step panel of a loop whose growing mode is
// cancelled in L: the output to a reference step need not show it.
const HiddenStepText = "UNSTABLE inside: a hidden mode grows (this output may not show it)"

// hiddenGrowth reports whether a mode cancelled in L lies on or outside
// the unit circle.
func hiddenGrowth(l *analysis.Loop) bool {
	for _, h := range l.Hidden {
		if cmplx.Abs(h.Pole) >= 1-analysis.DefaultTolerance {
			return true
		}
	}
	return false
}

const (
	// unstableGrowth: an unstable response is followed until its slowest
	// growing mode has grown this much (r^k = 1000), so the growth shows.
	unstableGrowth = 1e3
	// unstableClip is the half-height of the view of an unstable
	// response, in multiples of its early size (the first tenth of the
	// samples shown, at least 1): the runaway leaves the view, clipped.
	unstableClip = 5
	// unstableMaxSamples bounds the samples simulated for an unstable
	// response (a pole just outside the circle grows slowly).
	unstableMaxSamples = 10 * stepMaxSamples
)

// timeUnit picks seconds or milliseconds for a time axis ending at tmax.
func timeUnit(tmax float64) (scale float64, unit string) {
	if tmax < 1 {
		return 1e3, "ms"
	}
	return 1, "s"
}

// stepView returns how many samples to show.
func stepView(st *step.Result) int {
	n := len(st.Samples)
	k := n
	if st.Settled {
		k = int(math.Ceil(stepShowAfterSettling * st.SettlingS / st.T))
	}
	k = max(k, stepMinSamples)
	return min(k, n, stepMaxSamples)
}

// newStepPlot returns the step panel and its legend entries (drawn below
// it, where they cannot hide the curve).
func newStepPlot(l *analysis.Loop, T float64) (*gplot.Plot, []legendItem, error) {
	var legend []legendItem
	p := newPlot()
	p.Title.Text = "closed-loop step response (reference to output)"
	st := l.Step
	if !l.Stable {
		return unstableStep(p, l, T)
	}
	if st == nil || len(st.Samples) == 0 || !(st.T > 0) {
		msg := NoStepText
		p.HideAxes()
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, 1, 0, 1
		lb, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: 0.5, Y: 0.5}}, Labels: []string{msg}})
		if err != nil {
			return nil, nil, err
		}
		lb.TextStyle[0].Font = sans
		lb.TextStyle[0].Font.Size = vg.Points(12)
		lb.TextStyle[0].Color = colViolation
		lb.TextStyle[0].XAlign = text.XCenter
		lb.TextStyle[0].YAlign = text.YCenter
		p.Add(lb)
		return p, nil, nil
	}
	n := stepView(st)
	tEnd := float64(n) * st.T
	scale, unit := timeUnit(tEnd)
	p.X.Label.Text = "time (" + unit + ")"
	p.Y.Label.Text = "output"

	// Settling band around the final value.
	half := settlingBand * math.Abs(st.Final)
	if st.Final == 0 {
		peak := 0.0
		for _, v := range st.Samples {
			peak = math.Max(peak, math.Abs(v))
		}
		half = settlingBand * peak
	}
	if half > 0 {
		band, err := plotter.NewPolygon(plotter.XYs{
			{X: 0, Y: st.Final - half}, {X: tEnd * scale, Y: st.Final - half},
			{X: tEnd * scale, Y: st.Final + half}, {X: 0, Y: st.Final + half},
		})
		if err != nil {
			return nil, nil, err
		}
		band.Color = colBand
		band.LineStyle.Width = 0
		p.Add(band)
		legend = append(legend, legendItem{fmt.Sprintf("±2 %% band around the final value %s", analysis.FormatNumber(roundSig(st.Final))), band})
	}
	p.Add(plotter.NewGrid())

	pts := make(plotter.XYs, 0, n+1)
	for k := 0; k < n; k++ {
		pts = append(pts, plotter.XY{X: float64(k) * st.T * scale, Y: st.Samples[k]})
	}
	// One more point holds the last sample to the end of its interval.
	pts = append(pts, plotter.XY{X: tEnd * scale, Y: st.Samples[n-1]})
	ln, err := plotter.NewLine(pts)
	if err != nil {
		return nil, nil, fmt.Errorf("plot: loop %s step response: %w", l.Name, err)
	}
	ln.StepStyle = plotter.PostStep // held between samples (zero-order hold)
	ln.LineStyle = draw.LineStyle{Color: colCurve, Width: vg.Points(curveWidth)}
	p.Add(ln)
	legend = append(legend, legendItem{fmt.Sprintf("output y[k] (held between samples), overshoot %.3g %%", st.OvershootPct), ln})

	if st.Settled && st.SettlingS > 0 {
		ts := st.SettlingS * scale
		lo, hi := p.Y.Min, p.Y.Max
		mk, err := plotter.NewLine(plotter.XYs{{X: ts, Y: lo}, {X: ts, Y: hi}})
		if err != nil {
			return nil, nil, err
		}
		mk.LineStyle = draw.LineStyle{Color: colMargin, Width: vg.Points(curveWidth), Dashes: dashed()}
		p.Add(mk)
		legend = append(legend, legendItem{"in the band from " + analysis.FormatTime(st.SettlingS) + " on (settling time)", mk})
	} else if !st.Settled {
		legend = append(legend, legendItem{text: "not settled within the simulated horizon"})
	}
	p.X.Min, p.X.Max = 0, tEnd*scale
	return p, legend, nil
}

// roundSig rounds to 4 significant digits for a label.
func roundSig(v float64) float64 {
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	e := math.Pow(10, 3-math.Floor(math.Log10(math.Abs(v))))
	return math.Round(v*e) / e
}

// unstableStep draws the first samples of the step response of a loop
// that is not stable, held between samples and clipped to a view of
// ±unstableClip times its early size, under a red title: what the engineer
// must see is the runaway, not a blank panel.
func unstableStep(p *gplot.Plot, l *analysis.Loop, T float64) (*gplot.Plot, []legendItem, error) {
	n := unstableMaxSamples
	if r := l.MaxRadius; r > 1 {
		n = int(math.Ceil(math.Log(unstableGrowth) / math.Log(r)))
	}
	n = min(max(n, 5*stepMinSamples), unstableMaxSamples)
	y, err := step.First(l.Closed, n, math.MaxFloat64)
	if err != nil || len(y) == 0 {
		return nil, nil, fmt.Errorf("plot: loop %s step response: %v", l.Name, err)
	}
	early := 1.0
	for _, v := range y[:max(len(y)/10, 1)] {
		early = math.Max(early, math.Abs(v))
	}
	clip := unstableClip * early
	scale, unit := timeUnit(float64(len(y)) * T)
	p.Title.Text = UnstableStepText
	if hiddenGrowth(l) {
		p.Title.Text = HiddenStepText
	}
	p.Title.TextStyle.Color = colViolation
	p.X.Label.Text = "time (" + unit + ")"
	p.Y.Label.Text = "output"
	p.Add(plotter.NewGrid())
	// Past stepMaxSamples every m-th sample is drawn, joined by straight
	// lines (a slow runaway needs a long view; the SVG stays small).
	m := (len(y) + stepMaxSamples - 1) / stepMaxSamples
	pts := make(plotter.XYs, 0, len(y)/m+2)
	for k := 0; k < len(y); k += m {
		pts = append(pts, plotter.XY{X: float64(k) * T * scale, Y: math.Max(-clip, math.Min(clip, y[k]))})
	}
	pts = append(pts, plotter.XY{X: float64(len(y)) * T * scale, Y: math.Max(-clip, math.Min(clip, y[len(y)-1]))})
	ln, err := plotter.NewLine(pts)
	if err != nil {
		return nil, nil, fmt.Errorf("plot: loop %s step response: %w", l.Name, err)
	}
	if m == 1 {
		ln.StepStyle = plotter.PostStep
	}
	ln.LineStyle = draw.LineStyle{Color: colViolation, Width: vg.Points(curveWidth)}
	p.Add(ln)
	p.X.Min, p.X.Max = 0, float64(len(y))*T*scale
	p.Y.Min, p.Y.Max = -clip*1.05, clip*1.05
	legend := []legendItem{{fmt.Sprintf("output y[k], first %d samples (%s), clipped at ±%s", len(y), analysis.FormatTime(float64(len(y))*T), analysis.FormatNumber(roundSig(clip))), ln}}
	return p, legend, nil
}
