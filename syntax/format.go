package syntax

import (
	"bytes"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Canonical layout written by Format:
//   - one statement per line, loop items indented two spaces, '}' alone;
//   - one space around '=', binary '+ - * /', '>=' and '<='; none around '^';
//     factors written side by side stay side by side, with a space only where
//     the two would otherwise lex as one token ("kp z", "2 e1");
//   - runs of consecutive gain lines, and of block lines, aligned on '=';
//     trailing comments of consecutive lines aligned two spaces after the
//     longest code; a comment line that continued such a column stays in it;
//   - at most one blank line between statements and items, none after '{'
//     or before '}' or at the start and end of the file;
//   - numbers, units and comments as written (trailing blanks removed),
//     LF line ends, a final newline;
//   - an expression broken over lines inside parentheses is joined onto
//     one line, unless comments sit inside it: then the statement is kept
//     as written.

// LineBreak is the line break src uses: that of its first line, "\n" when
// it has none.
func LineBreak(src []byte) string {
	i := bytes.IndexAny(src, "\r\n")
	switch {
	case i < 0 || src[i] == '\n':
		return "\n"
	case i+1 < len(src) && src[i+1] == '\n':
		return "\r\n"
	}
	return "\r"
}

// ErrSyntax is wrapped by the error Format returns for a file with syntax
// errors; such a file is never rewritten.
var ErrSyntax = errors.New("file has syntax errors")

// Format returns src in canonical layout. It refuses a file with syntax
// errors (the error wraps ErrSyntax and the ErrorList).
func Format(src []byte) ([]byte, error) {
	f, errs := Parse("", src)
	if len(errs) > 0 {
		return nil, fmt.Errorf("%w: %w", ErrSyntax, errs)
	}
	lines := layout(f)
	var b bytes.Buffer
	b.Grow(len(src) + len(src)/8)
	b.Write(src[:BOMLen(src)]) // the mark stays; it is part of nothing
	for _, l := range lines {
		b.WriteString(l.text)
		b.WriteByte('\n')
	}
	out := b.Bytes()
	if err := sameLayoutFree(f, out); err != nil {
		return nil, err
	}
	return out, nil
}

// sameLayoutFree refuses a layout that would not read back as f, the
// parsed source: same tree, same comments. It guards every formatter edit.
func sameLayoutFree(f *File, out []byte) error {
	if err := sameTree(f, 0, out, nil); err != nil {
		return fmt.Errorf("not formatted: the new layout would change the file (please report this file): %w", err)
	}
	return nil
}

// FormatRange formats the whole statements that overlap [from, to) (or
// contain from, for an empty range). It returns the span of src to replace,
// which runs from the start of the first statement's line to the end of the
// last one's line (before its line break), and the text to put there, with
// the file's own line breaks. No statement in range gives an empty span at
// from and no text.
func FormatRange(src []byte, from, to Pos) (Span, []byte, error) {
	f, errs := Parse("", src)
	if len(errs) > 0 {
		return Span{}, nil, fmt.Errorf("%w: %w", ErrSyntax, errs)
	}
	first, last := -1, -1
	for i, s := range f.Stmts {
		if s.Pos() < to && s.End() > from || from == to && s.Pos() <= from && from <= s.End() {
			if first < 0 {
				first = i
			}
			last = i
		}
	}
	if first < 0 {
		return Span{from, from}, nil, nil
	}
	lines := layout(f)
	lo, hi := -1, -1
	srcEnd := 0
	for k, l := range lines {
		if l.stmt >= first && l.stmt <= last {
			if lo < 0 {
				lo = k
			}
			hi = k
			srcEnd = max(srcEnd, l.srcLine)
		}
	}
	nl := LineBreak(src)
	var parts []string
	for _, l := range lines[lo : hi+1] {
		parts = append(parts, l.text)
	}
	start := max(f.Lines.LineStart(f.Lines.line(f.Stmts[first].Pos())), Pos(BOMLen(src))) // the mark stays
	span := Span{start, f.Lines.LineEnd(srcEnd)}
	text := []byte(strings.Join(parts, nl))
	out, err := ApplyEdits(src, []Edit{{span, string(text)}})
	if err == nil {
		err = sameLayoutFree(f, out)
	}
	if err != nil {
		return Span{}, nil, err
	}
	return span, text, nil
}

type alignKind int

const (
	alignNone alignKind = iota
	alignGain
	alignBlock
)

// outLine is one output line before alignment.
type outLine struct {
	indent  int
	code    string // "" for a comment line or a blank line
	comment string // trailing comment, or the whole of a comment line
	cont    bool   // comment line continuing the trailing-comment column above
	raw     bool   // kept as written: takes no part in alignment
	open    bool   // a loop header (no blank line after it)
	align   alignKind
	name    string // declared name of an aligned line
	rest    string // text after " = " of an aligned line
	stmt    int    // index of the top-level statement, -1 for none
	srcLine int    // 0-based source line where this line's element ends
	srcCol  int    // source column (code points) of comment
	text    string // final text, after alignment
}

type printer struct {
	f     *File
	lines []outLine
	ci    int // next comment to place
}

func layout(f *File) []outLine {
	p := &printer{f: f}
	for i, s := range f.Stmts {
		p.comments(s.Pos(), 0)
		p.gap(s.Pos())
		p.stmt(i, s)
	}
	p.comments(Pos(len(f.Src)+1), 0)
	alignNames(p.lines)
	alignComments(p.lines)
	return p.lines
}

func (p *printer) line(pos Pos) int { return p.f.Lines.line(pos) }

func (p *printer) col(pos Pos) int {
	_, c := p.f.Lines.LineCol(pos)
	return c
}

// gap keeps one blank line where the source had one or more before pos.
func (p *printer) gap(pos Pos) {
	n := len(p.lines)
	if n == 0 {
		return
	}
	last := p.lines[n-1]
	if last.open || last.code == "" && last.comment == "" {
		return
	}
	if p.line(pos)-last.srcLine > 1 {
		p.lines = append(p.lines, outLine{stmt: -1, srcLine: last.srcLine})
	}
}

// comments places the comments that start before pos, as trailing comments
// of the line they share with code or as comment lines.
func (p *printer) comments(before Pos, indent int) {
	cs := p.f.Comments
	for ; p.ci < len(cs) && cs[p.ci].From < before; p.ci++ {
		c := cs[p.ci]
		text := strings.TrimRight(c.Text, " \t")
		ln, col := p.line(c.From), p.col(c.From)
		n := len(p.lines)
		if n > 0 {
			last := &p.lines[n-1]
			if last.code != "" && last.comment == "" && last.srcLine == ln {
				last.comment, last.srcCol = text, col
				continue
			}
		}
		p.gap(c.From)
		stmt := -1
		if indent > 0 {
			stmt = p.lines[len(p.lines)-1].stmt
		}
		l := outLine{indent: indent, comment: text, stmt: stmt, srcLine: ln, srcCol: col}
		if n := len(p.lines); n > 0 {
			last := p.lines[n-1]
			if last.comment != "" && !last.raw && (last.code != "" || last.cont) && last.srcLine == ln-1 && last.srcCol == col {
				l.cont = true
			}
		}
		p.lines = append(p.lines, l)
	}
}

func (p *printer) add(l outLine) { p.lines = append(p.lines, l) }

func (p *printer) stmt(i int, s Stmt) {
	endLine := p.line(s.End())
	if l, ok := s.(*LoopStmt); ok {
		p.add(outLine{code: "loop " + l.Name.Name + " {", open: true, stmt: i, srcLine: p.line(l.LBrace)})
		for _, it := range l.Items {
			p.comments(it.Pos(), 2)
			p.gap(it.Pos())
			p.add(outLine{indent: 2, code: itemText(it), stmt: i, srcLine: p.line(it.End())})
		}
		p.comments(l.RBrace, 2)
		p.add(outLine{code: "}", stmt: i, srcLine: p.line(l.RBrace)})
		return
	}
	if endLine != p.line(s.Pos()) {
		cs := p.f.Comments
		if p.ci < len(cs) && cs[p.ci].From < s.End() {
			// Comments inside a broken expression: keep it as written.
			for p.ci < len(cs) && cs[p.ci].From < s.End() {
				p.ci++
			}
			// Split at every line break ("\r\n", "\r", "\n"): one output line per source line.
			raw := strings.Split(strings.NewReplacer("\r\n", "\n", "\r", "\n").Replace(string(p.f.Src[s.Pos():s.End()])), "\n")
			start := p.line(s.Pos())
			for k, r := range raw {
				p.add(outLine{code: strings.TrimRight(r, " \t"), raw: true, stmt: i, srcLine: start + k})
			}
			return
		}
	}
	l := outLine{stmt: i, srcLine: endLine}
	switch s := s.(type) {
	case *SampleStmt:
		l.code = "sample " + numberText(s.Value)
	case *UseStmt:
		l.code = `use "` + s.Path + `"` // .loop strings have no escapes
	case *GainStmt:
		l.align, l.name = alignGain, s.Name.Name
		rest := numberText(s.Value)
		kws := []struct {
			kw  string
			at  Pos
			num *Number
		}{{"min", s.MinKw.From, s.Min}, {"max", s.MaxKw.From, s.Max}}
		if s.Min != nil && s.Max != nil && s.MaxKw.From < s.MinKw.From {
			kws[0], kws[1] = kws[1], kws[0]
		}
		for _, k := range kws {
			if k.num != nil {
				rest += " " + k.kw + " " + numberText(k.num)
			}
		}
		if s.Vary != nil {
			rest += " vary " + numberText(s.Vary.Lo) + " to " + numberText(s.Vary.Hi)
		}
		l.rest = rest
	case *BlockStmt:
		l.align, l.name = alignBlock, s.Name.Name
		l.rest = exprText(s.Expr)
		if s.Via != nil {
			l.rest += " via " + s.Via.Method.Name
			if s.Via.Prewarp != nil {
				l.rest += " prewarp " + numberText(s.Via.Prewarp)
			}
		}
	case *RealizeStmt:
		l.code = "realize " + s.Block.Name + " as " + s.Structure.Name + " in " + s.Format.Name
	default:
		l.code = string(p.f.Src[s.Pos():s.End()])
		l.raw = true
	}
	if l.align == alignGain {
		l.code = "gain " + l.name + " = " + l.rest // aligned later
	} else if l.align == alignBlock {
		l.code = "block " + l.name + " = " + l.rest
	}
	p.add(l)
}

func numberText(n *Number) string {
	s := n.Text
	if n.Neg {
		s = "-" + s
	}
	if n.Unit != "" {
		s += " " + n.Unit
	}
	return s
}

func itemText(it LoopItem) string {
	switch it := it.(type) {
	case *PathItem:
		s := it.Keyword.Name
		for _, n := range it.Names {
			s += " " + n.Name
		}
		return s
	case *SignItem:
		return "sign " + it.Value.Name
	case *RequireItem:
		return "require " + it.Metric.Name + " " + it.Op + " " + numberText(it.Value)
	}
	return ""
}

// edge classifies the first or last token of a printed expression, to
// decide whether two factors side by side need a space between them.
type edge int

const (
	edgeName edge = iota
	edgeNumber
	edgePower // an exponent's digits
	edgeParen
	edgeSign
)

func rightEdge(e Expr) edge {
	switch e := e.(type) {
	case *Binary:
		return rightEdge(e.Y)
	case *Unary:
		return rightEdge(e.X)
	case *Power:
		return edgePower
	case *Paren:
		return edgeParen
	case *NumberLit:
		return edgeNumber
	}
	return edgeName
}

func leftEdge(e Expr) edge {
	switch e := e.(type) {
	case *Binary:
		return leftEdge(e.X)
	case *Unary:
		return edgeSign
	case *Power:
		return leftEdge(e.X)
	case *Paren:
		return edgeParen
	case *NumberLit:
		return edgeNumber
	}
	return edgeName
}

// exprText prints e on one line; Paren nodes keep the grouping as written.
func exprText(e Expr) string {
	switch e := e.(type) {
	case *NumberLit:
		return e.Text
	case *VarRef:
		return e.Name
	case *NameRef:
		return e.Name
	case *Paren:
		return "(" + exprText(e.X) + ")"
	case *Unary:
		return e.Op + exprText(e.X)
	case *Power:
		return exprText(e.X) + "^" + strconv.Itoa(e.Exp)
	case *Binary:
		x, y := exprText(e.X), exprText(e.Y)
		if !e.Juxtaposed {
			return x + " " + e.Op + " " + y
		}
		if needSpace(rightEdge(e.X), leftEdge(e.Y), y) {
			return x + " " + y
		}
		return x + y
	}
	return ""
}

// needSpace reports whether a factor ending in r followed by one starting
// in l (printed as y) must be separated to lex the same: "kp z" not "kpz",
// "2 3", "2 e1" (not the number 2e1), "z^2 s" for legibility.
func needSpace(r, l edge, y string) bool {
	if l == edgeParen || r == edgeParen {
		return false
	}
	if l == edgeSign {
		return true
	}
	switch r {
	case edgeName, edgePower:
		return true
	}
	// r is a number
	return l == edgeNumber || y[0] == 'e' || y[0] == 'E'
}

func width(s string) int { return utf8.RuneCountInString(s) }

// alignNames pads the names of consecutive gain lines, and of consecutive
// block lines, so their '=' line up.
func alignNames(lines []outLine) {
	for i := 0; i < len(lines); {
		k := lines[i].align
		j := i + 1
		for k != alignNone && j < len(lines) && lines[j].align == k {
			j++
		}
		w := 0
		for _, l := range lines[i:j] {
			w = max(w, width(l.name))
		}
		for n := i; n < j; n++ {
			l := &lines[n]
			if k == alignGain {
				l.code = "gain " + pad(l.name, w) + " = " + l.rest
			} else if k == alignBlock {
				l.code = "block " + pad(l.name, w) + " = " + l.rest
			}
		}
		i = j
	}
}

func pad(s string, w int) string { return s + strings.Repeat(" ", w-width(s)) }

// alignComments puts the trailing comments of consecutive code lines (and
// comment lines continuing them) in one column, two spaces after the
// longest code.
func alignComments(lines []outLine) {
	inRun := func(l outLine) bool { return !l.raw && l.comment != "" && (l.code != "" || l.cont) }
	for i := 0; i < len(lines); {
		if !inRun(lines[i]) || lines[i].code == "" {
			lines[i].text = plain(lines[i])
			i++
			continue
		}
		j := i + 1
		for j < len(lines) && inRun(lines[j]) {
			j++
		}
		colw := 0
		for _, l := range lines[i:j] {
			if l.code != "" {
				colw = max(colw, l.indent+width(l.code))
			}
		}
		for n := i; n < j; n++ {
			l := &lines[n]
			lead := strings.Repeat(" ", l.indent) + l.code
			l.text = pad(lead, colw+2) + l.comment
		}
		i = j
	}
}

func plain(l outLine) string {
	s := strings.Repeat(" ", l.indent) + l.code
	if l.comment != "" {
		if l.code != "" {
			s += "  "
		}
		s += l.comment
	}
	if l.code == "" && l.comment == "" {
		return ""
	}
	return s
}
