package analysis

import (
	"cmp"
	"fmt"
	"slices"

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
// equal positions, else in the order added). The order is found on small
// keys and the diagnostics, large, are copied once.
func (d *diagList) sorted(path string) []Diagnostic {
	type key struct {
		from syntax.Pos
		sev  Severity
		i    int
	}
	keys := make([]key, 0, len(d.list)) // nearly all are the file's own
	for i := range d.list {
		if x := &d.list[i]; x.Path == path {
			keys = append(keys, key{x.Span.From, x.Severity, i})
		}
	}
	if len(keys) == 0 {
		return nil // as before: none is nil, not empty
	}
	slices.SortFunc(keys, func(a, b key) int {
		if c := cmp.Compare(a.from, b.from); c != 0 {
			return c
		}
		if c := cmp.Compare(a.sev, b.sev); c != 0 {
			return c
		}
		return cmp.Compare(a.i, b.i)
	})
	out := make([]Diagnostic, len(keys))
	for j, k := range keys {
		out[j] = d.list[k.i]
	}
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

// MaxDiagnostics is how many diagnostics one file reports; past it, one
// more at the first left out says how many were, with the gravest
// severity among them (so an error is never hidden by the cap). A file of
// thousands of broken lines then costs a screenful in the editor and in
// every report, and memory stays bounded by the file's size.
const MaxDiagnostics = 1000

// capped keeps the first MaxDiagnostics of sorted diagnostics.
func capped(list []Diagnostic) []Diagnostic {
	if len(list) <= MaxDiagnostics {
		return list
	}
	rest := list[MaxDiagnostics:]
	worst := Info
	for _, d := range rest {
		worst = min(worst, d.Severity)
	}
	first := rest[0]
	return append(list[:MaxDiagnostics:MaxDiagnostics], Diagnostic{Path: first.Path, Span: first.Span, Severity: worst, Code: CodeTooMany,
		Message: fmt.Sprintf("and %d more diagnostics from here on (only the first %d of a file are listed); fix these and check again", len(rest), MaxDiagnostics)})
}

// checkedFixes drops every fix whose edits would not read back as intended
// (syntax.CheckFix): a fix the user applies must change what it says and
// nothing else. The answer for a region of text and its edits is kept in
// the memo (fixReadsBack).
func checkedFixes(res *Result, list []Diagnostic, memo *memoRun) {
	for i := range list {
		d := &list[i]
		if len(d.Fixes) == 0 {
			continue
		}
		kept := d.Fixes[:0]
		for _, f := range d.Fixes {
			if fixReadsBack(res, f, memo) {
				kept = append(kept, f)
			}
		}
		d.Fixes = kept
	}
}

func fixReadsBack(res *Result, f Fix, memo *memoRun) bool {
	byPath := map[string][]syntax.Edit{}
	for _, e := range f.Edits {
		byPath[e.Path] = append(byPath[e.Path], syntax.Edit{Span: e.Span, New: e.NewText})
	}
	for path, edits := range byPath {
		file := res.Files[path]
		if file == nil {
			return false
		}
		r, err := syntax.FixRegionOf(file, edits)
		if err != nil || !memo.readsBack(r) {
			return false
		}
	}
	return true
}
