package analysis

import (
	"sort"

	"ringside/syntax"
)

// diagList gathers diagnostics during a check.
type diagList struct {
	list []Diagnostic
}

func (d *diagList) add(path string, span syntax.Span, sev Severity, code, msg string) *Diagnostic {
	d.list = append(d.list, Diagnostic{Path: path, Span: span, Severity: sev, Code: code, Message: msg})
	return &d.list[len(d.list)-1]
}

// sorted returns the diagnostics of path in source order (errors first at
// equal positions).
func (d *diagList) sorted(path string) []Diagnostic {
	var out []Diagnostic
	for _, x := range d.list {
		if x.Path == path {
			out = append(out, x)
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i], out[j]
		if a.Span.From != b.Span.From {
			return a.Span.From < b.Span.From
		}
		return a.Severity < b.Severity
	})
	return out
}

// HasErrors reports whether any diagnostic is an error.
func (r *Result) HasErrors() bool {
	for _, d := range r.Diagnostics {
		if d.Severity == Error {
			return true
		}
	}
	return false
}
