package plot

import (
	"fmt"
	"image/color"
	"math"
	"math/cmplx"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
	"ringside/analysis/lti"
	"ringside/analysis/pole"
	"ringside/analysis/roots"
)

const (
	// circlePoints is how many points draw the unit circle: at 360 the
	// chord error is 1 − cos(π/360) ≈ 4e-5 of the radius, far below a
	// pixel at any size the figure is drawn.
	circlePoints = 360
	// zMinHalfSpan is the smallest half-width of the z-plane view: the
	// unit circle with a margin for markers.
	zMinHalfSpan = 1.25
	// zMargin widens the view beyond the farthest pole or zero so its
	// marker is not cut by the frame.
	zMargin = 1.1
)

// zPlane is the z-plane panel: the plot, the points it shows and which
// closed-loop poles break a requirement.
type zPlane struct {
	plot      *gplot.Plot
	legend    []legendItem
	closed    []complex128
	open      []complex128 // poles of L
	zeros     []complex128 // zeros of L
	violating []complex128 // closed-loop poles that break a requirement
	// rounded are the poles of the realized blocks after rounding, and
	// realized the closed-loop poles with them in place (realize lines).
	rounded, realized []complex128
	halfSpan          float64    // half-width of the square data region to show
	center            complex128 // centre of that region (0 but in a zoomed view)
	checks            poleChecks
	loop              *analysis.Loop // for the full view's extras; nil in a zoom
}

// legendItem is one legend entry, drawn below the z-plane.
type legendItem struct {
	text  string
	thumb gplot.Thumbnailer
}

// poleChecks are the limits a closed-loop pole is held to.
type poleChecks struct {
	maxRadius  *float64 // `require radius <= X`
	minRadius  *float64 // `require radius >= X` (unusual but valid)
	minDamping *float64 // `require damping >= X`
	maxDamping *float64 // `require damping <= X`
}

func checksOf(l *analysis.Loop) poleChecks {
	var c poleChecks
	for i := range l.Requirements {
		q := &l.Requirements[i]
		w := q.Want
		switch {
		case q.Metric == "radius" && q.Op == "<=":
			c.maxRadius = &w
		case q.Metric == "radius" && q.Op == ">=":
			c.minRadius = &w
		case q.Metric == "damping" && q.Op == ">=":
			c.minDamping = &w
		case q.Metric == "damping" && q.Op == "<=":
			c.maxDamping = &w
		}
	}
	return c
}

// breaks reports whether a closed-loop pole breaks stability or a pole
// requirement. The on-circle tolerance is the analysis's own, carried by
// the pole's Shape. Pure delays at z = 0 are not held to a damping limit,
// as in Loop.MinDamping.
func (c poleChecks) breaks(p pole.Info) bool {
	if p.Shape == pole.Constant || p.Shape == pole.Growing {
		return true
	}
	if c.maxRadius != nil && p.Radius > *c.maxRadius {
		return true
	}
	if c.minRadius != nil && p.Radius < *c.minRadius {
		return true
	}
	if p.Shape != pole.Impulse {
		if c.minDamping != nil && p.Damping < *c.minDamping {
			return true
		}
		if c.maxDamping != nil && p.Damping > *c.maxDamping {
			return true
		}
	}
	return false
}

// openRoots returns the roots of a polynomial of L. A constant has none;
// the zero polynomial (L ≡ 0 has no zeros worth drawing) gives none either.
func openRoots(p []float64, what string) ([]complex128, error) {
	q := trimPoly(p)
	if len(q) <= 1 {
		return nil, nil
	}
	r, err := roots.Find(q)
	if err != nil {
		return nil, fmt.Errorf("plot: open-loop %s: %w", what, err)
	}
	out := make([]complex128, 0, len(r.Roots))
	for _, z := range r.Roots {
		if !cmplx.IsNaN(z) && !cmplx.IsInf(z) {
			out = append(out, z)
		}
	}
	return out, nil
}

func trimPoly(p []float64) []float64 {
	n := len(p)
	for n > 0 && p[n-1] == 0 {
		n--
	}
	return p[:n]
}

func xys(zs []complex128) plotter.XYs {
	out := make(plotter.XYs, len(zs))
	for i, z := range zs {
		out[i] = plotter.XY{X: real(z), Y: imag(z)}
	}
	return out
}

func circleXYs(r float64) plotter.XYs {
	out := make(plotter.XYs, circlePoints+1)
	for i := range out {
		s, c := math.Sincos(2 * math.Pi * float64(i) / circlePoints)
		out[i] = plotter.XY{X: r * c, Y: r * s}
	}
	return out
}

