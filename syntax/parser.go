package syntax

import (
	"fmt"
	"math"
	"runtime"
	"strconv"
	"sync"
)

// Limits of the parser. They keep hostile or broken input from costing
// more than a clear error.
const (
	// MaxExprDepth is the deepest nesting of parentheses and signs in one
	// expression. Real transfer functions nest a handful of levels; the
	// limit keeps recursion far from Go's stack limit on crafted input.
	MaxExprDepth = 100
	// MaxExponent bounds |n| in x^n. A degree above 64 is no controller a
	// person writes by hand, and polynomial arithmetic on it loses all
	// precision in float64.
	MaxExponent = 64
	// MaxErrors is how many syntax errors Parse lists; past it, one more
	// error at the first unlisted one says how many were left out. A file
	// of junk then costs a screenful, not one error per byte.
	MaxErrors = 100
)

// Parse reads a .loop file. It always returns a non-nil *File whose tree
// covers every statement (unreadable ones as BadStmt, BadItem or BadExpr)
// and the list of syntax errors, sorted by position. It never panics and
// always terminates: every recovery step consumes at least one token.
func Parse(name string, src []byte) (*File, ErrorList) {
	lines := NewLines(src)
	if cuts := chunkCuts(src, runtime.GOMAXPROCS(0)); len(cuts) > 2 {
		if f, ok := parseChunks(name, src, lines, cuts); ok {
			return f, nil
		}
	}
	f, errs, dropped := parseRange(src, lines, BOMLen(src), len(src))
	f.Name = name
	return f, capErrors(errs, dropped)
}

// parseRange parses the statements of src[from:to] as if the text ended
// at to, with positions of src; it returns the errors unsorted, with the
// count of those never stored.
func parseRange(src []byte, lines *Lines, from, to int) (*File, ErrorList, int) {
	lx := lexInto(src, from, to, pooledTokens((to-from)/3+8))
	defer func() { recycleTokens(lx.toks) }()
	p := &parser{toks: lx.toks, lines: lines}
	f := &File{Src: src, Lines: lines, Comments: lx.comments}
	for p.tok().kind != tEOF {
		if p.tok().kind == tNewline {
			p.next()
			continue
		}
		before := p.i
		f.Stmts = append(f.Stmts, p.stmt())
		if p.i == before { // cannot happen; guard against a loop
			p.next()
		}
	}
	return f, append(lx.errs, p.errs...), lx.dropped + p.dropped
}

// minChunk is the smallest piece of a file parsed on a processor of its
// own: below it, starting a goroutine costs more than it saves.
const minChunk = 8 << 10

// chunkCuts splits src into about n pieces for parseChunks: the offsets
// from the start of the text to its end, each cut at the start of a line
// that begins with a statement keyword (as Parse reads it, a statement
// starts there in any file without syntax errors). Fewer than three
// offsets: no split.
func chunkCuts(src []byte, n int) []int {
	if n < 2 || len(src) < 2*minChunk {
		return nil
	}
	n = min(n, len(src)/minChunk)
	cuts := []int{BOMLen(src)}
	for k := 1; k < n; k++ {
		at := stmtLineAfter(src, k*len(src)/n)
		if at < 0 {
			break
		}
		if at > cuts[len(cuts)-1] {
			cuts = append(cuts, at)
		}
	}
	return append(cuts, len(src))
}

// stmtLineAfter is the start of the first line at or after off (just past
// a '\n') that begins with a statement keyword, or -1.
func stmtLineAfter(src []byte, off int) int {
	for i := off; i < len(src); i++ {
		if src[i] != '\n' {
			continue
		}
		j := i + 1
		for j < len(src) && (src[j] == ' ' || src[j] == '\t') {
			j++
		}
		k := j
		for k < len(src) && isLetter(src[k]) {
			k++
		}
		if k < len(src) && (src[k] == ' ' || src[k] == '\t') && stmtKeywords[string(src[j:k])] {
			return i + 1
		}
	}
	return -1
}

