// Package pole describes one pole of a discrete-time transfer function in
// the words and units an engineer reads: radius, angle, frequency, damping,
// time constant and the shape of the mode it produces.
//
// The equivalent continuous pole is s = ln(z)/T (principal logarithm), so a
// pole at z = r·e^{iθ} stands for s = (ln r + iθ)/T: frequency |θ|/(2πT),
// damping ratio ζ = −Re(s)/|s|, time constant −1/Re(s).
package pole

import (
	"math"
	"math/cmplx"
	"strconv"
)

// Shape is the kind of mode a pole produces.
type Shape int

const (
	// Impulse is z = 0: a pure delay, the mode lasts one sample.
	Impulse Shape = iota
	// Decaying is 0 < |z| < 1 (outside the on-circle tolerance).
	Decaying
	// Constant is |z| within the tolerance of 1: the mode neither decays
	// nor grows.
	Constant
	// Growing is |z| > 1 (outside the tolerance): unstable.
	Growing
)

// String names the shape in one lower-case word.
func (s Shape) String() string {
	switch s {
	case Impulse:
		return "impulse"
	case Decaying:
		return "decaying"
	case Constant:
		return "constant"
	case Growing:
		return "growing"
	}
	return "Shape(" + strconv.Itoa(int(s)) + ")"
}

// Info describes a pole z for sample period T seconds.
type Info struct {
	Z complex128
	// Radius is |z|; AngleRad is arg z in rad/sample, in (−π, π].
	Radius, AngleRad float64
	// FreqHz is |arg z| / (2πT).
	FreqHz float64
	// Damping is ζ = −Re(s)/|s| of s = ln(z)/T: 1 on the positive real axis
	// inside the circle and, by convention, for z = 0; 0 for a Constant
	// pole (so it agrees with Shape); negative for growing modes.
	Damping float64
	// NaturalRadS is |s| in rad/s (+Inf for z = 0).
	NaturalRadS float64
	// TimeConstantS is −1/Re(s) = −T/ln|z|: 0 for z = 0, +Inf for a
	// Constant pole, negative for a growing mode (then −TimeConstantS is
	// the e-folding time of the growth).
	TimeConstantS float64
	Shape         Shape
	// Alternating: a negative real pole, whose mode flips sign each sample.
	Alternating bool
	// Oscillating: a complex pole (Im z ≠ 0).
	Oscillating bool
}

// Describe describes the pole z for sample period T > 0. A pole with
// ||z| − 1| ≤ onCircleTol counts as Constant. For T ≤ 0 or non-finite T the
// time-based fields (FreqHz, NaturalRadS, TimeConstantS) are NaN rather
// than a made-up number; the same holds for a non-finite z in every field
// but Z.
func Describe(z complex128, T float64, onCircleTol float64) Info {
	in := Info{Z: z}
	if cmplx.IsNaN(z) || cmplx.IsInf(z) {
		nan := math.NaN()
		in.Radius, in.AngleRad, in.FreqHz, in.Damping = nan, nan, nan, nan
		in.NaturalRadS, in.TimeConstantS = nan, nan
		in.Shape = Growing
		return in
	}
	in.Radius = cmplx.Abs(z)
	in.AngleRad = cmplx.Phase(z)
	if in.AngleRad == -math.Pi {
		in.AngleRad = math.Pi // −1 − 0i: keep the interval (−π, π]
	}
	in.Alternating = imag(z) == 0 && real(z) < 0
	in.Oscillating = imag(z) != 0
	goodT := T > 0 && !math.IsInf(T, 1)
	timeNaN := func(v float64) float64 {
		if !goodT {
			return math.NaN()
		}
		return v
	}
	if z == 0 {
		in.Shape = Impulse
		in.Damping = 1
		in.NaturalRadS = timeNaN(math.Inf(1))
		in.TimeConstantS = timeNaN(0)
		in.FreqHz = timeNaN(0)
		in.AngleRad = 0
		return in
	}
	in.FreqHz = timeNaN(math.Abs(in.AngleRad) / (2 * math.Pi * T))
	lnr := math.Log(in.Radius)
	mag := math.Hypot(lnr, in.AngleRad) // |s|·T
	in.NaturalRadS = timeNaN(mag / T)
	switch {
	case math.Abs(in.Radius-1) <= onCircleTol:
		in.Shape = Constant
		in.Damping = 0
		in.TimeConstantS = timeNaN(math.Inf(1))
		return in
	case in.Radius < 1:
		in.Shape = Decaying
	default:
		in.Shape = Growing
	}
	in.Damping = -lnr / mag
	in.TimeConstantS = timeNaN(-T / lnr)
	return in
}

// ShapeText describes the mode in plain words, for example "decaying
// oscillation at 12.5 Hz" or "growing, alternating sign each sample".
func (i Info) ShapeText() string {
	freq := ""
	if !math.IsNaN(i.FreqHz) {
		freq = " at " + formatHz(i.FreqHz) + " Hz"
	}
	switch i.Shape {
	case Impulse:
		return "single impulse (pure delay)"
	case Decaying:
		switch {
		case i.Oscillating:
			return "decaying oscillation" + freq
		case i.Alternating:
			return "decaying, alternating sign each sample"
		}
		return "decaying exponentially"
	case Constant:
		switch {
		case i.Oscillating:
			return "sustained oscillation" + freq + " (on the unit circle)"
		case i.Alternating:
			return "constant amplitude, alternating sign each sample (on the unit circle)"
		}
		return "constant (on the unit circle)"
	case Growing:
		switch {
		case i.Oscillating:
			return "growing oscillation" + freq
		case i.Alternating:
			return "growing, alternating sign each sample"
		}
		return "growing exponentially"
	}
	return i.Shape.String()
}

// formatHz prints a frequency with 4 significant digits, without an
// exponent in the usual range and without trailing zeros ("12.5", "3").
func formatHz(f float64) string {
	if f == 0 || f >= 1e6 || f < 1e-3 {
		return strconv.FormatFloat(f, 'g', 4, 64)
	}
	digits := 3 - int(math.Floor(math.Log10(f)))
	if digits < 0 {
		digits = 0
	}
	s := strconv.FormatFloat(f, 'f', digits, 64)
	if digits > 0 {
		for s[len(s)-1] == '0' {
			s = s[:len(s)-1]
		}
		if s[len(s)-1] == '.' {
			s = s[:len(s)-1]
		}
	}
	return s
}
