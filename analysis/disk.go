package analysis

import (
	"errors"
	"fmt"
	"math"

	"ringside/analysis/diskmargin"
	"ringside/analysis/freq"
)

// DiskMargin is a loop's symmetric disk margin and the frequency where
// |S − 1/2| peaks.
type DiskMargin struct {
	diskmargin.Margin
	PeakHz float64
}

// diskMargin computes the symmetric disk margin of a stable loop from its
// sampled response (the margins' grid, evaluated once); respErr is why
// there is no sampled response.
func (c *checker) diskMargin(l *Loop, resp *freq.Sampled, respErr error) {
	if !l.Stable {
		return
	}
	var m diskmargin.Margin
	var err error
	switch {
	case errors.Is(respErr, freq.ErrZeroPoly) && l.Open.Num.IsZero():
		// L ≡ 0: S = 1 and |S − ½| = ½ at every frequency, alpha = 2.
		m = diskmargin.FromAlpha(2, 0)
	case resp == nil:
		return
	default:
		m, err = resp.DiskMargin()
	}
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
