package analysis

import (
	"fmt"
	"math"
	"math/cmplx"

	"ringside/analysis/diskmargin"
	"ringside/analysis/poly"
)

// DiskMargin is a loop's symmetric disk margin and the frequency where
// |S − 1/2| peaks.
type DiskMargin struct {
	diskmargin.Margin
	PeakHz float64
}

// openResponse is the evaluator of L(e^{jθ}) the disk margin reads: here
// the open loop's numerator and denominator; any evaluation of the loop
// (factored blocks, a state-space form) can take its place.
func openResponse(open poly.Rational) diskmargin.Response {
	return func(th float64) complex128 {
		z := cmplx.Rect(1, th)
		return open.Num.EvalC(z) / open.Den.EvalC(z)
	}
}

// diskMargin computes the symmetric disk margin of a stable loop.
func (c *checker) diskMargin(l *Loop) {
	if !l.Stable {
		return
	}
	poles := make([]complex128, len(l.Poles))
	for i, p := range l.Poles {
		poles[i] = p.Z
	}
	m, err := diskmargin.Compute(openResponse(l.Open), poles)
	if err != nil {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeNumeric, fmt.Sprintf("loop %s: disk margin could not be computed: %v", l.Name, err))
		return
	}
	l.Disk = &DiskMargin{m, m.PeakTheta / (2 * math.Pi * c.res.SampleT)}
}

// Text writes the disk margin in plain words (hover, reports).
func (d *DiskMargin) Text() string {
	gain := "any gain above 0"
	if d.GainLowDB != nil && d.GainHighDB != nil {
		gain = fmt.Sprintf("gain %+.3g to %+.3g dB", *d.GainLowDB, *d.GainHighDB)
	}
	return fmt.Sprintf("α = %.3g: %s together with phase ±%.3g° (peak of |S − ½| at %s)", d.Alpha, gain, d.PhaseDeg, FormatHz(d.PeakHz))
}