// parseChunks parses the pieces of src between cuts side by side and
// joins them. A file without syntax errors parses to the same tree as in
// one piece (the parser is between statements at every cut); ok is false
// when a piece has an error, and the caller parses the whole file in one
// piece, so that every message reads as it always did.
func parseChunks(name string, src []byte, lines *Lines, cuts []int) (*File, bool) {
	parts := make([]*File, len(cuts)-1)
	failed := make([]bool, len(parts))
	var wg sync.WaitGroup
	for i := range parts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			f, errs, dropped := parseRange(src, lines, cuts[i], cuts[i+1])
			parts[i], failed[i] = f, len(errs) > 0 || dropped > 0
		}()
	}
	wg.Wait()
	f := &File{Name: name, Src: src, Lines: lines}
	for i, part := range parts {
		if failed[i] {
			return nil, false
		}
		f.Stmts = append(f.Stmts, part.Stmts...)
		f.Comments = append(f.Comments, part.Comments...)
	}
	return f, true
}

// capErrors sorts errs and keeps the first MaxErrors, then one error at the
// first one left out saying how many were. dropped counts errors never
// stored (each source keeps only its first MaxErrors+1).
func capErrors(errs ErrorList, dropped int) ErrorList {
	errs.Sort()
	if len(errs) <= MaxErrors {
		return errs
	}
	more := len(errs) - MaxErrors + dropped
	first := errs[MaxErrors]
	errs = append(errs[:MaxErrors:MaxErrors], &Error{first.Span,
		fmt.Sprintf("%s; and %d more syntax errors from here on (only the first %d are listed)", first.Msg, more-1, MaxErrors)})
	return errs
}

type parser struct {
	dropped int // errors past MaxErrors+1, counted, not stored
	toks    []token
	i       int
	lines   *Lines
	errs    ErrorList
	depth   int  // current expression nesting
	bail    bool // an error was reported in the current expression
}

func (p *parser) tok() token { return p.toks[p.i] }

func (p *parser) peek(n int) token {
	if p.i+n < len(p.toks) {
		return p.toks[p.i+n]
	}
	return p.toks[len(p.toks)-1]
}

func (p *parser) next() {
	if p.i < len(p.toks)-1 {
		p.i++
	}
}

// prevEnd is the end of the last consumed token.
func (p *parser) prevEnd() Pos {
	if p.i == 0 {
		return 0
	}
	return p.toks[p.i-1].To
}

func (p *parser) errorf(s Span, format string, args ...any) {
	if len(p.errs) > MaxErrors {
		p.dropped++
		return
	}
	p.errs = append(p.errs, &Error{s, fmt.Sprintf(format, args...)})
}

func (p *parser) isName(text string) bool {
	t := p.tok()
	return t.kind == tName && t.text == text
}

func (p *parser) atLineEnd() bool {
	k := p.tok().kind
	return k == tNewline || k == tEOF
}

// skipLine consumes tokens up to (not including) the end of the line.
func (p *parser) skipLine() {
	for !p.atLineEnd() {
		p.next()
	}
}

// spanFrom is [from, end of last consumed token], never inverted.
func (p *parser) spanFrom(from Pos) Span {
	to := p.prevEnd()
	if to < from {
		to = from
	}
	return Span{from, to}
}

// badStmt skips the rest of the line and covers it from start.
func (p *parser) badStmt(start Pos) Stmt {
	p.skipLine()
	return &BadStmt{p.spanFrom(start)}
}

func (p *parser) stmt() Stmt {
	t := p.tok()
	p.bail = false
	if t.kind == tName {
		switch t.text {
		case "sample":
			return p.sample()
		case "use":
			return p.use()
		case "gain":
			return p.gain()
		case "block":
			return p.block()
		case "loop":
			return p.loop()
		case "realize":
			return p.realize()
		case "forward", "feedback", "sign", "require":
			p.errorf(t.Span, "%s is only allowed inside a loop's braces", t.text)
			p.next()
			return p.badStmt(t.From)
		}
		p.errorf(t.Span, "unknown statement %s (want sample, use, gain, block, loop or realize)%s", t.text, didYouMean(t.text, topKeywords))
	} else if t.kind == tRBrace {
		p.errorf(t.Span, "unexpected '}' with no open loop")
	} else {
		p.errorf(t.Span, "unexpected %s at start of statement", t.describe())
	}
	p.next()
	return p.badStmt(t.From)
}

// endOfStmt reports an error unless the line ends here.
func (p *parser) endOfStmt(after string) bool {
	if p.atLineEnd() {
		return true
	}
	t := p.tok()
	p.errorf(t.Span, "unexpected %s after %s", t.describe(), after)
	return false
}

