package analysis

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
)

// FormatNumber prints v with up to six significant figures, as a literal
// the .loop format reads back (no '+' in exponents).
func FormatNumber(v float64) string { return fmtNum(v) }

func fmtNum(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "-∞"
	case math.IsNaN(v):
		return "undefined"
	case v == 0:
		return "0"
	}
	s := strconv.FormatFloat(v, 'g', 6, 64)
	if i := strings.IndexByte(s, 'e'); i >= 0 {
		mant, exp := s[:i], s[i+1:]
		exp = strings.TrimPrefix(exp, "+")
		neg := strings.HasPrefix(exp, "-")
		exp = strings.TrimLeft(strings.TrimPrefix(exp, "-"), "0")
		if neg {
			exp = "-" + exp
		}
		s = mant + "e" + exp
	}
	return s
}

// roundDown rounds v toward −∞ at three significant figures: the side of a
// cap that keeps the margin.
func roundDown(v float64) float64 {
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	e := math.Floor(math.Log10(math.Abs(v))) - 2
	p := math.Pow(10, e)
	r := math.Floor(v/p*(1+1e-12)) * p
	// Re-read through decimal text so the value is exactly what is printed.
	f, _ := strconv.ParseFloat(strconv.FormatFloat(r, 'g', 3, 64), 64)
	if f > v {
		f = math.Floor(v/p-1) * p
	}
	return f
}

// FormatComplex prints a pole or zero compactly: "0.9", "0.9 ± 0.12j".
// A point near the unit circle gets enough digits to show how far it is
// from the circle (see complexDigits).
func FormatComplex(z complex128) string { return fmtComplex(z) }

func fmtComplex(z complex128) string {
	re, im := real(z), imag(z)
	n := complexDigits(cmplx.Abs(z))
	if math.Abs(im) <= 1e-12*math.Max(1, math.Abs(re)) {
		return strconv.FormatFloat(re, 'g', n, 64)
	}
	return strconv.FormatFloat(re, 'g', n, 64) + " ± " + strconv.FormatFloat(math.Abs(im), 'g', n, 64) + "j"
}

// complexDigits is the number of significant figures a point at radius r
// is printed with: four, or, within 1e-3 of the circle, enough to show
// the first two digits of |r − 1| (so 1.000126 ± 0.01412j does not read
// as a point on the circle). Closer than DisplayZero the point is on the
// circle for every tolerance a user may set, and four figures say so.
func complexDigits(r float64) int {
	d := math.Abs(r - 1)
	if d >= 1e-3 || d < DisplayZero {
		return 4
	}
	return min(int(math.Ceil(-math.Log10(d)))+3, 10)
}

// CircleDistance says how far a pole at radius r lies from the unit
// circle, in words, when it is close enough for the digits to hide it
// (within 1e-2) but not within tol: "2.25e-04 outside the circle".
// Otherwise it returns "".
func CircleDistance(r, tol float64) string {
	d := r - 1
	if math.Abs(d) >= 1e-2 || math.Abs(d) <= tol {
		return ""
	}
	side := "outside"
	if d < 0 {
		side = "inside"
	}
	return fmt.Sprintf("%.3g %s the circle", math.Abs(d), side)
}

// FormatTime prints seconds with a unit that suits the size.
func FormatTime(s float64) string { return fmtTime(s) }

func fmtTime(s float64) string {
	a := math.Abs(s)
	switch {
	case math.IsInf(s, 0):
		return "∞"
	case a == 0:
		return "0 s"
	case a < 1e-3:
		return fmt.Sprintf("%.3g µs", s*1e6)
	case a < 1:
		return fmt.Sprintf("%.3g ms", s*1e3)
	}
	return fmt.Sprintf("%.3g s", s)
}

// FormatHz prints a frequency with a unit that suits the size.
func FormatHz(hz float64) string {
	if math.Abs(hz) >= 1e3 {
		return fmt.Sprintf("%.3g kHz", hz/1e3)
	}
	return fmt.Sprintf("%.3g Hz", hz)
}

// FormatMetric prints a require metric's figure in its unit, as every view
// (text, hover, page, plots) shows it, with the DisplayZero rule applied.
func FormatMetric(metric string, v float64) string { return fmtMetric(metric, v) }

func fmtMetric(metric string, v float64) string {
	if math.IsInf(v, 1) {
		return "unlimited (no crossing)"
	}
	v = Shown(v)
	switch metric {
	case "gain_margin", "peak_sensitivity":
		return fmt.Sprintf("%.3g dB", v)
	case "phase_margin":
		return fmt.Sprintf("%.3g°", v)
	case "delay_margin", "settling":
		return fmtTime(v)
	case "overshoot":
		return fmt.Sprintf("%.3g %%", v)
	}
	return fmt.Sprintf("%.4g", v)
}

func abs64(v float64) float64 { return math.Abs(v) }

// DisplayZero is the one display rule for figures that are zero within
// the numerical tolerance: a margin, sensitivity, delay (seconds or
// samples), overshoot or damping closer to zero than this prints as 0.
// A loop on the edge of stability gives ±1e-7-sized margins (the root
// finder's and the crossing search's rounding, see DefaultTolerance) that
// would otherwise read as "-0", "7.94e-07°" or "8.82e-06 µs". Every view
// (text, JSON-free displays, hover, page, plots) goes through Shown.
const DisplayZero = 1e-6

// Shown applies DisplayZero to a figure before it is printed; it also
// turns −0 into 0.
func Shown(v float64) float64 {
	if math.Abs(v) < DisplayZero {
		return 0
	}
	return v
}

// FormatRadius prints a pole radius; near 1 with seven figures, so that a
// radius just outside the circle never prints as "1".
func FormatRadius(r float64) string {
	if math.Abs(r-1) < 1e-3 {
		return strconv.FormatFloat(r, 'f', 7, 64)
	}
	return fmt.Sprintf("%.4g", r)
}
