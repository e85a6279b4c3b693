package server

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"

	"go.lsp.dev/protocol"

	"ringside/analysis"
)

// codeAction offers the fixes that the analysis of the current text holds
// for the diagnostics in the request's context, each fix once (two
// diagnostics of one loop often share the fix that sets a gain), listing
// every context diagnostic it addresses. A context diagnostic that the
// analysis no longer reports at the same range gets no action: its edits
// would be stale, and a stale edit would damage the user's text.
func (s *Server) codeAction(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.CodeActionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	if len(p.Context.Only) > 0 && !contains(p.Context.Only, protocol.QuickFix) {
		return []protocol.CodeAction{}, nil
	}
	sn, path, m, _, err := s.docRequest(ctx, p.TextDocument.URI)
	if err != nil {
		return nil, err
	}
	async(ctx)
	actions := []protocol.CodeAction{}
	if len(p.Context.Diagnostics) == 0 {
		return actions, nil
	}
	res, err := sn.check(ctx, path, true)
	if err != nil {
		return nil, err
	}
	byFix := map[string]int{} // fix identity → index in actions
	for _, d := range res.Diagnostics {
		if d.Path != path || len(d.Fixes) == 0 {
			continue
		}
		fixed := contextDiagnostics(p.Context.Diagnostics, d, m)
		if len(fixed) == 0 {
			continue
		}
		for _, f := range d.Fixes {
			id := fixIdentity(f)
			if i, seen := byFix[id]; seen {
				actions[i].Diagnostics = appendNew(actions[i].Diagnostics, fixed)
				continue
			}
			we, ok := sn.workspaceEdit(res, f)
			if !ok {
				continue
			}
			byFix[id] = len(actions)
			actions = append(actions, protocol.CodeAction{Title: f.Title, Kind: protocol.QuickFix,
				Diagnostics: fixed, IsPreferred: len(actions) == 0, Edit: &we})
		}
	}
	return actions, nil
}

// contextDiagnostics returns the request's diagnostics that are d: the same
// code at the same range.
func contextDiagnostics(in []protocol.Diagnostic, d analysis.Diagnostic, m *Mapper) []protocol.Diagnostic {
	r, err := m.SpanRange(d.Span)
	if err != nil {
		return nil
	}
	var out []protocol.Diagnostic
	for _, cd := range in {
		if cd.Code == d.Code && cd.Range == r {
			out = append(out, cd)
		}
	}
	return out
}

// fixIdentity is what makes two fixes the same: their title and edits.
func fixIdentity(f analysis.Fix) string {
	var b strings.Builder
	b.WriteString(f.Title)
	for _, e := range f.Edits {
		fmt.Fprintf(&b, "\x00%s\x00%d\x00%d\x00%s", e.Path, e.Span.From, e.Span.To, e.NewText)
	}
	return b.String()
}

// appendNew appends the diagnostics of add not yet in list.
func appendNew(list, add []protocol.Diagnostic) []protocol.Diagnostic {
	for _, d := range add {
		dup := false
		for _, x := range list {
			if x.Code == d.Code && x.Range == d.Range && x.Message == d.Message {
				dup = true
			}
		}
		if !dup {
			list = append(list, d)
		}
	}
	return list
}

func contains[T comparable](list []T, s T) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