func (p *parser) sample() Stmt {
	start := p.tok().From
	p.next()
	n := p.number("after sample", true)
	if n == nil || !p.endOfStmt("sample period") {
		return p.badStmt(start)
	}
	return &SampleStmt{p.spanFrom(start), n}
}

func (p *parser) use() Stmt {
	start := p.tok().From
	p.next()
	t := p.tok()
	if t.kind != tString {
		p.errorf(t.Span, "expected a quoted path after use, found %s", t.describe())
		return p.badStmt(start)
	}
	p.next()
	if !p.endOfStmt("use path") {
		return p.badStmt(start)
	}
	return &UseStmt{p.spanFrom(start), t.text, t.Span}
}

// declName reads the name declared by a gain, block or loop statement.
func (p *parser) declName(what string) *Ident {
	t := p.tok()
	if t.kind != tName {
		p.errorf(t.Span, "expected a %s name after %s, found %s", what, what, t.describe())
		return nil
	}
	p.next()
	switch t.text {
	case "s":
		p.errorf(t.Span, "s is the Laplace variable and cannot be a %s name", what)
		return nil
	case "z":
		p.errorf(t.Span, "z is the z-transform variable and cannot be a %s name", what)
		return nil
	}
	return &Ident{t.Span, t.text}
}

func (p *parser) expectAssign(what string, name *Ident) bool {
	t := p.tok()
	if t.kind != tAssign {
		p.errorf(t.Span, "expected '=' after %s name %s, found %s", what, name.Name, t.describe())
		return false
	}
	p.next()
	return true
}

func (p *parser) gain() Stmt {
	start := p.tok().From
	p.next()
	name := p.declName("gain")
	if name == nil || !p.expectAssign("gain", name) {
		return p.badStmt(start)
	}
	g := &GainStmt{Name: name}
	if g.Value = p.number("for gain "+name.Name, false); g.Value == nil {
		return p.badStmt(start)
	}
	for !p.atLineEnd() {
		t := p.tok()
		if t.kind != tName || t.text != "min" && t.text != "max" && t.text != "vary" {
			p.errorf(t.Span, "unexpected %s after gain %s value (want min, max, vary or end of line)", t.describe(), name.Name)
			return p.badStmt(start)
		}
		if t.text == "vary" {
			if !p.vary(g) {
				return p.badStmt(start)
			}
			continue
		}
		if g.Vary != nil {
			p.errorf(t.Span, "gain %s varies (vary %s to %s): it is uncertain, not tunable, so it takes no %s", name.Name, numberText(g.Vary.Lo), numberText(g.Vary.Hi), t.text)
			return p.badStmt(start)
		}
		p.next()
		n := p.number("after "+t.text, false)
		if n == nil {
			return p.badStmt(start)
		}
		if t.text == "min" {
			if g.Min != nil {
				p.errorf(t.Span, "min given twice for gain %s", name.Name)
				return p.badStmt(start)
			}
			g.Min, g.MinKw = n, t.Span
		} else {
			if g.Max != nil {
				p.errorf(t.Span, "max given twice for gain %s", name.Name)
				return p.badStmt(start)
			}
			g.Max, g.MaxKw = n, t.Span
		}
	}
	g.Span = p.spanFrom(start)
	return g
}

// vary reads "vary A to B" into g (the current token is "vary"). A varying
// gain is uncertain, so a tuning range (min, max) beside it is an error.
func (p *parser) vary(g *GainStmt) bool {
	kw := p.tok()
	name := g.Name.Name
	switch {
	case g.Vary != nil:
		p.errorf(kw.Span, "vary given twice for gain %s", name)
		return false
	case g.Min != nil || g.Max != nil:
		p.errorf(kw.Span, "gain %s has min or max (a tuning range), so it cannot also vary; an uncertain gain gives its range with vary alone", name)
		return false
	}
	p.next()
	v := &Vary{}
	if v.Lo = p.number("after vary", false); v.Lo == nil {
		return false
	}
	t := p.tok()
	if t.kind != tName || t.text != "to" {
		p.errorf(t.Span, "expected to after vary %s, found %s (write vary A to B)", numberText(v.Lo), t.describe())
		return false
	}
	v.ToKw = t.Span
	p.next()
	if v.Hi = p.number("after to", false); v.Hi == nil {
		return false
	}
	v.Span = Span{kw.From, v.Hi.To}
	g.Vary = v
	return true
}

