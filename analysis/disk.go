package analysis

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"ringside/analysis/diskmargin"
	"ringside/analysis/lti"
)

// DiskMargin is a loop's symmetric disk margin and the frequency where
// |S − 1/2| peaks.
type DiskMargin struct {
	diskmargin.Margin
	PeakHz float64
}

// modelResponse is the evaluator of L(e^{jθ}) the disk margin reads: the
// loop's model, block by block (cancelled pairs cancel exactly); any other
// evaluation of the loop can take its place.
func modelResponse(m *lti.Loop) diskmargin.Response {
	return func(th float64) complex128 { return m.At(cmplx.Rect(1, th)) }
}

// diskMargin computes the symmetric disk margin of a stable loop.
func (c *checker) diskMargin(l *Loop) {
	if !l.Stable || l.Model == nil {
		return
	}
	poles := make([]complex128, len(l.Poles))
	for i, p := range l.Poles {
		poles[i] = p.Z
	}
	m, err := diskmargin.Compute(modelResponse(l.Model), poles)
	if errors.Is(err, diskmargin.ErrUnbounded) {
		return // no finite figure: the JSON has null, the loop is static
	}
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
