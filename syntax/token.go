package syntax

import "fmt"

// tokKind classifies a token.
type tokKind int

const (
	tEOF     tokKind = iota
	tNewline         // ends a statement or a loop item
	tName            // [A-Za-z_][A-Za-z0-9_]*
	tNumber          // 40, 0.97, .5, 1.5e-3
	tString          // "..." (Text is unquoted)
	tMicro           // the unit µs / μs, which is not a name
	tPercent         // %
	tPlus
	tMinus
	tStar
	tSlash
	tCaret
	tAssign
	tLParen
	tRParen
	tLBrace
	tRBrace
	tGeq
	tLeq
)

// token is one lexical token. For tNewline the span is empty and sits at
// the end of the line (before "\r\n"), so errors about a missing token point
// at the line's end; for tEOF it is empty at the end of the file.
type token struct {
	kind tokKind
	Span
	text string // source text; for tString the unquoted contents
}

var opText = map[tokKind]string{
	tPercent: "%", tPlus: "+", tMinus: "-", tStar: "*", tSlash: "/",
	tCaret: "^", tAssign: "=", tLParen: "(", tRParen: ")",
	tLBrace: "{", tRBrace: "}", tGeq: ">=", tLeq: "<=",
}

// describe names a token for an error message: "end of line", "'='",
// "name kp", "number 0.8", "string \"a\"".
func (t token) describe() string {
	switch t.kind {
	case tEOF:
		return "end of file"
	case tNewline:
		return "end of line"
	case tName:
		return t.text
	case tNumber:
		return "number " + t.text
	case tString:
		return fmt.Sprintf("string %q", t.text)
	case tMicro:
		return t.text
	}
	return "'" + opText[t.kind] + "'"
}

// startsPrimary reports whether t can begin a factor written side by side
// with the previous one ("9s", "2(z - 1)").
func (t token) startsPrimary() bool {
	return t.kind == tNumber || t.kind == tName || t.kind == tLParen
}
