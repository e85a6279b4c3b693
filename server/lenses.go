package server

import (
	"context"
	"encoding/json"
	"fmt"
	"sort"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/server/lspext"
	"ringside/syntax"
)

// foldingRange folds loops and runs of two or more comment lines.
func (s *Server) foldingRange(ctx context.Context, params json.RawMessage) (any, error) {
	_, path, m, src, err := s.docParams(ctx, params)
	if err != nil {
		return nil, err
	}
	async(ctx)
	f, _ := syntax.Parse(path, src)
	out := []protocol.FoldingRange{}
	line := func(pos syntax.Pos) uint32 {
		pp, _ := m.OffsetPosition(pos)
		return pp.Line
	}
	for _, st := range f.Stmts {
		l, ok := st.(*syntax.LoopStmt)
		if !ok {
			continue
		}
		end := l.RBrace
		if end == syntax.NoPos {
			end = l.End()
		}
		if a, b := line(l.From), line(end); b > a {
			out = append(out, protocol.FoldingRange{StartLine: a, EndLine: b, Kind: "region"})
		}
	}
	// A comment run: comments alone on consecutive lines.
	lines := syntax.NewLines(src)
	alone := func(c *syntax.Comment) bool {
		ln := int(line(c.From))
		for _, b := range src[lines.LineStart(ln):c.From] {
			if b != ' ' && b != '\t' {
				return false
			}
		}
		return true
	}
	startRun, prev := -1, -1
	flush := func() {
		if startRun >= 0 && prev > startRun {
			out = append(out, protocol.FoldingRange{StartLine: uint32(startRun), EndLine: uint32(prev), Kind: "comment"})
		}
	}
	for _, c := range f.Comments {
		if !alone(c) {
			continue
		}
		ln := int(line(c.From))
		if ln == prev+1 && startRun >= 0 {
			prev = ln
			continue
		}
		flush()
		startRun, prev = ln, ln
	}
	flush()
	return out, nil
}

// plotCommand is the command of the plot lens and of workspace/executeCommand.
const plotCommand = "ringside.plot"

// codeLens puts each loop's one-line verdict and a plot command above it.
func (s *Server) codeLens(ctx context.Context, params json.RawMessage) (any, error) {
	sn, path, m, _, err := s.docParams(ctx, params)
	if err != nil {
		return nil, err
	}
	async(ctx)
	res, err := sn.check(ctx, path, true)
	if err != nil {
		return nil, err
	}
	out := []protocol.CodeLens{}
	for _, l := range res.Loops {
		if l.Stmt == nil || l.Stmt.Name == nil {
			continue
		}
		r, err := m.SpanRange(l.Stmt.Name.Span)
		if err != nil {
			continue
		}
		out = append(out,
			protocol.CodeLens{Range: r, Command: &protocol.Command{Title: l.Verdict(), Command: ""}},
			protocol.CodeLens{Range: r, Command: &protocol.Command{Title: "plot", Command: plotCommand,
				Arguments: []any{map[string]any{"uri": sn.uriOf(path), "loop": l.Name, "write": false}}}})
	}
	return out, nil
}

// inlayHint shows the largest pole radius after each block declaration and
// each analysed loop's verdict after its name, so that a stable loop shows
// its verdict too, not only a loop with problems.
func (s *Server) inlayHint(ctx context.Context, params json.RawMessage) (any, error) {
	var p lspext.InlayHintParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, path, m, _, err := s.docRequest(ctx, p.TextDocument.URI)
	if err != nil {
		return nil, err
	}
	span, err := m.RangeSpan(p.Range)
	if err != nil {
		return nil, errorf(jsonrpc2.InvalidParams, "%v", err)
	}
	async(ctx)
	res, err := sn.check(ctx, path, sn.settings.Trigger != "save")
	if err != nil {
		return nil, err
	}
	out := []lspext.InlayHint{}
	for _, b := range res.Blocks {
		if !b.OK || b.Stmt == nil || len(b.Poles) == 0 || b.Stmt.End() < span.From || b.Stmt.End() > span.To {
			continue
		}
		pos, err := m.OffsetPosition(b.Stmt.End())
		if err != nil {
			continue
		}
		out = append(out, lspext.InlayHint{Position: pos, Label: " |p|max " + maxRadiusText(b), Kind: 1, PaddingLeft: true})
	}
	for _, l := range res.Loops {
		if !l.OK || l.Stmt == nil || l.Stmt.Name == nil || l.Stmt.Name.To < span.From || l.Stmt.Name.To > span.To {
			continue
		}
		pos, err := m.OffsetPosition(l.Stmt.Name.To)
		if err != nil {
			continue
		}
		out = append(out, lspext.InlayHint{Position: pos, Label: l.Verdict(), Kind: 1, PaddingLeft: true})
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i].Position, out[j].Position
		return a.Line < b.Line || a.Line == b.Line && a.Character < b.Character
	})
	return out, nil
}

func maxRadiusText(b *analysis.Block) string {
	r := 0.0
	for _, p := range b.Poles {
		r = max(r, p.Radius)
	}
	return analysis.FormatRadius(r)
}

var _ = fmt.Sprint
