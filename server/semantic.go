package server

import (
	"context"
	"encoding/json"

	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/syntax"
)

// Semantic token types, by legend index.
const (
	tokKeyword = iota
	tokVariable
	tokFunction
	tokParameter
	tokNumber
	tokComment
	tokOperator
	tokType
	tokString
	tokProperty
	tokEnumMember
)

// tokenTypes is the legend: loops are variables, blocks functions, gains
// parameters, units types, metrics properties, methods and signs enum
// members.
var tokenTypes = []string{"keyword", "variable", "function", "parameter", "number", "comment", "operator", "type", "string", "property", "enumMember"}

type semTok struct {
	span syntax.Span
	typ  int
}

func (s *Server) semanticTokens(ctx context.Context, params json.RawMessage) (any, error) {
	sn, path, m, src, err := s.docParams(ctx, params)
	if err != nil {
		return nil, err
	}
	async(ctx)
	res, err := sn.check(ctx, path, false)
	if err != nil {
		return nil, err
	}
	kinds := map[syntax.Pos]int{} // identifier start → type
	units := map[syntax.Pos]syntax.Span{}
	syntax.Walk(res.File, func(n syntax.Node) bool {
		switch n := n.(type) {
		case *syntax.GainStmt:
			if n.Name != nil {
				kinds[n.Name.From] = tokParameter
			}
		case *syntax.BlockStmt:
			if n.Name != nil {
				kinds[n.Name.From] = tokFunction
			}
		case *syntax.LoopStmt:
			if n.Name != nil {
				kinds[n.Name.From] = tokVariable
			}
		case *syntax.NameRef:
			if k, ok := declKind(res.Scope[n.Name]); ok {
				kinds[n.From] = k
			}
		case *syntax.PathItem:
			kinds[n.Keyword.From] = tokKeyword
			for _, id := range n.Names {
				if k, ok := declKind(res.Scope[id.Name]); ok {
					kinds[id.From] = k
				}
			}
		case *syntax.VarRef:
			kinds[n.From] = tokKeyword
		case *syntax.Via:
			if n.Method != nil {
				kinds[n.Method.From] = tokEnumMember
			}
		case *syntax.SignItem:
			if n.Value != nil {
				kinds[n.Value.From] = tokEnumMember
			}
		case *syntax.RealizeStmt:
			realizeKinds(n, res, kinds, units)
		case *syntax.RequireItem:
			if n.Metric != nil {
				kinds[n.Metric.From] = tokProperty
			}
		case *syntax.Number:
			if n.Unit != "" {
				units[n.UnitSpan.From] = n.UnitSpan
			}
		}
		return true
	})
	toks := scanTokens(src, kinds, units)
	data := make([]uint32, 0, 5*len(toks))
	var prevLine, prevChar uint32
	for _, t := range toks {
		a, err1 := m.OffsetPosition(t.span.From)
		b, err2 := m.OffsetPosition(t.span.To)
		if err1 != nil || err2 != nil || a.Line != b.Line || b.Character <= a.Character {
			continue
		}
		dl := a.Line - prevLine
		dc := a.Character
		if dl == 0 {
			dc -= prevChar
		}
		data = append(data, dl, dc, b.Character-a.Character, uint32(t.typ), 0)
		prevLine, prevChar = a.Line, a.Character
	}
	return protocol.SemanticTokens{Data: data}, nil
}

// declKind is the token type of a name in scope.
func declKind(d *analysis.Decl) (int, bool) {
	switch {
	case d == nil:
		return 0, false
	case d.Gain != nil:
		return tokParameter, true
	}
	return tokFunction, true
}

// scanTokens classifies the syntax package's tokens of src (the lexer the
// parser uses): comments, strings, numbers, units, operators and the
// identifiers in kinds (or keywords). Unknown names get no token.
func scanTokens(src []byte, kinds map[syntax.Pos]int, units map[syntax.Pos]syntax.Span) []semTok {
	var out []semTok
	unitEnd := syntax.Pos(-1) // the tokens of a unit such as rad/s are one token
	for _, t := range syntax.Tokens(src) {
		if t.From < unitEnd {
			continue
		}
		if u, ok := units[t.From]; ok && u.To > u.From {
			out = append(out, semTok{u, tokType})
			unitEnd = u.To
			continue
		}
		switch t.Kind {
		case syntax.TokenComment:
			out = append(out, semTok{t.Span, tokComment})
		case syntax.TokenString:
			out = append(out, semTok{t.Span, tokString})
		case syntax.TokenNumber:
			out = append(out, semTok{t.Span, tokNumber})
		case syntax.TokenOperator:
			out = append(out, semTok{t.Span, tokOperator})
		case syntax.TokenName:
			if k, ok := kinds[t.From]; ok {
				out = append(out, semTok{t.Span, k})
			} else if keywords[string(src[t.From:t.To])] {
				out = append(out, semTok{t.Span, tokKeyword})
			}
		}
	}
	return out
}