// number reads [-]NUMBER [UNIT]. A unit is a name, "µs", "%", or
// name/name ("rad/s"); which units fit where is for analysis to say.
func (p *parser) number(what string, withUnit bool) *Number {
	start := p.tok().From
	neg := false
	if p.tok().kind == tMinus {
		neg = true
		p.next()
	}
	t := p.tok()
	if t.kind != tNumber {
		p.errorf(t.Span, "expected a number %s, found %s", what, t.describe())
		return nil
	}
	p.next()
	v, ok := p.parseFloat(t)
	if !ok {
		return nil
	}
	if neg {
		v = -v
	}
	n := &Number{Span: Span{start, t.To}, Value: v, Text: t.text, Neg: neg, UnitSpan: Span{NoPos, NoPos}}
	if !withUnit {
		return n
	}
	u := p.tok()
	switch u.kind {
	case tMicro, tPercent:
		p.next()
		n.Unit, n.UnitSpan = u.text, u.Span
	case tName:
		p.next()
		n.Unit, n.UnitSpan = u.text, u.Span
		if p.tok().kind == tSlash && p.peek(1).kind == tName {
			p.next()
			d := p.tok()
			p.next()
			n.Unit, n.UnitSpan = u.text+"/"+d.text, Span{u.From, d.To}
		}
	}
	n.To = p.prevEnd()
	return n
}

func (p *parser) parseFloat(t token) (float64, bool) {
	v, err := strconv.ParseFloat(t.text, 64)
	if err != nil && (math.IsInf(v, 0) || math.IsNaN(v)) {
		p.errorf(t.Span, "number %s is out of range", t.text)
		return 0, false
	}
	return v, true
}

func (p *parser) block() Stmt {
	start := p.tok().From
	p.next()
	name := p.declName("block")
	if name == nil || !p.expectAssign("block", name) {
		return p.badStmt(start)
	}
	b := &BlockStmt{Name: name}
	b.Expr = p.expr()
	if p.bail {
		p.skipLine()
		b.Span = p.spanFrom(start)
		return b
	}
	if p.isName("via") {
		if b.Via = p.via(); b.Via == nil {
			return p.badStmt(start)
		}
	}
	if !p.atLineEnd() {
		t := p.tok()
		if t.kind == tRParen {
			p.errorf(t.Span, "unmatched ')' in block %s", name.Name)
		} else if b.Via == nil {
			p.errorf(t.Span, "unexpected %s after the expression of block %s", t.describe(), name.Name)
		} else {
			p.errorf(t.Span, "unexpected %s after via %s (want prewarp or end of line)", t.describe(), b.Via.Method.Name)
		}
		return p.badStmt(start)
	}
	b.Span = p.spanFrom(start)
	return b
}

func (p *parser) via() *Via {
	start := p.tok().From
	p.next()
	t := p.tok()
	if t.kind != tName {
		p.errorf(t.Span, "expected a discretization method after via, found %s", t.describe())
		return nil
	}
	p.next()
	v := &Via{Method: &Ident{t.Span, t.text}}
	if p.isName("prewarp") {
		p.next()
		if v.Prewarp = p.number("after prewarp", true); v.Prewarp == nil {
			return nil
		}
	}
	v.Span = p.spanFrom(start)
	return v
}

// ---- loops ----

var itemKeywords = map[string]bool{"forward": true, "feedback": true, "sign": true, "require": true}

func (p *parser) loop() Stmt {
	start := p.tok().From
	p.next()
	name := p.declName("loop")
	lb := p.tok()
	if name != nil && lb.kind != tLBrace {
		p.errorf(lb.Span, "expected '{' after loop name %s, found %s", name.Name, lb.describe())
		name = nil
	}
	if name == nil {
		// Read the body anyway when there plainly is one, so its lines
		// do not each turn into "unknown statement" errors.
		hasBrace := false
		for !p.atLineEnd() {
			if p.tok().kind == tLBrace {
				hasBrace = true
			}
			p.next()
		}
		nl := p.peek(1)
		if hasBrace || p.tok().kind == tNewline && nl.kind == tName && itemKeywords[nl.text] {
			l := &LoopStmt{Name: &Ident{Name: "?"}, LBrace: NoPos}
			p.body(l, false)
		}
		return &BadStmt{p.spanFrom(start)}
	}
	p.next()
	l := &LoopStmt{Name: name, LBrace: lb.From, RBrace: NoPos}
	p.body(l, true)
	l.Span = p.spanFrom(start)
	if l.RBrace != NoPos && !p.atLineEnd() {
		t := p.tok()
		p.errorf(t.Span, "unexpected %s after '}' of loop %s", t.describe(), name.Name)
		p.skipLine()
	}
	return l
}

