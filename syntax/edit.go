package syntax

import (
	"fmt"
	"regexp"
	"sort"
	"strconv"
	"strings"
)

// Every change the project proposes to a user's text (a rename, a fix, the
// formatter) goes through this file: the edits are applied, the result is
// parsed again, and its tree is compared with the one intended (Rename,
// SameTree for the formatter, CheckFix). A change that would read back as
// something else is refused with a message, never offered.

// Edit replaces the bytes of Span with New.
type Edit struct {
	Span
	New string
}

// ApplyEdits applies non-overlapping edits, given in any order, to src and
// returns the new text; overlapping or out-of-range edits are an error.
func ApplyEdits(src []byte, edits []Edit) ([]byte, error) {
	es := append([]Edit(nil), edits...)
	sort.SliceStable(es, func(i, j int) bool { return es[i].From < es[j].From })
	out := make([]byte, 0, len(src))
	at := Pos(0)
	for _, e := range es {
		if e.From < at || e.To < e.From || int(e.To) > len(src) {
			return nil, fmt.Errorf("edits overlap or leave the text (%d-%d)", e.From, e.To)
		}
		out = append(out, src[at:e.From]...)
		out = append(out, e.New...)
		at = e.To
	}
	return append(out, src[at:]...), nil
}

// reserved are the words a gain or block may not be called: the transform
// variables and every keyword of the format, which would read back as
// something else in some place a name can stand.
var reserved = map[string]bool{
	"s": true, "z": true,
	"sample": true, "use": true, "gain": true, "block": true, "loop": true,
	"forward": true, "feedback": true, "sign": true, "require": true,
	"via": true, "prewarp": true, "min": true, "max": true, "vary": true, "to": true,
	"realize": true,
}

