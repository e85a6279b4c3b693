package plot

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"ringside/analysis"
)

const (
	// zCrowd is the distance, as a share of the full view's half-width,
	// below which two markers overlap on the full z-plane: a marker is
	// about 3.5 pt across a data area of about 250 pt (2.5 half-widths),
	// so points nearer than 2 % of the half-width merge.
	zCrowd = 0.02
	// zZoomMin: a zoom that would magnify less than this is not worth a
	// panel (the crowd is already apart on the full view).
	zZoomMin = 4.0
	// zZoomMargin widens the zoomed view beyond the crowd's farthest point.
	zZoomMargin = 1.4
	// zZoomTiny is the smallest half-width of a zoom: points closer than
	// this (relative to their distance from the origin) are one point,
	// as a double pole is; no zoom tells them apart.
	zZoomTiny = 1e-9
	// arcPoints draws the part of a circle inside a zoomed view.
	arcPoints = 400
)

// crowd finds the points that overlap the dominant closed-loop pole (the
// one of largest radius, the slowest or least damped mode) on the full
// view, by single linkage: every point within zCrowd·halfSpan of one
// already in the crowd joins it. It returns the centre and half-width of
// a view that holds them, and false when they do not crowd (a single
// point, coincident points, or a zoom of less than zZoomMin).
func (zp *zPlane) crowd() (center complex128, half float64, ok bool) {
	if len(zp.closed) == 0 {
		return 0, 0, false
	}
	dom := zp.closed[0]
	for _, z := range zp.closed {
		if cmplx.Abs(z) > cmplx.Abs(dom) {
			dom = z
		}
	}
	all := append(append(append([]complex128{}, zp.closed...), zp.open...), zp.zeros...)
	reach := zCrowd * zp.halfSpan
	in := []complex128{dom}
	used := make([]bool, len(all))
	for grew := true; grew; {
		grew = false
		for i, z := range all {
			if used[i] {
				continue
			}
			for _, c := range in {
				if cmplx.Abs(z-c) < reach {
					used[i], grew = true, true
					in = append(in, z)
					break
				}
			}
		}
	}
	minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, z := range in {
		minX, maxX = math.Min(minX, real(z)), math.Max(maxX, real(z))
		minY, maxY = math.Min(minY, imag(z)), math.Max(maxY, imag(z))
	}
	center = complex((minX+maxX)/2, (minY+maxY)/2)
	half = zZoomMargin * math.Max(maxX-minX, maxY-minY) / 2
	if half <= zZoomTiny*math.Max(1, cmplx.Abs(center)) || zp.halfSpan/half < zZoomMin {
		return 0, 0, false
	}
	return center, half, true
}

// zoomed returns the panel of the crowded region around the dominant
// poles, or nil when nothing crowds. Its title gives the magnification and
// the view's width, and its curves are drawn finely over the view (the
// full circle's chords would show at this scale).
func (zp *zPlane) zoomed() (*zPlane, error) {
	c, half, ok := zp.crowd()
	if !ok {
		return nil, nil
	}
	z := &zPlane{closed: zp.closed, open: zp.open, zeros: zp.zeros, violating: zp.violating,
		rounded: zp.rounded, realized: zp.realized, halfSpan: half, center: c, checks: zp.checks}
	title := fmt.Sprintf("zoom ×%s near z = %s (view %s wide)", analysis.FormatNumber(roundSig(zp.halfSpan/half)),
		analysis.FormatComplex(c), analysis.FormatNumber(roundSig(2*half)))
	if err := z.build(title, func(r float64) plotter.XYs { return arcXYs(r, c, half) }); err != nil {
		return nil, err
	}
	z.setView(1, 1)
	return z, nil
}

// arcXYs is the arc of the circle of radius r that can fall inside a view
// of half-width half around c (with room for a wider-than-square data
// area); the whole circle, finely, when c is near the origin.
func arcXYs(r float64, c complex128, half float64) plotter.XYs {
	if cmplx.Abs(c) <= 4*half {
		return fineCircle(r, -math.Pi, math.Pi)
	}
	mid := cmplx.Phase(c)
	span := math.Min(math.Pi, 6*half/cmplx.Abs(c))
	return fineCircle(r, mid-span, mid+span)
}

func fineCircle(r, from, to float64) plotter.XYs {
	out := make(plotter.XYs, arcPoints+1)
	for i := range out {
		s, co := math.Sincos(from + (to-from)*float64(i)/arcPoints)
		out[i] = plotter.XY{X: r * co, Y: r * s}
	}
	return out
}

// markRegion outlines on the full view the square the zoom shows.
func (zp *zPlane) markRegion(z *zPlane) error {
	c, h := z.center, z.halfSpan
	box, err := plotter.NewLine(plotter.XYs{
		{X: real(c) - h, Y: imag(c) - h}, {X: real(c) + h, Y: imag(c) - h},
		{X: real(c) + h, Y: imag(c) + h}, {X: real(c) - h, Y: imag(c) + h}, {X: real(c) - h, Y: imag(c) - h},
	})
	if err != nil {
		return err
	}
	box.LineStyle = draw.LineStyle{Color: colMargin, Width: vg.Points(refWidth)}
	zp.plot.Add(box)
	zp.legend = append(zp.legend, legendItem{"region of the zoom", box})
	return nil
}
