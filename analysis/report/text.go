package report

import (
	"io"

	"ringside/analysis"
)

// Caution is printed under every text report: the figures are only as good
// as the models, and a check is no substitute for trying the real system.
const Caution = "ringside assumes linear, time-invariant models at one sample period; it cannot see saturation, quantisation, " +
	"timing jitter or unmodelled dynamics. Validate on the real system and follow your local safety practice."

// Text writes `file:line:col: severity: message [code]` lines, then a
// count and the caution.
func Text(w io.Writer, results []*analysis.Result, display func(string) string) {
	s := NewStream("text", w, display, "", false)
	for _, r := range results {
		s.Add(r)
	}
	_ = s.Close()
}
