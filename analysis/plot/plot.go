// Package plot draws the figures of a checked .loop file with gonum/plot:
// per loop a z-plane map of closed-loop and open-loop poles and zeros, a
// Bode plot of the open loop L with its margins, and the closed-loop step
// response; and an HTML page that gathers every loop of a file.
//
// Everything drawn comes from analysis.Result, open-loop poles and zeros
// included (the blocks' own, from the loop's model); the only numerics here
// are the frequency response on a plotting grid (freq.Response) and, for a
// loop without a model, the roots of L's polynomials.
package plot

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"math"

	xfont "golang.org/x/image/font"
	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"ringside/analysis"
)

// Figure size and raster resolution.
const (
	// FigureWidth and FigureHeight are the size of one loop's figure.
	FigureWidth  = 12 * vg.Inch
	FigureHeight = 4.6 * vg.Inch
	// PNGDPI is the resolution of LoopPNG: 96 dots per inch, so the image
	// is FigureWidth·96/72 by FigureHeight·96/72 pixels (1152 × 442).
	PNGDPI = 96
)

// Layout, in points.
const (
	titleHeight  = 22
	panelGap     = 14
	legendRowH   = 12
	legendMargin = 6
	// zColumnShare caps the z-plane column at this share of the width.
	zColumnShare = 0.3
	// zoomColumn is what a zoomed z-plane adds to the figure's width.
	zoomColumn = 3.9 * vg.Inch
)

// Figure is one loop's three panels. The plots are ordinary gonum plots
// and may be restyled before drawing.
type Figure struct {
	// Title is the loop name and its verdict.
	Title string
	// ZPlane shows the unit circle, the closed-loop poles, the poles and
	// zeros of L, and rings around closed-loop poles that break stability
	// or a radius or damping requirement.
	ZPlane *gplot.Plot
	// Magnitude and Phase are the Bode plot of L with the margins.
	Magnitude, Phase *gplot.Plot
	// Zoom is a magnified z-plane around the dominant closed-loop poles
	// when they crowd on the full view (fast-sampled loops put every pole
	// near z = 1); nil otherwise. Its title gives the scale.
	Zoom *gplot.Plot
	// Step is the closed-loop step response; for a loop that is not
	// stable, its first samples, clipped and labelled unstable.
	Step *gplot.Plot
	// Width and Height are the size the figure is drawn at by LoopSVG and
	// LoopPNG.
	Width, Height vg.Length

	zp, zoom *zPlane
	// Data areas of the plots at the last Draw (for tests that map data
	// coordinates to the drawing).
	zData, zoomData, magData, phaseData, stepData draw.Canvas
	legend                                        []legendItem // below the z-plane, in two columns
	stepLegend                                    []legendItem // below the step response
}

// LoopFigure builds the figure of loop l of res. It fails when the loop was
// not analysed (l.OK false), the file has no valid sample period, or the
// open-loop roots or response cannot be computed.
func LoopFigure(res *analysis.Result, l *analysis.Loop) (*Figure, error) {
	if res == nil || l == nil {
		return nil, errors.New("plot: no result or no loop given")
	}
	if !l.OK {
		return nil, fmt.Errorf("plot: loop %s was not analysed (see the errors)", l.Name)
	}
	if !(res.SampleT > 0) || math.IsInf(res.SampleT, 0) {
		return nil, fmt.Errorf("plot: loop %s: the file has no valid sample period", l.Name)
	}
	if !polyFinite(l.Open.Num) || !polyFinite(l.Open.Den) || len(trimPoly(l.Open.Den)) == 0 {
		return nil, fmt.Errorf("plot: loop %s: the open loop L has a zero denominator or a non-finite coefficient", l.Name)
	}
	zp, err := newZPlane(l)
	if err != nil {
		return nil, err
	}
	zoom, err := zp.zoomed()
	if err != nil {
		return nil, err
	}
	bd, err := newBode(res, l)
	if err != nil {
		return nil, err
	}
	sp, stepLegend, err := newStepPlot(l, res.SampleT)
	if err != nil {
		return nil, err
	}
	f := &Figure{
		Title:      l.Name + ": " + l.Verdict(),
		ZPlane:     zp.plot,
		Magnitude:  bd.mag,
		Phase:      bd.phase,
		Step:       sp,
		Width:      FigureWidth,
		Height:     FigureHeight,
		zp:         zp,
		legend:     zp.legend,
		stepLegend: stepLegend,
	}
	if zoom != nil {
		f.Zoom, f.zoom = zoom.plot, zoom
		f.Width += zoomColumn
		if err := zp.markRegion(zoom); err != nil {
			return nil, err
		}
		f.legend = zp.legend
	}
	return f, nil
}

