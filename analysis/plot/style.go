package plot

import (
	"image/color"
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Colours of the figures; the HTML page uses the same ones in its CSS.
var (
	colClosedPole = color.RGBA{R: 0x1f, G: 0x4e, B: 0x9c, A: 0xff} // blue
	colOpenPole   = color.RGBA{R: 0x20, G: 0x20, B: 0x20, A: 0xff} // near black
	colOpenZero   = color.RGBA{R: 0x1a, G: 0x7f, B: 0x37, A: 0xff} // green
	colViolation  = color.RGBA{R: 0xd0, G: 0x10, B: 0x10, A: 0xff} // red
	colCircle     = color.RGBA{R: 0x55, G: 0x55, B: 0x55, A: 0xff}
	colLimit      = color.RGBA{R: 0xc0, G: 0x70, B: 0x00, A: 0xff} // orange: requirement limits
	colCurve      = color.RGBA{R: 0x1f, G: 0x4e, B: 0x9c, A: 0xff}
	colReference  = color.RGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	colMargin     = color.RGBA{R: 0xc0, G: 0x30, B: 0x90, A: 0xff}  // magenta: GM/PM
	colBand       = color.NRGBA{R: 0x1a, G: 0x9f, B: 0x47, A: 0x40} // translucent green
	colGrid       = color.RGBA{R: 0xdd, G: 0xdd, B: 0xdd, A: 0xff}
	colRealized   = color.RGBA{R: 0xc0, G: 0x70, B: 0x00, A: 0xff} // orange: rounded (realized) poles
)

// Line widths and marker sizes, in points.
const (
	curveWidth  = 1.4
	refWidth    = 0.8
	markerSize  = 3.5
	glyphStroke = 1.3
	// violationSize is the radius of the red ring around a pole that
	// breaks a requirement: large enough to surround the pole's marker.
	violationSize = 6.5
)

// sans is the typeface of every text: the Liberation Sans that gonum/plot
// embeds (metrics are exact; browsers fall back to a similar sans face).
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// newPlot returns a plot with sans-serif text of the given tick size.
func newPlot() *gplot.Plot {
	p := gplot.New()
	p.Title.TextStyle.Font = font.From(sans, 10)
	p.Title.Padding = vg.Points(4)
	for _, a := range []*gplot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, 9)
		a.Tick.Label.Font = font.From(sans, 8)
		a.Padding = vg.Points(2)
	}
	p.Legend.TextStyle.Font = font.From(sans, 8)
	p.Legend.ThumbnailWidth = vg.Points(14)
	return p
}

// ringGlyph is an unfilled circle with a given stroke width (gonum's
// RingGlyph has a fixed hairline stroke, too thin to read at a glance).
type ringGlyph struct{ width vg.Length }

func (g ringGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: g.width})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}

// crossGlyph is a × with a given stroke width.
type crossGlyph struct{ width vg.Length }

func (g crossGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: g.width})
	r := sty.Radius * 0.85
	var p vg.Path
	p.Move(vg.Point{X: pt.X - r, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y + r})
	p.Move(vg.Point{X: pt.X - r, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y - r})
	c.Stroke(p)
}

func dashed() []vg.Length { return []vg.Length{vg.Points(4), vg.Points(3)} }
func dotted() []vg.Length { return []vg.Length{vg.Points(1.5), vg.Points(2)} }
