package syntax

import (
	"fmt"
	"sync"
	"unicode/utf8"
)

// stmtKeywords start top-level statements. A line that starts with one of
// them (or with '}') ends an unclosed '(' of the line before, so a missing
// ')' costs one error instead of swallowing the rest of the file.
var stmtKeywords = map[string]bool{
	"sample": true, "use": true, "gain": true, "block": true, "loop": true,
	"realize": true,
}

// punct maps one-byte operators to their kinds (tEOF, zero: none), a
// table rather than a map: it is read for every operator of every file.
var punct = [utf8.RuneSelf]tokKind{'+': tPlus, '-': tMinus, '*': tStar, '/': tSlash, '^': tCaret,
	'=': tAssign, '(': tLParen, ')': tRParen, '{': tLBrace, '}': tRBrace, '%': tPercent}

// lexer turns source bytes into tokens. It never stops at an error: a byte
// it cannot use is reported with its exact span and skipped.
type lexer struct {
	src      []byte
	text     string // src[base:] as one string: token and comment texts are slices of it
	base     int
	off      int
	depth    int // open '(' count; newlines inside parentheses are skipped
	toks     []token
	comments []*Comment
	errs     ErrorList
	dropped  int // errors past MaxErrors+1, counted, not stored
}

// lex tokenizes src completely; the last token is always tEOF.
func lex(src []byte) *lexer { return lexRange(src, BOMLen(src), len(src)) }

// lexRange tokenizes src[from:to] as if the text ended at to; positions
// are those of src. The last token is tEOF at to.
func lexRange(src []byte, from, to int) *lexer {
	// About one token per three bytes in real files: allocate once.
	return lexInto(src, from, to, make([]token, 0, (to-from)/3+8))
}

// lexInto is lexRange appending the tokens to toks.
func lexInto(src []byte, from, to int, toks []token) *lexer {
	// One copy of the text as a string: every text below is a slice of
	// it, not an allocation of its own.
	lx := &lexer{src: src[:to], base: from, text: string(src[from:to]), toks: toks}
	lx.off = from
	lx.run()
	return lx
}

// tokenLists keeps the parser's token lists between parses: the tree keeps
// no token, and a list as long as the file, made anew for every parse of
// an edited file, is most of what parsing allocates.
var tokenLists sync.Pool

// pooledTokens returns an empty token list, from the pool when it has one.
func pooledTokens(n int) []token {
	if p, ok := tokenLists.Get().(*[]token); ok {
		return (*p)[:0]
	}
	return make([]token, 0, n)
}

// recycleTokens returns a list to the pool, cleared (its texts would keep
// the source alive), unless it is unusually large.
func recycleTokens(toks []token) {
	if cap(toks) > 1<<20 {
		return
	}
	clear(toks)
	toks = toks[:0]
	tokenLists.Put(&toks)
}

func (lx *lexer) errorf(from, to int, format string, args ...any) {
	if len(lx.errs) > MaxErrors {
		lx.dropped++
		return
	}
	lx.errs = append(lx.errs, &Error{Span{Pos(from), Pos(to)}, fmt.Sprintf(format, args...)})
}

func (lx *lexer) emit(k tokKind, from, to int) {
	lx.toks = append(lx.toks, token{kind: k, Span: Span{Pos(from), Pos(to)}, text: lx.text[from-lx.base : to-lx.base]})
}

func isLetter(b byte) bool { return b == '_' || 'a' <= b && b <= 'z' || 'A' <= b && b <= 'Z' }
func isDigit(b byte) bool  { return '0' <= b && b <= '9' }

func (lx *lexer) peekByte(i int) byte {
	if i < len(lx.src) {
		return lx.src[i]
	}
	return 0
}

func (lx *lexer) run() {
	src := lx.src
	for lx.off < len(src) {
		start := lx.off
		c := src[start]
		switch {
		case c == ' ' || c == '\t' || c == '\r' && lx.peekByte(start+1) == '\n':
			lx.off++
		case c == '\n' || c == '\r':
			lx.newline() // a lone '\r' ends a line too (LSP 3.17)
		case c == '#':
			lx.comment()
		case isLetter(c):
			end := start + 1
			for end < len(src) && (isLetter(src[end]) || isDigit(src[end])) {
				end++
			}
			lx.off = end
			lx.emit(tName, start, end)
		case isDigit(c) || c == '.' && isDigit(lx.peekByte(start+1)):
			lx.number()
		case c == '"':
			lx.str()
		case c == '>' || c == '<':
			if lx.peekByte(start+1) == '=' {
				lx.off += 2
				k := tGeq
				if c == '<' {
					k = tLeq
				}
				lx.emit(k, start, lx.off)
			} else {
				lx.off++
				lx.errorf(start, lx.off, "unexpected '%c' (comparisons are '>=' and '<=')", c)
			}
		case c < utf8.RuneSelf:
			k := punct[c]
			ok := k != tEOF
			lx.off++
			if !ok {
				lx.errorf(start, lx.off, "unexpected character %s", quoteByte(c))
				continue
			}
			switch k {
			case tLParen:
				lx.depth++
			case tRParen:
				if lx.depth > 0 {
					lx.depth--
				}
			}
			lx.emit(k, start, lx.off)
		default:
			r, size := utf8.DecodeRune(src[start:])
			lx.off += size
			switch {
			case r == utf8.RuneError && size == 1:
				lx.errorf(start, lx.off, "invalid UTF-8 byte 0x%02x", c)
			case (r == 'µ' || r == 'μ') && lx.peekByte(lx.off) == 's' &&
				!isLetter(lx.peekByte(lx.off+1)) && !isDigit(lx.peekByte(lx.off+1)):
				lx.off++
				lx.emit(tMicro, start, lx.off)
			default:
				lx.errorf(start, lx.off, "unexpected character %q (U+%04X)", r, r)
			}
		}
	}
	lx.endLine(len(src))
	lx.toks = append(lx.toks, token{kind: tEOF, Span: Span{Pos(len(src)), Pos(len(src))}})
}

