package server

import (
	"context"
	"encoding/json"
	"sort"
	"strings"

	"go.lsp.dev/protocol"

	"ringside/syntax"
)

// declSymbol is one named statement of a file.
type declSymbol struct {
	name   string
	kind   protocol.SymbolKind
	detail string
	span   syntax.Span // whole statement
	sel    syntax.Span // the name
	stmt   syntax.Stmt
}

// fileSymbols lists a file's gains, blocks and loops in order.
func fileSymbols(f *syntax.File) []declSymbol {
	var out []declSymbol
	for _, st := range f.Stmts {
		switch st := st.(type) {
		case *syntax.GainStmt:
			if st.Name != nil {
				d := ""
				if st.Value != nil {
					d = "= " + st.Value.Text
					if st.Value.Neg {
						d = "= -" + st.Value.Text
					}
				}
				out = append(out, declSymbol{st.Name.Name, protocol.SymbolKindConstant, d, st.Span, st.Name.Span, st})
			}
		case *syntax.BlockStmt:
			if st.Name != nil {
				out = append(out, declSymbol{st.Name.Name, protocol.SymbolKindFunction, "block", st.Span, st.Name.Span, st})
			}
		case *syntax.LoopStmt:
			if st.Name != nil {
				out = append(out, declSymbol{st.Name.Name, protocol.SymbolKindModule, "loop", st.Span, st.Name.Span, st})
			}
		}
	}
	return out
}

func (s *Server) documentSymbol(ctx context.Context, params json.RawMessage) (any, error) {
	_, path, m, src, err := s.docParams(ctx, params)
	if err != nil {
		return nil, err
	}
	f, _ := syntax.Parse(path, src)
	out := []protocol.DocumentSymbol{}
	for i, d := range fileSymbols(f) {
		if i%1024 == 0 && ctx.Err() != nil {
			return nil, errCancelled
		}
		r, err1 := m.SpanRange(d.span)
		sel, err2 := m.SpanRange(d.sel)
		if err1 != nil || err2 != nil {
			continue
		}
		sym := protocol.DocumentSymbol{Name: d.name, Detail: d.detail, Kind: d.kind, Range: r, SelectionRange: sel}
		if l, ok := d.stmt.(*syntax.LoopStmt); ok {
			for _, it := range l.Items {
				pi, ok := it.(*syntax.PathItem)
				if !ok {
					continue
				}
				if ir, err := m.SpanRange(pi.Span); err == nil {
					kr, _ := m.SpanRange(pi.Keyword.Span)
					sym.Children = append(sym.Children, protocol.DocumentSymbol{Name: pi.Keyword.Name, Detail: pathNames(pi), Kind: protocol.SymbolKindEvent, Range: ir, SelectionRange: kr})
				}
			}
		}
		out = append(out, sym)
	}
	return out, nil
}

func pathNames(pi *syntax.PathItem) string {
	var names []string
	for _, id := range pi.Names {
		names = append(names, id.Name)
	}
	return strings.Join(names, " ")
}

// workspaceSymbol searches the names of every known .loop file
// (case-insensitive substring; an empty query lists all).
func (s *Server) workspaceSymbol(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.WorkspaceSymbolParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn := s.snapshot()
	s.mu.Lock()
	var paths []string
	for path := range s.ses.known {
		paths = append(paths, path)
	}
	s.mu.Unlock()
	sort.Strings(paths)
	async(ctx)
	q := strings.ToLower(p.Query)
	out := []protocol.SymbolInformation{}
	for _, path := range paths {
		if ctx.Err() != nil {
			return nil, errCancelled
		}
		src, err := sn.read(path)
		if err != nil {
			continue
		}
		f, _ := syntax.Parse(path, src)
		m := NewMapper(src, sn.encoding)
		for _, d := range fileSymbols(f) {
			if !strings.Contains(strings.ToLower(d.name), q) {
				continue
			}
			r, err := m.SpanRange(d.sel)
			if err != nil {
				continue
			}
			out = append(out, protocol.SymbolInformation{Name: d.name, Kind: d.kind, Location: protocol.Location{URI: sn.uriOf(path), Range: r}, ContainerName: baseName(path)})
		}
	}
	return out, nil
}