var nameRE = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_]*$`)

// CheckName says why name cannot be given to a gain or block, or nil.
func CheckName(name string) error {
	switch {
	case !nameRE.MatchString(name):
		return fmt.Errorf("%q is not a name: use letters, digits and _, starting with a letter or _", name)
	case name == "s" || name == "z":
		return fmt.Errorf("%q is the transform variable and cannot be a name", name)
	case reserved[name]:
		return fmt.Errorf("%q is a keyword of the .loop format and cannot be a name", name)
	}
	return nil
}

// Rename returns the edits that write newName over each span of src (the
// occurrences of old), checked to parse back to the same tree with the
// name changed. Where a name would run into its neighbour ("2k" renamed
// to e3 reads as the number 2e3) a space keeps them apart; a rename that
// still changes the tree is refused with an error saying where.
func Rename(src []byte, spans []Span, old, newName string) ([]Edit, error) {
	if err := CheckName(newName); err != nil {
		return nil, err
	}
	plain := make([]Edit, len(spans))
	padded := make([]Edit, len(spans))
	for i, sp := range spans {
		plain[i] = Edit{sp, newName}
		padded[i] = Edit{sp, apart(src, sp, newName)}
	}
	rename := map[string]string{old: newName}
	var err error
	for _, edits := range [][]Edit{plain, padded} {
		if err = CheckEdits(src, edits, rename); err == nil {
			return edits, nil
		}
	}
	return nil, fmt.Errorf("renaming %s to %s would change the meaning of the file: %v", old, newName, err)
}

// apart puts a space between text and a neighbour it would otherwise join.
func apart(src []byte, sp Span, text string) string {
	joins := func(b byte) bool { return isLetter(b) || isDigit(b) || b == '.' }
	if sp.From > 0 && joins(src[sp.From-1]) {
		text = " " + text
	}
	if int(sp.To) < len(src) && joins(src[sp.To]) {
		text += " "
	}
	return text
}

// CheckEdits applies edits to src and requires the result to parse to the
// same tree as src with the names in rename changed (nil: no renaming),
// layout and comments aside, and with no more syntax errors. The error
// names the first statement that differs.
func CheckEdits(src []byte, edits []Edit, rename map[string]string) error {
	out, err := ApplyEdits(src, edits)
	if err != nil {
		return err
	}
	return SameTree(src, out, rename)
}

// SameTree compares the trees of a (with rename applied to its gain and
// block names) and b.
func SameTree(a, b []byte, rename map[string]string) error {
	fa, ea := Parse("", a)
	return sameTree(fa, len(ea), b, rename)
}

// sameTree compares fa (parsed, with na syntax errors) with b parsed,
// statement by statement, keeping one key of each at a time.
func sameTree(fa *File, na int, b []byte, rename map[string]string) error {
	fb, eb := Parse("", b)
	if len(eb) > na {
		line, col := fb.Lines.LineCol(eb[0].From)
		return fmt.Errorf("the result has a syntax error at %d:%d: %s", line, col, eb[0].Msg)
	}
	var ka, kb strings.Builder
	for i := range min(len(fa.Stmts), len(fb.Stmts)) {
		ka.Reset()
		kb.Reset()
		keyer{b: &ka, f: fa, rename: rename}.stmt(fa.Stmts[i])
		keyer{b: &kb, f: fb}.stmt(fb.Stmts[i])
		if ka.String() != kb.String() {
			line, _ := fb.Lines.LineCol(fb.Stmts[i].Pos())
			return fmt.Errorf("line %d would read differently", line)
		}
	}
	if len(fa.Stmts) != len(fb.Stmts) {
		return fmt.Errorf("the result has %d statements instead of %d", len(fb.Stmts), len(fa.Stmts))
	}
	if rename == nil && !sameComments(fa.Comments, fb.Comments) {
		return fmt.Errorf("a comment would be lost or changed")
	}
	return nil
}

func sameComments(a, b []*Comment) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if strings.TrimRight(a[i].Text, " \t") != strings.TrimRight(b[i].Text, " \t") {
			return false
		}
	}
	return true
}

// CheckFix checks a fix's edits against f, the parsed text they apply to:
// the statements they touch, with the edits applied, must parse with no
// new syntax error, and the text around them is left as it was, so a fix
// changes what it says and nothing else. Statements start afresh on their
// own line, so only the lines of the touched statements are parsed again,
// which keeps a check of many fixes linear in the file.
func CheckFix(f *File, edits []Edit) error {
	r, err := FixRegionOf(f, edits)
	if err != nil || len(r.Edits) == 0 {
		return err
	}
	line, msg, err := r.check()
	if err != nil {
		return err
	}
	if msg != "" {
		l0, _ := f.Lines.LineCol(r.From)
		return fmt.Errorf("the fixed text would have a syntax error at %d:%s", l0+line-1, msg)
	}
	return nil
}

// FixRegion is what CheckFix reads of a file for a fix: the lines of the
// statements the edits touch (Text, starting at From) and the edits
// relative to them. Whether the fix reads back depends on nothing else, so
// a caller may keep the answer under Key.
type FixRegion struct {
	From  Pos
	Text  []byte
	Edits []Edit // none: nothing to check
}

// FixRegionOf finds the region of edits in f; an error when they lie
// outside the text or touch the byte order mark.
func FixRegionOf(f *File, edits []Edit) (FixRegion, error) {
	if len(edits) == 0 {
		return FixRegion{}, nil
	}
	lo, hi := edits[0].From, edits[0].To
	for _, e := range edits {
		lo, hi = min(lo, e.From), max(hi, e.To)
	}
	if lo < 0 || int(hi) > len(f.Src) {
		return FixRegion{}, fmt.Errorf("the fix edits outside the text (%d-%d)", lo, hi)
	}
	if int(lo) < BOMLen(f.Src) {
		return FixRegion{}, fmt.Errorf("the fix edits the byte order mark")
	}
	i := sort.Search(len(f.Stmts), func(i int) bool { return f.Stmts[i].End() >= lo })
	for ; i < len(f.Stmts) && f.Stmts[i].Pos() <= hi; i++ {
		lo, hi = min(lo, f.Stmts[i].Pos()), max(hi, f.Stmts[i].End())
	}
	lo, hi = f.Lines.LineStart(f.Lines.line(lo)), f.Lines.LineEnd(f.Lines.line(hi))
	shifted := make([]Edit, len(edits))
	for k, e := range edits {
		shifted[k] = Edit{Span{e.From - lo, e.To - lo}, e.New}
	}
	return FixRegion{From: lo, Text: f.Src[lo:hi], Edits: shifted}, nil
}

// Key is the region's text and edits as one string.
func (r FixRegion) Key() string {
	var b strings.Builder
	b.Grow(len(r.Text) + 32*len(r.Edits))
	fmt.Fprintf(&b, "%d:%s", len(r.Text), r.Text)
	for _, e := range r.Edits {
		fmt.Fprintf(&b, "|%d,%d,%d:%s", e.From, e.To, len(e.New), e.New)
	}
	return b.String()
}

// ReadsBack reports whether the region with its edits applied parses with
// no new syntax error (CheckFix's test, without the message).
func (r FixRegion) ReadsBack() bool {
	if len(r.Edits) == 0 {
		return true
	}
	_, msg, err := r.check()
	return err == nil && msg == ""
}

// check applies the edits and parses before and after; msg (with the
// region-relative line of its first error) is "" when the fix reads back;
// err is that of edits that cannot be applied.
func (r FixRegion) check() (line int, msg string, err error) {
	after, err := ApplyEdits(r.Text, r.Edits)
	if err != nil {
		return 0, "", err
	}
	_, ea := Parse("", r.Text)
	fb, eb := Parse("", after)
	if len(eb) > len(ea) {
		bl, bc := fb.Lines.LineCol(eb[0].From)
		return bl, fmt.Sprintf("%d: %s", bc, eb[0].Msg), nil
	}
	return 0, "", nil
}

// StmtKeys gives one string per statement that captures its meaning as
// parsed (kinds, names, numbers as written, units, operators, nesting) and
// nothing of its layout or comments; names of gains and blocks are changed
// by rename first. Two statements with equal keys read the same. A
// statement the parser could not read is keyed by its text.
func StmtKeys(f *File, rename map[string]string) []string {
	out := make([]string, len(f.Stmts))
	var b strings.Builder
	for i, st := range f.Stmts {
		b.Reset()
		k := keyer{b: &b, f: f, rename: rename}
		k.stmt(st)
		out[i] = b.String()
	}
	return out
}

type keyer struct {
	b      *strings.Builder
	f      *File
	rename map[string]string
}

func (k keyer) w(parts ...string) {
	for _, p := range parts {
		k.b.WriteString(p)
		k.b.WriteByte(' ')
	}
}

func (k keyer) name(id *Ident) {
	if id == nil {
		k.w("<nil>")
		return
	}
	if n, ok := k.rename[id.Name]; ok {
		k.w(n)
		return
	}
	k.w(id.Name)
}

func (k keyer) ident(id *Ident) {
	if id == nil {
		k.w("<nil>")
		return
	}
	k.w(id.Name)
}

func (k keyer) num(n *Number) {
	if n == nil {
		k.w("<nil>")
		return
	}
	k.w("num", strconv.FormatBool(n.Neg), n.Text, n.UnitCanon())
}

func (k keyer) bad(sp Span) { k.w("bad", strconv.Quote(string(k.f.Src[sp.From:sp.To]))) }

func (k keyer) stmt(st Stmt) {
	switch st := st.(type) {
	case *SampleStmt:
		k.w("sample")
		k.num(st.Value)
	case *UseStmt:
		k.w("use", strconv.Quote(st.Path))
	case *GainStmt:
		k.w("gain")
		k.name(st.Name)
		k.num(st.Value)
		k.w("min")
		k.num(st.Min)
		k.w("max")
		k.num(st.Max)
		if st.Vary != nil {
			k.w("vary")
			k.num(st.Vary.Lo)
			k.num(st.Vary.Hi)
		}
	case *RealizeStmt:
		k.w("realize")
		k.name(st.Block)
		k.ident(st.Structure)
		k.ident(st.Format)
	case *BlockStmt:
		k.w("block")
		k.name(st.Name)
		k.expr(st.Expr)
		if st.Via != nil {
			k.w("via")
			k.ident(st.Via.Method)
			k.num(st.Via.Prewarp)
		}
	case *LoopStmt:
		k.w("loop")
		k.ident(st.Name)
		k.w(strconv.FormatBool(st.RBrace != NoPos))
		for _, it := range st.Items {
			k.item(it)
		}
	case *BadStmt:
		k.bad(st.Span)
	default: // a statement kind this key does not know yet: its text, so any change shows
		k.bad(spanOf(st))
	}
}

func spanOf(n Node) Span { return Span{n.Pos(), n.End()} }

func (k keyer) item(it LoopItem) {
	switch it := it.(type) {
	case *PathItem:
		k.w("path", it.Keyword.Name)
		for _, id := range it.Names {
			k.name(id)
		}
	case *SignItem:
		k.w("sign")
		k.ident(it.Value)
	case *RequireItem:
		k.w("require")
		k.ident(it.Metric)
		k.w(it.Op)
		k.num(it.Value)
	case *BadItem:
		k.bad(it.Span)
	default:
		k.bad(spanOf(it))
	}
	k.w(";")
}

func (k keyer) expr(e Expr) {
	switch e := e.(type) {
	case nil:
		k.w("<nil>")
	case *NumberLit:
		k.w(e.Text)
	case *VarRef:
		k.w("var", e.Name)
	case *NameRef:
		k.name(&e.Ident)
	case *Binary:
		// Side by side and '*' multiply alike.
		op := e.Op
		if e.Juxtaposed {
			op = "*"
		}
		k.w("(", op)
		k.expr(e.X)
		k.expr(e.Y)
		k.w(")")
	case *Unary:
		k.w("(", "u"+e.Op)
		k.expr(e.X)
		k.w(")")
	case *Power:
		k.w("(", "^", strconv.Itoa(e.Exp))
		k.expr(e.X)
		k.w(")")
	case *Paren:
		k.expr(e.X) // the tree already holds the grouping
	case *BadExpr:
		k.bad(e.Span)
	default:
		k.bad(spanOf(e))
	}
}