// dampingCurve is the locus of constant damping ratio ζ (0 < ζ < 1):
// z = e^{sT} with s = ωn(−ζ ± j√(1−ζ²)), i.e. |z| = exp(−θζ/√(1−ζ²)) at
// angle θ ∈ [−π, π]. Poles inside the curve (nearer the origin) are
// better damped.
func dampingCurve(zeta float64) plotter.XYs {
	k := zeta / math.Sqrt(1-zeta*zeta)
	out := make(plotter.XYs, circlePoints+1)
	for i := range out {
		th := -math.Pi + 2*math.Pi*float64(i)/circlePoints
		r := math.Exp(-math.Abs(th) * k)
		s, c := math.Sincos(th)
		out[i] = plotter.XY{X: r * c, Y: r * s}
	}
	return out
}

// openPolesZeros returns L's poles and zeros: those of its blocks, as the
// analysis found them (L is their product, nothing cancelled), or the roots
// of L's polynomials for a loop without a block model.
func openPolesZeros(l *analysis.Loop) (poles, zeros []complex128, err error) {
	if m := l.Model; m != nil {
		for _, b := range append(append([]lti.Factored(nil), m.Forward...), m.Feedback...) {
			poles = append(poles, b.Poles...)
			if !b.IsZero() {
				zeros = append(zeros, b.Zeros...)
			}
		}
		return poles, zeros, nil
	}
	if poles, err = openRoots(l.Open.Den, "poles"); err != nil {
		return nil, nil, err
	}
	zeros, err = openRoots(l.Open.Num, "zeros")
	return poles, zeros, err
}

func newZPlane(l *analysis.Loop) (*zPlane, error) {
	open, zeros, err := openPolesZeros(l)
	if err != nil {
		return nil, err
	}
	zp := &zPlane{open: open, zeros: zeros, halfSpan: zMinHalfSpan, checks: checksOf(l), loop: l}
	checks := zp.checks
	for _, p := range l.Poles {
		if cmplx.IsNaN(p.Z) || cmplx.IsInf(p.Z) {
			return nil, fmt.Errorf("plot: loop %s has a non-finite closed-loop pole", l.Name)
		}
		zp.closed = append(zp.closed, p.Z)
		if checks.breaks(p) {
			zp.violating = append(zp.violating, p.Z)
		}
	}
	zp.rounded, zp.realized = realizedPoles(l)
	for _, set := range [][]complex128{zp.closed, zp.open, zp.zeros, zp.rounded, zp.realized} {
		for _, z := range set {
			zp.halfSpan = math.Max(zp.halfSpan, zMargin*math.Max(math.Abs(real(z)), math.Abs(imag(z))))
		}
	}
	if err := zp.build("z-plane (closed-loop and open-loop)", circleXYs); err != nil {
		return nil, err
	}
	zp.setView(1, 1)
	return zp, nil
}