func quoteByte(c byte) string {
	if c >= 0x20 && c < 0x7f {
		return fmt.Sprintf("'%c'", c)
	}
	return fmt.Sprintf("0x%02x", c)
}

// endLine emits a newline token at the end of the line ending at off,
// unless the previous token already ended the line.
func (lx *lexer) endLine(off int) {
	if n := len(lx.toks); n == 0 || lx.toks[n-1].kind == tNewline {
		return
	}
	end := off
	if end > 0 && end < len(lx.src) && lx.src[end] == '\n' && lx.src[end-1] == '\r' {
		end--
	}
	lx.toks = append(lx.toks, token{kind: tNewline, Span: Span{Pos(end), Pos(end)}})
}

// newline handles '\n' (or a lone '\r'): inside parentheses the line continues, unless the
// next line plainly starts a new statement.
func (lx *lexer) newline() {
	nl := lx.off
	lx.off++
	if lx.depth > 0 && !lx.nextLineStartsStmt() {
		return
	}
	lx.depth = 0
	lx.endLine(nl)
}

func (lx *lexer) nextLineStartsStmt() bool {
	i := lx.off
	for i < len(lx.src) && (lx.src[i] == ' ' || lx.src[i] == '\t') {
		i++
	}
	if i < len(lx.src) && lx.src[i] == '}' {
		return true
	}
	j := i
	for j < len(lx.src) && isLetter(lx.src[j]) {
		j++
	}
	return stmtKeywords[string(lx.src[i:j])] && (j == len(lx.src) || lx.src[j] == ' ' || lx.src[j] == '\t')
}

func (lx *lexer) comment() {
	start := lx.off
	end := start
	for end < len(lx.src) && lx.src[end] != '\n' && lx.src[end] != '\r' {
		end++
	}
	lx.off = end
	lx.checkUTF8(start, end)
	lx.comments = append(lx.comments, &Comment{Span{Pos(start), Pos(end)}, lx.text[start-lx.base : end-lx.base]})
}

// checkUTF8 reports each invalid byte in src[from:to].
func (lx *lexer) checkUTF8(from, to int) {
	for i := from; i < to; {
		r, size := utf8.DecodeRune(lx.src[i:to])
		if r == utf8.RuneError && size == 1 {
			lx.errorf(i, i+1, "invalid UTF-8 byte 0x%02x", lx.src[i])
		}
		i += size
	}
}

// number scans digits [. digits] [e [+-] digits]; the exponent is taken
// only when a digit follows, so "2e" is the number 2 and the name e.
func (lx *lexer) number() {
	src := lx.src
	start := lx.off
	i := start
	for i < len(src) && isDigit(src[i]) {
		i++
	}
	if i < len(src) && src[i] == '.' {
		i++
		for i < len(src) && isDigit(src[i]) {
			i++
		}
	}
	if i < len(src) && (src[i] == 'e' || src[i] == 'E') {
		j := i + 1
		if j < len(src) && (src[j] == '+' || src[j] == '-') {
			j++
		}
		if j < len(src) && isDigit(src[j]) {
			for j < len(src) && isDigit(src[j]) {
				j++
			}
			i = j
		}
	}
	lx.off = i
	lx.emit(tNumber, start, i)
}

// str scans a "..." string on one line (no escapes).
func (lx *lexer) str() {
	start := lx.off
	i := start + 1
	for i < len(lx.src) && lx.src[i] != '"' && lx.src[i] != '\n' && lx.src[i] != '\r' {
		i++
	}
	if i < len(lx.src) && lx.src[i] == '"' {
		lx.checkUTF8(start+1, i)
		lx.off = i + 1
		lx.toks = append(lx.toks, token{kind: tString, Span: Span{Pos(start), Pos(lx.off)}, text: lx.text[start+1-lx.base : i-lx.base]})
		return
	}
	end := i
	lx.errorf(start, end, "unterminated string (missing closing '\"')")
	lx.checkUTF8(start+1, end)
	lx.off = end
	lx.toks = append(lx.toks, token{kind: tString, Span: Span{Pos(start), Pos(end)}, text: lx.text[start+1-lx.base : end-lx.base]})
}
