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

	"ringside/analysis/internal/anglegrid"
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
	// the circle (down to d/16), and 512 uniform points cover the rest:
	// every other pole lies at least NearCircle = 0.2 from the circle, so
	// its features are at least about 0.2 rad wide, some 30 grid steps
	// (π/512 ≈ 0.006 rad) across.
	GridPoints = 512
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

// ErrUnbounded reports L = 1 on the whole circle (a static loop of gain
// one): |S − 1/2| vanishes everywhere and no disk of changes destabilises
// it, so there is no finite alpha.
var ErrUnbounded = errors.New("diskmargin: L = 1 at every frequency, the disk margin is unbounded")

// Compute returns the disk margin of L. closedPoles are the closed-loop
// poles (the grid is refined near those close to the circle); the caller
// must know the loop to be stable, since alpha says nothing otherwise.
// The grid is walked with a window of three points, so a check of many
// loops allocates next to nothing here.
func Compute(L Response, closedPoles []complex128) (Margin, error) {
	f := func(th float64) float64 { return distance(L(th)) }
	var th, v [3]float64 // the last three grid points, oldest first
	n := 0
	best, bestTh := -1.0, 0.0
	// peak considers the middle point of the window (or an end of the
	// grid) as a local maximum and refines it.
	peak := func(i int, interior bool) {
		if interior && (v[i] < v[i-1] || v[i] < v[i+1] || v[i] == v[i-1] && v[i] == v[i+1]) {
			return // not a local maximum, or a flat stretch (nothing to refine)
		}
		t, val := th[i], v[i]
		if interior {
			if u := search.GoldenMax(f, th[i-1], th[i+1], AngleTol); f(u) > val {
				t, val = u, f(u)
			}
		}
		if val > best {
			best, bestTh = val, t
		}
	}
	bad := false
	walkGrid(closedPoles, func(t float64) {
		val := f(t)
		if math.IsInf(val, 1) || math.IsNaN(val) {
			bad = true
		}
		th[0], th[1], th[2] = th[1], th[2], t
		v[0], v[1], v[2] = v[1], v[2], val
		n++
		switch {
		case n == 2 && v[1] >= v[2]: // θ = 0, the first point
			peak(1, false)
		case n >= 3:
			peak(1, true)
		}
	})
	if n >= 2 && v[2] >= v[1] { // θ = π, the last point
		peak(2, false)
	}
	if best < 0 && n > 0 { // flat everywhere: any point is the peak
		best, bestTh = v[2], th[2]
	}
	if bad || math.IsInf(best, 1) || math.IsNaN(best) {
		return Margin{}, ErrOnCircle
	}
	if best == 0 {
		return Margin{}, ErrUnbounded
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
	if math.Max(math.Abs(real(l)), math.Abs(imag(l))) > 1e150 { // (1 − L)/(1 + L) → −1 without overflow
		return 0.5 * cmplx.Abs((1/l-1)/(1/l+1))
	}
	return math.Sqrt(sq(1-l)/sq(1+l)) / 2
}

// sq is |c|²; for parts of L within ±1e150 neither square overflows. A |1 + L| below
// 1e-154 squares to 0 and reads as 1 + L = 0 on the circle.
func sq(c complex128) float64 {
	return real(c)*real(c) + imag(c)*imag(c)
}

// clusterReach is where a cluster stops: its gaps (half the offset, at
// ratio 1.5) have grown to the uniform spacing π/GridPoints, so farther
// out the uniform grid is the denser one.
const clusterReach = 2 * math.Pi / GridPoints

// walkGrid calls visit on the search grid in increasing order: GridPoints
// uniform angles over [0, π] merged with geometric clusters around the
// closed-loop poles within NearCircle of the circle (down to a 16th of the
// pole's distance to it), points closer than 1e-14 rad merged.
func walkGrid(poles []complex128, visit func(th float64)) {
	var clusters []anglegrid.Cluster
	for _, p := range poles {
		d := math.Abs(cmplx.Abs(p) - 1)
		if d >= NearCircle {
			continue
		}
		clusters = append(clusters, anglegrid.Cluster{Center: math.Abs(cmplx.Phase(p)), Start: math.Max(d, 1e-12) / 16})
	}
	for _, th := range anglegrid.Build(nil, GridPoints, clusters, clusterReach, nil) {
		visit(th)
	}
}