// build draws the panel: axes, unit circle and requirement limits (curves
// from circle), and the markers.
func (zp *zPlane) build(title string, circle func(r float64) plotter.XYs) error {
	checks := zp.checks
	p := newPlot()
	p.Title.Text = title
	p.X.Label.Text = "Re z"
	p.Y.Label.Text = "Im z"
	p.Add(plotter.NewGrid())

	axisStyle := draw.LineStyle{Color: colGrid, Width: vg.Points(refWidth)}
	h := zp.halfSpan * 4 // the axes run past any view
	cx, cy := real(zp.center), imag(zp.center)
	for _, seg := range []plotter.XYs{{{X: cx - h, Y: 0}, {X: cx + h, Y: 0}}, {{X: 0, Y: cy - h}, {X: 0, Y: cy + h}}} {
		ln, err := plotter.NewLine(seg)
		if err != nil {
			return err
		}
		ln.LineStyle = axisStyle
		p.Add(ln)
	}

	circ, err := plotter.NewLine(circle(1))
	if err != nil {
		return err
	}
	circ.LineStyle = draw.LineStyle{Color: colCircle, Width: vg.Points(refWidth * 1.5)}
	p.Add(circ)
	zp.legend = append(zp.legend, legendItem{"unit circle", circ})

	if r := checks.maxRadius; r != nil && *r > 0 && !math.IsInf(*r, 0) {
		lim, err := plotter.NewLine(circle(*r))
		if err != nil {
			return err
		}
		lim.LineStyle = draw.LineStyle{Color: colLimit, Width: vg.Points(refWidth), Dashes: dashed()}
		p.Add(lim)
		zp.legend = append(zp.legend, legendItem{"radius limit " + analysis.FormatNumber(*r), lim})
	}
	if z := checks.minDamping; z != nil && *z > 0 && *z < 1 {
		lim, err := plotter.NewLine(dampingCurve(*z))
		if err != nil {
			return err
		}
		lim.LineStyle = draw.LineStyle{Color: colLimit, Width: vg.Points(refWidth), Dashes: dotted()}
		p.Add(lim)
		zp.legend = append(zp.legend, legendItem{"damping limit ζ = " + analysis.FormatNumber(*z), lim})
	}

	if zp.loop != nil { // the full view: the vary region too
		if err := zp.addRegion(p, zp.loop); err != nil {
			return err
		}
	}
	scatter := func(zs []complex128, g draw.GlyphDrawer, col color.Color, r float64, text string) error {
		if len(zs) == 0 {
			return nil
		}
		s, err := plotter.NewScatter(xys(zs))
		if err != nil {
			return err
		}
		s.GlyphStyle = draw.GlyphStyle{Color: col, Radius: vg.Points(r), Shape: g}
		p.Add(s)
		zp.legend = append(zp.legend, legendItem{text, s})
		return nil
	}
	if err := scatter(zp.open, crossGlyph{vg.Points(glyphStroke)}, colOpenPole, markerSize+0.5, "open-loop pole (of L)"); err != nil {
		return err
	}
	if err := scatter(zp.zeros, ringGlyph{vg.Points(glyphStroke)}, colOpenZero, markerSize+0.5, "open-loop zero (of L)"); err != nil {
		return err
	}
	if err := scatter(zp.closed, draw.CircleGlyph{}, colClosedPole, markerSize, "closed-loop pole"); err != nil {
		return err
	}
	if err := scatter(zp.rounded, draw.SquareGlyph{}, colRealized, markerSize-0.5, "rounded block pole (realize)"); err != nil {
		return err
	}
	if err := scatter(zp.realized, draw.TriangleGlyph{}, colRealized, markerSize, "closed-loop pole, realized blocks"); err != nil {
		return err
	}
	if err := scatter(zp.violating, ringGlyph{vg.Points(glyphStroke + 0.4)}, colViolation, violationSize, "breaks a requirement"); err != nil {
		return err
	}
	zp.plot = p
	return nil
}

// realizedPoles returns the rounded poles of the loop's realized blocks and
// the closed-loop poles of the loop with them in place, as the analysis
// computed them (finite ones only).
func realizedPoles(l *analysis.Loop) (rounded, closed []complex128) {
	if l.Realized == nil {
		return nil, nil
	}
	finite := func(z complex128) bool { return !cmplx.IsNaN(z) && !cmplx.IsInf(z) }
	for _, b := range l.Realized.Elements {
		for _, z := range b.Poles {
			if finite(z) {
				rounded = append(rounded, z)
			}
		}
	}
	if f := l.Realized.Figures; f != nil && f.OK {
		for _, p := range f.Poles {
			if finite(p.Z) {
				closed = append(closed, p.Z)
			}
		}
	}
	return rounded, closed
}

// setView sets the axis ranges so that one data unit has the same length
// on both axes for a data area w wide and h high (any unit): the shorter
// side shows [−halfSpan, halfSpan], the longer side proportionally more.
func (zp *zPlane) setView(w, h float64) {
	hx, hy := zp.halfSpan, zp.halfSpan
	if w > h {
		hx *= w / h
	} else {
		hy *= h / w
	}
	cx, cy := real(zp.center), imag(zp.center)
	zp.plot.X.Min, zp.plot.X.Max = cx-hx, cx+hx
	zp.plot.Y.Min, zp.plot.Y.Max = cy-hy, cy+hy
}

// equalScale fixes the ranges for the tile c. The data area depends on the
// width of the tick labels, which depends on the ranges, so a few rounds
// are run until the area stops moving (it settles in one or two).
func (zp *zPlane) equalScale(c draw.Canvas) draw.Canvas {
	var dc draw.Canvas
	for range 6 {
		dc = zp.plot.DataCanvas(c)
		w, h := float64(dc.Max.X-dc.Min.X), float64(dc.Max.Y-dc.Min.Y)
		if w <= 0 || h <= 0 {
			return dc
		}
		before := [2]float64{zp.plot.X.Max, zp.plot.Y.Max}
		zp.setView(w, h)
		if math.Abs(before[0]-zp.plot.X.Max) < 1e-12*zp.halfSpan && math.Abs(before[1]-zp.plot.Y.Max) < 1e-12*zp.halfSpan {
			break
		}
	}
	return zp.plot.DataCanvas(c)
}