// body reads loop items up to the closing brace. A line that starts a
// top-level statement, or the end of the file, ends an unclosed loop.
func (p *parser) body(l *LoopStmt, report bool) {
	for {
		t := p.tok()
		switch {
		case t.kind == tNewline:
			p.next()
			continue
		case t.kind == tRBrace:
			l.RBrace = t.From
			p.next()
			return
		case t.kind == tEOF || t.kind == tName && stmtKeywords[t.text]:
			if report {
				ln, _ := p.lines.LineCol(l.LBrace)
				end := p.prevEnd()
				p.errorf(Span{end, end}, "missing '}' to close loop %s (opened at line %d)", l.Name.Name, ln)
			}
			return
		}
		before := p.i
		l.Items = append(l.Items, p.item())
		if p.i == before {
			p.next()
		}
	}
}

func (p *parser) atItemEnd() bool {
	k := p.tok().kind
	return k == tNewline || k == tEOF || k == tRBrace
}

func (p *parser) badItem(start Pos) LoopItem {
	for !p.atItemEnd() {
		p.next()
	}
	return &BadItem{p.spanFrom(start)}
}

func (p *parser) endOfItem(after string) bool {
	if p.atItemEnd() {
		return true
	}
	t := p.tok()
	p.errorf(t.Span, "unexpected %s after %s", t.describe(), after)
	return false
}

func (p *parser) item() LoopItem {
	t := p.tok()
	start := t.From
	if t.kind != tName || !itemKeywords[t.text] {
		if t.kind == tName {
			p.errorf(t.Span, "unknown loop item %s (want forward, feedback, sign or require)%s", t.text, didYouMean(t.text, []string{"forward", "feedback", "sign", "require"}))
		} else {
			p.errorf(t.Span, "unexpected %s at start of loop item", t.describe())
		}
		p.next()
		return p.badItem(start)
	}
	p.next()
	switch t.text {
	case "forward", "feedback":
		it := &PathItem{Keyword: Ident{t.Span, t.text}}
		for p.tok().kind == tName {
			n := p.tok()
			it.Names = append(it.Names, &Ident{n.Span, n.text})
			p.next()
		}
		if !p.atItemEnd() {
			n := p.tok()
			p.errorf(n.Span, "unexpected %s in %s path (want block or gain names)", n.describe(), t.text)
			return p.badItem(start)
		}
		if len(it.Names) == 0 {
			n := p.tok()
			p.errorf(n.Span, "expected at least one block or gain name after %s", t.text)
			return p.badItem(start)
		}
		it.Span = p.spanFrom(start)
		return it
	case "sign":
		v := p.tok()
		if v.kind != tName {
			p.errorf(v.Span, "expected negative or positive after sign, found %s", v.describe())
			return p.badItem(start)
		}
		p.next()
		if !p.endOfItem("sign " + v.text) {
			return p.badItem(start)
		}
		return &SignItem{p.spanFrom(start), &Ident{v.Span, v.text}}
	}
	// require
	m := p.tok()
	if m.kind != tName {
		p.errorf(m.Span, "expected a metric name after require, found %s", m.describe())
		return p.badItem(start)
	}
	p.next()
	op := p.tok()
	if op.kind != tGeq && op.kind != tLeq {
		p.errorf(op.Span, "expected '>=' or '<=' after require %s, found %s", m.text, op.describe())
		return p.badItem(start)
	}
	p.next()
	n := p.number("after require "+m.text+" "+op.text, true)
	if n == nil || !p.endOfItem("require "+m.text+" value") {
		return p.badItem(start)
	}
	return &RequireItem{p.spanFrom(start), &Ident{m.Span, m.text}, op.text, op.Span, n}
}

// ---- expressions ----

// exprError reports the first error of an expression, skips the rest of
// the line and returns the hole.
func (p *parser) exprError(t token, format string, args ...any) Expr {
	if !p.bail {
		p.errorf(t.Span, format, args...)
		p.bail = true
	}
	p.skipLine()
	return &BadExpr{p.spanFrom(t.From)}
}

