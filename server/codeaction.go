package server

import (
	"context"
	"encoding/json"

	"go.lsp.dev/protocol"
)

// codeAction offers the fixes of the diagnostics in the request's context,
// recomputed from the full analysis of the current text. A context
// diagnostic that analysis no longer reports at the same range gets no
// action: its edits (also in its data) may be stale, and a stale edit would
// damage the user's text.
func (s *Server) codeAction(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.CodeActionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	if len(p.Context.Only) > 0 && !contains(p.Context.Only, protocol.QuickFix) {
		return []protocol.CodeAction{}, nil
	}
	sn, path, m, _, err := s.docRequest(p.TextDocument.URI)
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
	// One fix offered for several diagnostics (a gain fix on both the
	// unstable verdict and the missed margin) is one action listing them.
	seen := map[string]int{}
	for _, cd := range p.Context.Diagnostics {
		for _, d := range res.Diagnostics {
			if d.Path != path || d.Code != cd.Code || len(d.Fixes) == 0 {
				continue
			}
			r, err := m.SpanRange(d.Span)
			if err != nil || r != cd.Range {
				continue
			}
			for i, f := range d.Fixes {
				we, ok := sn.workspaceEdit(res, f)
				if !ok {
					continue
				}
				key, _ := json.Marshal(struct {
					T string
					E protocol.WorkspaceEdit
				}{f.Title, we})
				if j, dup := seen[string(key)]; dup {
					actions[j].Diagnostics = append(actions[j].Diagnostics, cd)
					continue
				}
				seen[string(key)] = len(actions)
				actions = append(actions, protocol.CodeAction{Title: f.Title, Kind: protocol.QuickFix,
					Diagnostics: []protocol.Diagnostic{cd}, IsPreferred: i == 0, Edit: &we})
			}
		}
	}
	return actions, nil
}

func contains[T comparable](list []T, s T) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