func polyFinite(p []float64) bool {
	for _, v := range p {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// layout holds the tiles of the figure for a canvas.
type layout struct {
	title       draw.Canvas
	zplane      draw.Canvas
	zoom        draw.Canvas
	legendLeft  draw.Canvas
	legendRight draw.Canvas
	bode        draw.Canvas
	step        draw.Canvas
	stepLegend  draw.Canvas
}

func (f *Figure) layout(c draw.Canvas) layout {
	var lo layout
	lo.title = c
	lo.title.Min.Y = c.Max.Y - titleHeight
	body := c
	body.Max.Y -= titleHeight
	rows := max((len(f.legend)+1)/2, len(f.stepLegend))
	legendH := vg.Length(rows*legendRowH + 2*legendMargin)
	bodyW, bodyH := body.Max.X-body.Min.X, body.Max.Y-body.Min.Y
	if f.zoom != nil {
		bodyW -= zoomColumn
	}
	zw := min(bodyH-legendH, vg.Length(zColumnShare)*bodyW)

	lo.zplane = body
	lo.zplane.Max.X = body.Min.X + zw
	lo.zplane.Min.Y = body.Min.Y + legendH
	leg := body
	leg.Max.X = body.Min.X + zw
	leg.Max.Y = body.Min.Y + legendH - legendMargin
	leg.Min.Y = body.Min.Y + legendMargin
	lo.legendLeft, lo.legendRight = leg, leg
	lo.legendLeft.Min.X += legendMargin
	lo.legendLeft.Max.X = leg.Min.X + zw/2
	lo.legendRight.Min.X = leg.Min.X + zw/2

	restX := body.Min.X + zw + panelGap
	if f.zoom != nil {
		lo.zoom = lo.zplane
		lo.zoom.Min.X, lo.zoom.Max.X = restX, restX+zoomColumn-panelGap
		restX += zoomColumn
	}
	colW := (body.Max.X - restX - panelGap) / 2
	lo.bode = body
	lo.bode.Min.X, lo.bode.Max.X = restX, restX+colW
	lo.step = body
	lo.step.Min.X = restX + colW + panelGap
	lo.step.Min.Y = body.Min.Y + legendH
	lo.stepLegend = leg
	lo.stepLegend.Min.X = lo.step.Min.X + legendMargin
	lo.stepLegend.Max.X = body.Max.X
	return lo
}

// Draw draws the figure onto c. It sets the z-plane's axis ranges so that
// one unit is as long on both axes in c (the unit circle is round).
func (f *Figure) Draw(c draw.Canvas) {
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	lo := f.layout(c)

	ts := text.Style{
		Color:   color.Black,
		Font:    font.From(sans, 13),
		XAlign:  draw.XCenter,
		YAlign:  draw.YCenter,
		Handler: gplot.DefaultTextHandler,
	}
	ts.Font.Weight = xfont.WeightBold
	lo.title.FillText(ts, lo.title.Center(), f.Title)

	if f.zp != nil {
		f.zData = f.zp.equalScale(lo.zplane)
	}
	f.ZPlane.Draw(lo.zplane)
	if f.zoom != nil {
		f.zoomData = f.zoom.equalScale(lo.zoom)
		f.Zoom.Draw(lo.zoom)
	}
	half := (len(f.legend) + 1) / 2
	drawLegend(lo.legendLeft, f.legend[:half])
	drawLegend(lo.legendRight, f.legend[half:])
	drawLegend(lo.stepLegend, f.stepLegend)

	tiles := gplot.Align([][]*gplot.Plot{{f.Magnitude}, {f.Phase}}, draw.Tiles{Rows: 2, Cols: 1, PadY: vg.Points(4)}, lo.bode)
	f.Magnitude.Draw(tiles[0][0])
	f.Phase.Draw(tiles[1][0])
	f.Step.Draw(lo.step)
	f.magData = f.Magnitude.DataCanvas(tiles[0][0])
	f.phaseData = f.Phase.DataCanvas(tiles[1][0])
	f.stepData = f.Step.DataCanvas(lo.step)
}

// drawLegend draws legend entries top-down into c.
func drawLegend(c draw.Canvas, items []legendItem) {
	lg := gplot.NewLegend()
	lg.TextStyle.Font = font.From(sans, 8)
	lg.Top, lg.Left = true, true
	lg.ThumbnailWidth = vg.Points(14)
	lg.Padding = vg.Points(2)
	for _, it := range items {
		if it.thumb == nil {
			lg.Add(it.text)
		} else {
			lg.Add(it.text, it.thumb)
		}
	}
	lg.Draw(c)
}

// LoopSVG draws loop l's figure as an SVG document.
func LoopSVG(res *analysis.Result, l *analysis.Loop) ([]byte, error) {
	f, err := LoopFigure(res, l)
	if err != nil {
		return nil, err
	}
	return f.SVG()
}

// LoopPNG draws loop l's figure as a PNG image of PNGDPI dots per inch.
func LoopPNG(res *analysis.Result, l *analysis.Loop) ([]byte, error) {
	f, err := LoopFigure(res, l)
	if err != nil {
		return nil, err
	}
	return f.PNG()
}

// SVG draws the figure at its Width and Height as an SVG document.
func (f *Figure) SVG() ([]byte, error) {
	c := vgsvg.New(f.Width, f.Height)
	f.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("plot: writing SVG: %w", err)
	}
	return buf.Bytes(), nil
}

// PNG draws the figure at its Width and Height as a PNG image.
func (f *Figure) PNG() ([]byte, error) {
	c := vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(PNGDPI))
	f.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("plot: writing PNG: %w", err)
	}
	return buf.Bytes(), nil
}
