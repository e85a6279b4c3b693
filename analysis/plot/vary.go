package plot

import (
	"image/color"
	"math"
	"math/cmplx"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
	"ringside/analysis/freq"
)

// colRange is the colour of what a loop's varying gains sweep: the region of
// closed-loop poles and the envelope of the Bode curves (light blue).
var colRange = color.RGBA{R: 0x8c, G: 0xb8, B: 0xe8, A: 0xff}

// addRegion draws the closed-loop poles at the points of the box the robust
// analysis examined (corners, samples along the edges or the grid, the
// worst point): the region the poles sweep as the varying gains move.
func (zp *zPlane) addRegion(p *gplot.Plot, l *analysis.Loop) error {
	if l.Robust == nil || len(l.Robust.Region) == 0 {
		return nil
	}
	var zs []complex128
	for _, z := range l.Robust.Region {
		if cmplx.IsNaN(z) || cmplx.IsInf(z) {
			continue
		}
		zs = append(zs, z)
		zp.halfSpan = math.Max(zp.halfSpan, zMargin*math.Max(math.Abs(real(z)), math.Abs(imag(z))))
	}
	if len(zs) == 0 {
		return nil
	}
	s, err := plotter.NewScatter(xys(zs))
	if err != nil {
		return err
	}
	s.GlyphStyle = draw.GlyphStyle{Color: colRange, Radius: vg.Points(markerSize * 0.6), Shape: draw.CircleGlyph{}}
	p.Add(s)
	zp.legend = append(zp.legend, legendItem{"poles over the vary range", s})
	return nil
}

// addEnvelope draws, for a loop with varying gains, the smallest and largest
// |L| and arg L over the family of open loops the robust analysis kept.
func addEnvelope(mag, phase *gplot.Plot, l *analysis.Loop, T float64, hz []float64) error {
	if l.Robust == nil || len(l.Robust.Family) == 0 {
		return nil
	}
	n := len(hz)
	lo := [2][]float64{make([]float64, n), make([]float64, n)}
	hi := [2][]float64{make([]float64, n), make([]float64, n)}
	for k := 0; k < 2; k++ {
		for i := range hz {
			lo[k][i], hi[k][i] = math.Inf(1), math.Inf(-1)
		}
	}
	for _, L := range l.Robust.Family {
		m, ph := freq.Response(L, T, hz)
		for i := range hz {
			for k, v := range [2]float64{m[i], ph[i]} {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					lo[k][i], hi[k][i] = math.Min(lo[k][i], v), math.Max(hi[k][i], v)
				}
			}
		}
	}
	sty := draw.LineStyle{Color: colRange, Width: vg.Points(curveWidth)}
	for k, p := range []*gplot.Plot{mag, phase} {
		floor := math.Inf(-1)
		if k == 0 {
			floor = magFloorDB
		}
		for _, ys := range [][]float64{lo[k], hi[k]} {
			for _, s := range segments(hz, ys, floor) {
				if err := addLine(p, s, sty); err != nil {
					return err
				}
			}
		}
	}
	return nil
}
