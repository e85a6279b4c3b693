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
// The package finds the peak of |S − 1/2| sampled on a grid the caller
// evaluated (package freq samples each loop once, on the grid its margins
// use, for the margins, the peak sensitivity and the disk margin).
package diskmargin

import (
	"errors"
	"math"

	"ringside/analysis/internal/search"
	"ringside/analysis/poly"
)

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
	// AngleTol is the width in rad/sample (plus √ε relative) to which Brent's method
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

// FromGrid returns the disk margin from |S − 1/2| sampled on a sorted grid
// of angles over [0, π] (vals[i] at grid[i]) dense enough to bracket its
// peak, with f evaluating |S − 1/2| anywhere (DistanceND): each local
// maximum of the samples is refined by Brent's method between its
// neighbours, to AngleTol. The margins' own grid (package freq) serves, so
// a loop's response is evaluated once for both.
func FromGrid(grid, vals []float64, f func(float64) float64) (Margin, error) {
	best, bestTh := -1.0, 0.0
	last := len(grid) - 1
	for i, v := range vals {
		if math.IsInf(v, 1) || math.IsNaN(v) {
			return Margin{}, ErrOnCircle
		}
		left := i == 0 || v >= vals[i-1]
		right := i == last || v >= vals[i+1]
		if !left || !right || i > 0 && i < last && v == vals[i-1] && v == vals[i+1] {
			continue // not a local maximum, or a flat stretch (nothing to refine)
		}
		t, val := grid[i], v
		if i > 0 && i < last {
			if u := search.BrentMax(f, grid[i-1], grid[i+1], AngleTol); f(u) > val {
				t, val = u, f(u)
			}
		}
		if val > best {
			best, bestTh = val, t
		}
	}
	if best < 0 && len(vals) > 0 { // flat everywhere: any point is the peak
		best, bestTh = vals[last], grid[last]
	}
	if math.IsInf(best, 1) || math.IsNaN(best) {
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

// DistanceND is |S − 1/2| for L = N/D given apart: |D − N| / (2|D + N|),
// which is 1/2 at a pole of L (D = 0) and +Inf where 1 + L = 0. N and D
// are first scaled together by a power of two so that their squares
// neither overflow nor underflow.
func DistanceND(n, d complex128) float64 {
	a, b := d-n, d+n
	if m := math.Max(maxPart(a), maxPart(b)); m > 0x1p500 || m < 0x1p-500 {
		if m == 0 {
			return math.NaN() // N = D = 0: no value
		}
		_, e := math.Frexp(m)
		a, b = poly.LdexpC(a, -e), poly.LdexpC(b, -e)
	}
	return math.Sqrt(sq(a)/sq(b)) / 2
}

func maxPart(c complex128) float64 { return math.Max(math.Abs(real(c)), math.Abs(imag(c))) }

// sq is |c|².
func sq(c complex128) float64 {
	return real(c)*real(c) + imag(c)*imag(c)
}
