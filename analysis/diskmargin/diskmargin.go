// Package diskmargin computes the symmetric (balanced) disk margin of a
// discrete loop with closed loop 1 + L = 0 (loop-format.md, "Disk margin";
// Blight, Dailey and Gangsaas 1994; Seiler, Packard and Gahinet, "An
// Introduction to Disk Margins", IEEE Control Systems Magazine 2020):
//
//	alpha = 1 / max over θ in [0, π] of |S(e^{jθ}) − 1/2|,  S = 1/(1 + L).
//
// The loop stays stable for every simultaneous gain and phase change
// f = (1 + δ/2)/(1 − δ/2) with |δ| < alpha: gains within
// [(1 − α/2)/(1 + α/2), (1 + α/2)/(1 − α/2)] and phases within ±2·atan(α/2).
// For a real L, |S| is even in θ, so [0, π] covers the whole circle.
//
// The package takes L as a function of the angle, so any evaluation of the
// loop (coefficients, factored blocks, a state-space form) plugs in.
package diskmargin

import (
	"errors"
	"math"
	"math/cmplx"
	"sort"

	"ringside/analysis/internal/search"
)

// Response returns L(e^{jθ}) at θ rad/sample, 0 ≤ θ ≤ π. It may return an
// infinite value at a pole of L on the unit circle (S = 0 there).
type Response func(theta float64) complex128

// Margin is a symmetric disk margin.
type Margin struct {
	Alpha float64
	// GainLowDB and GainHighDB bound the simultaneous gain change,
	// 20·log10 of the interval's ends; nil when unbounded (alpha ≥ 2:
	// the low end reaches 0, the high end infinity).
	GainLowDB, GainHighDB *float64
	// PhaseDeg is 2·atan(alpha/2) in degrees: the loop tolerates ±PhaseDeg
	// together with the gain change.
	PhaseDeg float64
	// PeakTheta is the angle (rad/sample) where |S − 1/2| peaks.
	PeakTheta float64
}

const (
	// GridPoints is the uniform part of the search grid over [0, π]. The
	// peak of |S − 1/2| is a resonance of the closed loop; a closed-loop
	// pole at distance d from the circle gives a peak of width about d, so
	// the grid is refined geometrically around poles within NearCircle of
	// the circle (down to d/16), and 2048 uniform points cover the rest.
	GridPoints = 2048
	// NearCircle: closed-loop poles with ||p| − 1| below it get extra grid
	// points around their angle.
	NearCircle = 0.2
	// AngleTol is the width in rad/sample to which golden-section search
	// narrows each local maximum of the grid. At a smooth maximum the value
	// errs by the square of the angle error times the curvature, so the
	// peak (and alpha) is found to far better than 1e-9 relative.
	AngleTol = 1e-10
)

// ErrOnCircle reports a loop with 1 + L = 0 on the unit circle (a
// closed-loop pole on it): it has no disk margin.
var ErrOnCircle = errors.New("diskmargin: 1 + L vanishes on the unit circle")

// Compute returns the disk margin of L. closedPoles are the closed-loop
// poles (the grid is refined near those close to the circle); the caller
// must know the loop to be stable, since alpha says nothing otherwise.
func Compute(L Response, closedPoles []complex128) (Margin, error) {
	f := func(th float64) float64 { return distance(L(th)) }
	grid := searchGrid(closedPoles)
	vals := make([]float64, len(grid))
	for i, th := range grid {
		vals[i] = f(th)
		if math.IsInf(vals[i], 1) || math.IsNaN(vals[i]) {
			return Margin{}, ErrOnCircle
		}
	}
	best, bestTh := -1.0, 0.0
	for i := range grid {
		if (i > 0 && vals[i] < vals[i-1]) || (i < len(grid)-1 && vals[i] < vals[i+1]) {
			continue // not a local maximum of the grid
		}
		th, v := grid[i], vals[i]
		if i > 0 && i < len(grid)-1 {
			t := search.GoldenMax(f, grid[i-1], grid[i+1], AngleTol)
			if ft := f(t); ft > v {
				th, v = t, ft
			}
		}
		if v > best {
			best, bestTh = v, th
		}
	}
	if math.IsInf(best, 1) || math.IsNaN(best) {
		return Margin{}, ErrOnCircle
	}
	return FromAlpha(1/best, bestTh), nil
}

// FromAlpha fills in the gain and phase ranges of a disk margin alpha.
func FromAlpha(alpha, peakTheta float64) Margin {
	m := Margin{Alpha: alpha, PhaseDeg: 2 * math.Atan(alpha/2) * 180 / math.Pi, PeakTheta: peakTheta}
	if alpha < 2 {
		lo := 20 * math.Log10((1-alpha/2)/(1+alpha/2))
		hi := -lo
		m.GainLowDB, m.GainHighDB = &lo, &hi
	}
	return m
}

// distance is |S − 1/2| = |1 − L| / (2|1 + L|), written so that a pole of L
// on the circle (L infinite, S = 0) gives 1/2.
func distance(l complex128) float64 {
	if cmplx.IsInf(l) {
		return 0.5
	}
	if cmplx.Abs(l) > 1e150 { // (1 − L)/(1 + L) → −1 without overflow
		return 0.5 * cmplx.Abs((1/l-1)/(1/l+1))
	}
	return cmplx.Abs(1-l) / (2 * cmplx.Abs(1+l))
}

func searchGrid(poles []complex128) []float64 {
	g := make([]float64, 0, GridPoints+64)
	for i := 0; i <= GridPoints; i++ {
		g = append(g, math.Pi*float64(i)/GridPoints)
	}
	for _, p := range poles {
		d := math.Abs(cmplx.Abs(p) - 1)
		if d >= NearCircle {
			continue
		}
		phi := math.Abs(cmplx.Phase(p))
		g = append(g, phi)
		for s := math.Max(d, 1e-12) / 16; s < 2*NearCircle; s *= 1.5 {
			g = append(g, phi-s, phi+s)
		}
	}
	sort.Float64s(g)
	out := g[:0]
	for _, th := range g {
		if th < 0 || th > math.Pi || (len(out) > 0 && th-out[len(out)-1] < 1e-14) {
			continue
		}
		out = append(out, th)
	}
	return out
}
