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

// scanTokens splits src into classified tokens in source order: comments,
// strings, numbers, units, operators and the identifiers in kinds (or
// keywords). Unknown names get no token.
func scanTokens(src []byte, kinds map[syntax.Pos]int, units map[syntax.Pos]syntax.Span) []semTok {
	var out []semTok
	isLetter := func(b byte) bool { return b == '_' || 'a' <= b && b <= 'z' || 'A' <= b && b <= 'Z' }
	isDigit := func(b byte) bool { return '0' <= b && b <= '9' }
	for i := 0; i < len(src); {
		if u, ok := units[syntax.Pos(i)]; ok && u.To > u.From {
			out = append(out, semTok{u, tokType})
			i = int(u.To)
			continue
		}
		c := src[i]
		switch {
		case c == '#':
			j := i
			for j < len(src) && src[j] != '\n' && src[j] != '\r' {
				j++
			}
			out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, tokComment})
			i = j
		case c == '"':
			j := i + 1
			for j < len(src) && src[j] != '"' && src[j] != '\n' && src[j] != '\r' {
				j++
			}
			if j < len(src) && src[j] == '"' {
				j++
			}
			out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, tokString})
			i = j
		case isLetter(c):
			j := i
			for j < len(src) && (isLetter(src[j]) || isDigit(src[j])) {
				j++
			}
			if k, ok := kinds[syntax.Pos(i)]; ok {
				out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, k})
			} else if keywords[string(src[i:j])] {
				out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, tokKeyword})
			}
			i = j
		case isDigit(c) || c == '.' && i+1 < len(src) && isDigit(src[i+1]):
			j := i
			for j < len(src) && isDigit(src[j]) {
				j++
			}
			if j < len(src) && src[j] == '.' {
				j++
				for j < len(src) && isDigit(src[j]) {
					j++
				}
			}
			if j < len(src) && (src[j] == 'e' || src[j] == 'E') {
				k := j + 1
				if k < len(src) && (src[k] == '+' || src[k] == '-') {
					k++
				}
				if k < len(src) && isDigit(src[k]) {
					for k < len(src) && isDigit(src[k]) {
						k++
					}
					j = k
				}
			}
			out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, tokNumber})
			i = j
		case c == '>' || c == '<':
			j := i + 1
			if j < len(src) && src[j] == '=' {
				j++
			}
			out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(j)}, tokOperator})
			i = j
		case c == '+' || c == '-' || c == '*' || c == '/' || c == '^' || c == '=' || c == '(' || c == ')' || c == '{' || c == '}' || c == '%':
			out = append(out, semTok{syntax.Span{From: syntax.Pos(i), To: syntax.Pos(i + 1)}, tokOperator})
			i++
		default:
			i++
		}
	}
	return out
}
