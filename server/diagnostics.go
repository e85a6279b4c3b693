package server

import (
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/syntax"
)

// severity maps analysis severities to the protocol's.
func severity(s analysis.Severity) protocol.DiagnosticSeverity {
	switch s {
	case analysis.Error:
		return protocol.DiagnosticSeverityError
	case analysis.Warning:
		return protocol.DiagnosticSeverityWarning
	}
	return protocol.DiagnosticSeverityInformation
}

// protocolDiagnostics converts a result's diagnostics of its own file, the
// same list `ringside check` prints, less the summary codes (which become
// code lenses and hovers).
func (sn *snapshot) protocolDiagnostics(res *analysis.Result, m *Mapper) []protocol.Diagnostic {
	out := make([]protocol.Diagnostic, 0, len(res.Diagnostics))
	for _, d := range res.Diagnostics {
		if d.Path != res.Path || analysis.SummaryCode(d.Code) {
			continue
		}
		pd, ok := sn.protocolDiagnostic(res, d, m)
		if ok {
			out = append(out, pd)
		}
	}
	return out
}

func (sn *snapshot) protocolDiagnostic(res *analysis.Result, d analysis.Diagnostic, m *Mapper) (protocol.Diagnostic, bool) {
	r, err := m.SpanRange(d.Span)
	if err != nil {
		sn.s.bug("diagnostic %s span %v outside %s: %v", d.Code, d.Span, d.Path, err)
		return protocol.Diagnostic{}, false
	}
	pd := protocol.Diagnostic{Range: r, Severity: severity(d.Severity), Code: d.Code, Source: "ringside", Message: d.Message}
	for _, rel := range d.Related {
		rm := sn.mapperFor(res, rel.Path)
		if rm == nil {
			continue
		}
		rr, err := rm.SpanRange(rel.Span)
		if err != nil {
			continue
		}
		pd.RelatedInformation = append(pd.RelatedInformation, protocol.DiagnosticRelatedInformation{
			Location: protocol.Location{URI: pathURI(rel.Path), Range: rr}, Message: rel.Message})
	}
	return pd, true
}

// mapperFor returns a mapper for a file the result read, over the very text
// its spans refer to.
func (sn *snapshot) mapperFor(res *analysis.Result, path string) *Mapper {
	f := res.Files[path]
	if f == nil && path == res.Path {
		f = res.File
	}
	if f != nil {
		return fileMapper(f, sn.encoding)
	}
	m, _, err := sn.mapper(path)
	if err != nil {
		return nil
	}
	return m
}

// workspaceEdit converts a fix to a workspace edit; false when a span does
// not fit its file (a bug, reported).
func (sn *snapshot) workspaceEdit(res *analysis.Result, f analysis.Fix) (protocol.WorkspaceEdit, bool) {
	we := protocol.WorkspaceEdit{Changes: map[protocol.DocumentURI][]protocol.TextEdit{}}
	for _, e := range f.Edits {
		m := sn.mapperFor(res, e.Path)
		if m == nil {
			return we, false
		}
		r, err := m.SpanRange(e.Span)
		if err != nil {
			sn.s.bug("fix %q: %v", f.Title, err)
			return we, false
		}
		uri := sn.uriOf(e.Path)
		we.Changes[uri] = append(we.Changes[uri], protocol.TextEdit{Range: r, NewText: e.NewText})
	}
	return we, len(f.Edits) > 0
}

// uriOf returns the URI the client opened a path under, else a file URI.
func (sn *snapshot) uriOf(path string) protocol.DocumentURI {
	if d, ok := sn.docs[path]; ok {
		return d.uri
	}
	return pathURI(path)
}

// spanRange maps a span of a file the result read.
func (sn *snapshot) spanLocation(res *analysis.Result, path string, span syntax.Span) (protocol.Location, bool) {
	m := sn.mapperFor(res, path)
	if m == nil {
		return protocol.Location{}, false
	}
	r, err := m.SpanRange(span)
	if err != nil {
		return protocol.Location{}, false
	}
	return protocol.Location{URI: sn.uriOf(path), Range: r}, true
}
