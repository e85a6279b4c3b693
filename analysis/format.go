package analysis

import (
	"fmt"
	"math"
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
func FormatComplex(z complex128) string { return fmtComplex(z) }

func fmtComplex(z complex128) string {
	re, im := real(z), imag(z)
	if math.Abs(im) <= 1e-12*math.Max(1, math.Abs(re)) {
		return fmt.Sprintf("%.4g", re)
	}
	return fmt.Sprintf("%.4g ± %.4gj", re, math.Abs(im))
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

// fmtMetric prints a metric's figure in its unit. Figures within 1e-9 of
// zero print as 0 (a loop on the edge gives ±1e-7-sized margins that
// would read as "-0" or "7.9e-07").
func fmtMetric(metric string, v float64) string {
	if math.IsInf(v, 1) {
		return "unlimited (no crossing)"
	}
	v = snap(v)
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

// snap prints figures within 1e-6 of zero as 0: a loop on the edge of
// stability gives ±1e-7-sized margins that would read as "-0" or "7.9e-07".
func snap(v float64) float64 {
	if math.Abs(v) < 1e-6 {
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
