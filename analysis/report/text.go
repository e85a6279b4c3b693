package report

import (
	"fmt"
	"io"

	"ringside/analysis"
)

// Caution is printed under every text report: the figures are only as good
// as the models, and a check is no substitute for trying the real system.
const Caution = "ringside assumes linear, time-invariant models at one sample period; it cannot see saturation, quantisation, " +
	"timing jitter or unmodelled dynamics. Validate on the real system and follow your local safety practice."

// Text writes `file:line:col: severity: message [code]` lines, then the
// overview table of every loop, the summary naming failing loops, and the
// caution.
func Text(w io.Writer, results []*analysis.Result, display func(string) string) {
	var o Overview
	for _, r := range results {
		for _, d := range r.Diagnostics {
			line, col := Position(r, d.Path, int(d.Span.From))
			fmt.Fprintf(w, "%s:%d:%d: %s: %s [%s]\n", display(d.Path), line, col, d.Severity, d.Message, d.Code)
			for _, rel := range d.Related {
				l2, c2 := Position(r, rel.Path, int(rel.Span.From))
				fmt.Fprintf(w, "\t%s:%d:%d: %s\n", display(rel.Path), l2, c2, rel.Message)
			}
		}
		o.Add(r, display)
	}
	o.Write(w)
	fmt.Fprintln(w, Caution)
}
