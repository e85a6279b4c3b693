package syntax

// TokenKind classifies a token for editors (highlighting).
type TokenKind int

const (
	TokenName     TokenKind = iota + 1 // names and keywords; units other than µs
	TokenNumber                        // 40, 0.97, .5, 1.5e-3 (the sign is an operator)
	TokenString                        // "..." with its quotes
	TokenOperator                      // + - * / ^ = ( ) { } % >= <=
	TokenComment                       // '#' to the end of the line
	TokenMicro                         // the unit µs (μs)
)

// Token is one token of the source as the parser reads it.
type Token struct {
	Kind TokenKind
	Span
}

// Tokens lexes src exactly as Parse does and returns its tokens and
// comments in source order (line ends omitted). Editors highlight from
// it, so a highlighted file is split the way it is parsed.
func Tokens(src []byte) []Token {
	lx := lex(src)
	toks, comments := lx.toks, lx.comments
	out := make([]Token, 0, len(toks)+len(comments))
	ci := 0
	for _, t := range toks {
		if t.kind == tNewline || t.kind == tEOF {
			continue
		}
		for ci < len(comments) && comments[ci].From < t.From {
			out = append(out, Token{TokenComment, comments[ci].Span})
			ci++
		}
		out = append(out, Token{kindOf(t.kind), t.Span})
	}
	for ; ci < len(comments); ci++ {
		out = append(out, Token{TokenComment, comments[ci].Span})
	}
	return out
}

func kindOf(k tokKind) TokenKind {
	switch k {
	case tName:
		return TokenName
	case tNumber:
		return TokenNumber
	case tString:
		return TokenString
	case tMicro:
		return TokenMicro
	}
	return TokenOperator
}
