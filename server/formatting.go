package server

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"

	"go.lsp.dev/protocol"

	"ringside/syntax"
)

// formatting returns the edits that turn the document into syntax.Format's
// layout, as few and as small as a line diff gives. A file with syntax
// errors gets none. The file's own line breaks are kept.
func (s *Server) formatting(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.DocumentFormattingParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	_, _, m, src, err := s.docRequest(ctx, p.TextDocument.URI)
	if err != nil {
		return nil, err
	}
	async(ctx)
	out, err := syntax.Format(src)
	if err != nil {
		return []protocol.TextEdit{}, nil
	}
	if nl := syntax.LineBreak(src); nl != "\n" {
		out = bytes.ReplaceAll(out, []byte("\n"), []byte(nl))
	}
	return diffEdits(m, src, out, 0), nil
}

func (s *Server) rangeFormatting(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.DocumentRangeFormattingParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	_, _, m, src, err := s.docRequest(ctx, p.TextDocument.URI)
	if err != nil {
		return nil, err
	}
	async(ctx)
	span, err := m.RangeSpan(p.Range)
	if err != nil {
		return nil, errorf(-32602, "%v", err)
	}
	at, text, err := syntax.FormatRange(src, span.From, span.To)
	if err != nil || (at.From == at.To && len(text) == 0) {
		return []protocol.TextEdit{}, nil
	}
	return diffEdits(m, src[:at.To], append(append([]byte{}, src[:at.From]...), text...), at.From), nil
}

// diffEdits computes line-level edits turning old into new; both share the
// prefix old[:from] (which the diff skips). Common leading and trailing
// lines are trimmed and the middle is aligned by a longest common
// subsequence of lines when small enough, otherwise replaced whole.
func diffEdits(m *Mapper, old, new []byte, from syntax.Pos) []protocol.TextEdit {
	edits := []protocol.TextEdit{}
	if bytes.Equal(old, new) {
		return edits
	}
	a := splitLines(string(old[from:]))
	b := splitLines(string(new[from:]))
	// offsets of a's lines
	offs := make([]syntax.Pos, len(a)+1)
	offs[0] = from
	for i, l := range a {
		offs[i+1] = offs[i] + syntax.Pos(len(l))
	}
	type op struct{ ai, aj, bi, bj int } // replace a[ai:aj] by b[bi:bj]
	var ops []op
	lo := 0
	for lo < len(a) && lo < len(b) && a[lo] == b[lo] {
		lo++
	}
	ha, hb := len(a), len(b)
	for ha > lo && hb > lo && a[ha-1] == b[hb-1] {
		ha--
		hb--
	}
	n, k := ha-lo, hb-lo
	if n*k <= 1<<20 {
		// LCS table over the middle.
		t := make([][]int32, n+1)
		for i := range t {
			t[i] = make([]int32, k+1)
		}
		for i := n - 1; i >= 0; i-- {
			for j := k - 1; j >= 0; j-- {
				if a[lo+i] == b[lo+j] {
					t[i][j] = t[i+1][j+1] + 1
				} else {
					t[i][j] = max(t[i+1][j], t[i][j+1])
				}
			}
		}
		i, j := 0, 0
		start := op{lo, lo, lo, lo}
		flush := func() {
			if start.ai != lo+i || start.bi != lo+j {
				ops = append(ops, op{start.ai, lo + i, start.bi, lo + j})
			}
		}
		for i < n || j < k {
			if i < n && j < k && a[lo+i] == b[lo+j] {
				flush()
				i++
				j++
				start = op{lo + i, 0, lo + j, 0}
				continue
			}
			if j < k && (i == n || t[i][j+1] >= t[i+1][j]) {
				j++
			} else {
				i++
			}
		}
		flush()
	} else {
		ops = append(ops, op{lo, ha, lo, hb})
	}
	for _, o := range ops {
		r, err := m.SpanRange(syntax.Span{From: offs[o.ai], To: offs[o.aj]})
		if err != nil {
			return []protocol.TextEdit{}
		}
		edits = append(edits, protocol.TextEdit{Range: r, NewText: strings.Join(b[o.bi:o.bj], "")})
	}
	return edits
}

// splitLines splits s after each line break ("\n", "\r\n" or a lone
// "\r"), keeping the breaks.
func splitLines(s string) []string {
	var out []string
	for len(s) > 0 {
		i := strings.IndexAny(s, "\r\n")
		if i < 0 {
			out = append(out, s)
			break
		}
		if s[i] == '\r' && i+1 < len(s) && s[i+1] == '\n' {
			i++
		}
		out = append(out, s[:i+1])
		s = s[i+1:]
	}
	return out
}
