package report

import (
	"fmt"
	"io"
	"strings"

	"ringside/analysis"
	"ringside/analysis/columns"
)

// Overview gathers one row per loop while files are reported, then writes
// the first thing a reader wants after the details: a short table of every
// loop (verdict, largest radius, margins, worst missed requirement) and a
// summary that names the failing loops.
type Overview struct {
	rows              [][]string
	failing           []string
	files, errs, warn int
}

var overviewHeader = []string{"file", "loop", "verdict", "radius", "GM", "PM", "worst requirement"}

// Add records a file's loops and counts its diagnostics.
func (o *Overview) Add(r *analysis.Result, display func(string) string) {
	o.files++
	for _, d := range r.Diagnostics {
		switch d.Severity {
		case analysis.Error:
			o.errs++
		case analysis.Warning:
			o.warn++
		}
	}
	for _, l := range r.Loops {
		o.rows = append(o.rows, loopRow(l, display(r.Path)))
		if l.Failing() {
			o.failing = append(o.failing, fmt.Sprintf("%s (%s, %s)", l.Name, display(r.Path), failWord(l)))
		}
	}
}

// Write prints the table (when there are loops) and the summary lines;
// it returns the first write error.
func (o *Overview) Write(w io.Writer) error {
	var b strings.Builder
	if len(o.rows) > 0 {
		b.WriteString("\n")
		for _, line := range columns.Text(append([][]string{overviewHeader}, o.rows...)) {
			b.WriteString(line + "\n")
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "%d file(s) checked: %d error(s), %d warning(s).\n", o.files, o.errs, o.warn)
	if len(o.failing) > 0 {
		fmt.Fprintf(&b, "Failing loops: %s.\n", strings.Join(o.failing, "; "))
	} else if len(o.rows) > 0 {
		b.WriteString("Every loop is stable and meets its written requirements.\n")
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// WriteMarkdown writes the overview for a review comment: the summary, the
// failing loops, and the loop table as Markdown (the diagnostics
// themselves belong in the text or SARIF output).
func (o *Overview) WriteMarkdown(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "### Loop check\n\n%d file(s) checked: %d error(s), %d warning(s).\n", o.files, o.errs, o.warn)
	if len(o.failing) > 0 {
		fmt.Fprintf(&b, "**Failing loops:** %s.\n", strings.Join(o.failing, "; "))
	}
	if len(o.rows) > 0 {
		fmt.Fprintf(&b, "\n%s", columns.Markdown(append([][]string{overviewHeader}, o.rows...)))
	}
	fmt.Fprintf(&b, "\n%s\n", Caution)
	_, err := io.WriteString(w, b.String())
	return err
}

func failWord(l *analysis.Loop) string {
	if l.ShownStable() {
		return "misses " + l.WorstMissed().Metric
	}
	return strings.ToLower(l.Status())
}

// loopRow is a loop's row of the overview table.
func loopRow(l *analysis.Loop, file string) []string {
	row := []string{file, l.Name, l.Status(), "-", "-", "-", "-"}
	if !l.OK {
		return row
	}
	row[3] = analysis.FormatRadius(l.MaxRadius)
	row[4], row[5] = "∞", "∞"
	if gm := l.Margins.GainMarginDB; gm != nil {
		row[4] = analysis.FormatMetric("gain_margin", *gm)
	}
	if pm := l.Margins.PhaseMarginDeg; pm != nil {
		row[5] = analysis.FormatMetric("phase_margin", *pm)
	}
	row[6] = "all met"
	if q := l.WorstMissed(); q != nil {
		row[6] = q.MissedText()
	}
	return row
}

// Markdown writes the overview of results for a review comment.
func Markdown(w io.Writer, results []*analysis.Result, display func(string) string) error {
	s := NewStream("markdown", w, display, "", false)
	for _, r := range results {
		s.Add(r)
	}
	return s.Close()
}

// BuildFile is one file's part of the JSON document (see Build).
func BuildFile(r *analysis.Result, display func(string) string) File { return buildFile(r, display) }