// expr parses sum := term { ('+'|'-') term }.
func (p *parser) expr() Expr {
	x := p.term()
	for k := p.tok().kind; k == tPlus || k == tMinus; k = p.tok().kind {
		op := p.tok()
		p.next()
		y := p.term()
		x = &Binary{Span: Span{x.Pos(), y.End()}, Op: op.text, OpPos: op.From, X: x, Y: y}
	}
	return x
}

// term parses unary { ('*'|'/') unary | power }, the second form being two
// factors side by side. The context word via ends an expression.
func (p *parser) term() Expr {
	x := p.unary()
	for {
		t := p.tok()
		switch {
		case t.kind == tStar || t.kind == tSlash:
			p.next()
			y := p.unary()
			x = &Binary{Span: Span{x.Pos(), y.End()}, Op: t.text, OpPos: t.From, X: x, Y: y}
		case t.startsPrimary() && !(t.kind == tName && t.text == "via"):
			y := p.power()
			x = &Binary{Span: Span{x.Pos(), y.End()}, Op: "*", OpPos: NoPos, Juxtaposed: true, X: x, Y: y}
		default:
			return x
		}
	}
}

func (p *parser) enter() bool {
	p.depth++
	return p.depth <= MaxExprDepth
}

func (p *parser) unary() Expr {
	t := p.tok()
	if t.kind != tMinus && t.kind != tPlus {
		return p.power()
	}
	defer func() { p.depth-- }()
	if !p.enter() {
		return p.exprError(t, "expression nested too deeply (limit %d levels)", MaxExprDepth)
	}
	p.next()
	x := p.unary()
	return &Unary{Span: Span{t.From, x.End()}, Op: t.text, X: x}
}

// power parses primary ['^' exponent] with an integer exponent, signed
// and optionally parenthesized: z^-1, s^2, z^(-1).
func (p *parser) power() Expr {
	x := p.primary()
	if p.tok().kind != tCaret {
		return x
	}
	p.next()
	start := p.tok().From
	paren := p.tok().kind == tLParen
	if paren {
		p.next()
	}
	neg := false
	if k := p.tok().kind; k == tMinus || k == tPlus {
		neg = k == tMinus
		p.next()
	}
	t := p.tok()
	if t.kind != tNumber {
		return p.exprError(t, "expected an integer exponent after '^', found %s", t.describe())
	}
	for i := 0; i < len(t.text); i++ {
		if !isDigit(t.text[i]) {
			return p.exprError(t, "exponent must be an integer, found %s", t.text)
		}
	}
	n, err := strconv.Atoi(t.text)
	if err != nil || n > MaxExponent {
		return p.exprError(t, "exponent %s is too large (limit %d)", t.text, MaxExponent)
	}
	p.next()
	if paren {
		if r := p.tok(); r.kind != tRParen {
			return p.exprError(r, "expected ')' after exponent, found %s", r.describe())
		}
		p.next()
	}
	if neg {
		n = -n
	}
	end := p.prevEnd()
	x = &Power{Span: Span{x.Pos(), end}, X: x, Exp: n, ExpSpan: Span{start, end}}
	if c := p.tok(); c.kind == tCaret {
		return p.exprError(c, "'^' does not chain: write (x^a)^b")
	}
	return x
}

func (p *parser) primary() Expr {
	t := p.tok()
	switch t.kind {
	case tNumber:
		p.next()
		v, ok := p.parseFloat(t)
		if !ok {
			p.bail = true
			p.skipLine()
			return &BadExpr{p.spanFrom(t.From)}
		}
		return &NumberLit{t.Span, v, t.text}
	case tName:
		p.next()
		if t.text == "s" || t.text == "z" {
			return &VarRef{t.Span, t.text}
		}
		return &NameRef{Ident{t.Span, t.text}}
	case tLParen:
		defer func() { p.depth-- }()
		if !p.enter() {
			return p.exprError(t, "expression nested too deeply (limit %d levels)", MaxExprDepth)
		}
		p.next()
		x := p.expr()
		r := p.tok()
		if r.kind != tRParen {
			ln, col := p.lines.LineCol(t.From)
			return p.exprError(r, "expected ')' to close '(' at %d:%d, found %s", ln, col, r.describe())
		}
		p.next()
		return &Paren{Span{t.From, r.To}, x}
	}
	if t.kind == tNewline || t.kind == tEOF {
		return p.exprError(t, "expression ends early: expected a number, name or '('")
	}
	return p.exprError(t, "expected a number, name or '(' in expression, found %s", t.describe())
}
