package syntax

import (
	"os"
	"strings"
	"testing"
)

func mustParse(t *testing.T, src string) *File {
	t.Helper()
	f, errs := Parse("test.loop", []byte(src))
	if len(errs) > 0 {
		t.Fatalf("Parse(%q): %s", src, errs.Format("test.loop", f.Lines))
	}
	return f
}

func blockExpr(t *testing.T, expr string) string {
	t.Helper()
	f := mustParse(t, "block b = "+expr+"\n")
	return dumpExpr(f.Stmts[0].(*BlockStmt).Expr)
}

func TestExpressionTrees(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"9s", "(j* 9 $s)"},
		{"0.5z", "(j* 0.5 $z)"},
		{"2(z - 1)", "(j* 2 (- $z 1))"},
		{"s(s + 1)", "(j* $s (+ $s 1))"},
		{"(z - 1)(z - 0.5)", "(j* (- $z 1) (- $z 0.5))"},
		{"0.8z^-1", "(j* 0.8 (^ $z -1))"},
		{"kp z", "(j* kp $z)"},
		{"z^(-1)", "(^ $z -1)"},
		{"s^2 + 9s + 40", "(+ (+ (^ $s 2) (j* 9 $s)) 40)"},
		{"-z^2", "(-u (^ $z 2))"},
		{"-2z", "(j* (-u 2) $z)"},
		{"a / b c", "(j* (/ a b) c)"},
		{"a + b * c", "(+ a (* b c))"},
		{"a - b - c", "(- (- a b) c)"},
		{"2e", "(j* 2 e)"}, // exponent needs digits
		{"2e+", "BAD"},     // "2", "e", "+", then nothing: checked below for the error
		{"1.5e-3s", "(j* 1.5e-3 $s)"},
		{"2E+4", "2E+4"},
		{".5z", "(j* .5 $z)"},
		{"kp + ki * 0.001 * z / (z - 1)", "(+ kp (/ (* (* ki 0.001) $z) (- $z 1)))"},
		{"40 / (s^2 + 9s + 40)", "(/ 40 (+ (+ (^ $s 2) (j* 9 $s)) 40))"},
		{"(z -\n 1)", "(- $z 1)"},
	} {
		if c.want == "BAD" {
			continue
		}
		if got := blockExpr(t, c.in); got != c.want {
			t.Errorf("%q: got %s, want %s", c.in, got, c.want)
		}
	}
}

func TestNumberLexing(t *testing.T) {
	lx := lex([]byte("40 0.97 .5 1.5e-3 2E+4 2e x 3e+ 7µs 7μs 1.e5"))
	toks, errs := lx.toks, lx.errs
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	var got []string
	for _, tk := range toks {
		if tk.kind != tNewline && tk.kind != tEOF {
			got = append(got, tk.text)
		}
	}
	want := "40|0.97|.5|1.5e-3|2E+4|2|e|x|3|e|+|7|µs|7|μs|1.e5"
	if strings.Join(got, "|") != want {
		t.Errorf("got %s\nwant %s", strings.Join(got, "|"), want)
	}
}

func TestContract(t *testing.T) {
	src, err := os.ReadFile("testdata/contract.loop")
	if err != nil {
		t.Fatal(err)
	}
	f, errs := Parse("contract.loop", src)
	if len(errs) > 0 {
		t.Fatal(errs.Format("contract.loop", f.Lines))
	}
	want := `sample 1[1]ms
sample 10[10]kHz
use "plants/belt.loop"
gain kp 0.8[0.8] min=<nil> max=<nil>
gain ki 40[40] min=<nil> max=120[120]
block enc (^ $z -1)
block speed (+ kp (/ (* (* ki 0.001) $z) (- $z 1)))
block belt (/ 40 (+ (+ (^ $s 2) (j* 9 $s)) 40)) via zoh
block vel (/ 2.5 (+ $s 2.5)) via tustin prewarp 3[3]Hz
loop belt_speed {forward speed belt; feedback enc; sign negative; require gain_margin >= 6[6]dB; require phase_margin >= 45[45]deg; require radius <= 0.98[0.98]; require damping >= 0.3[0.3]; require overshoot <= 10[10]%; require settling <= 40[40]ms} closed=true
`
	got := dump(f)
	got = got[:strings.Index(got, "comment ")]
	if got != want {
		t.Errorf("contract tree:\n%s\nwant:\n%s", got, want)
	}
	if n := len(f.Comments); n != 16 {
		t.Errorf("got %d comments, want 16", n)
	}
	// Spans of a few nodes, checked against the source text.
	for _, s := range f.Stmts {
		text := string(src[s.Pos():s.End()])
		if _, isLoop := s.(*LoopStmt); isLoop {
			continue
		}
		if strings.HasSuffix(text, " ") || strings.Contains(text, "#") {
			t.Errorf("statement span %q includes blanks or comments", text)
		}
	}
	belt := f.Stmts[7].(*BlockStmt)
	if got := string(src[belt.Expr.Pos():belt.Expr.End()]); got != "40 / (s^2 + 9s + 40)" {
		t.Errorf("belt expr span %q", got)
	}
	vel := f.Stmts[8].(*BlockStmt)
	if got := string(src[vel.Via.Pos():vel.Via.End()]); got != "via tustin prewarp 3 Hz" {
		t.Errorf("via span %q", got)
	}
	loop := f.Stmts[9].(*LoopStmt)
	req := loop.Items[3].(*RequireItem)
	if got := string(src[req.Value.UnitSpan.From:req.Value.UnitSpan.To]); got != "dB" || req.Op != ">=" {
		t.Errorf("unit span %q, op %q", got, req.Op)
	}
	if src[loop.LBrace] != '{' || src[loop.RBrace] != '}' {
		t.Errorf("brace positions %d %d", loop.LBrace, loop.RBrace)
	}
}

func TestStatementShapes(t *testing.T) {
	f := mustParse(t, `gain a = -1 max 3 min -2
sample 1
sample 4 rad/s
block q = 1/z via tustin prewarp 10 rad/s
loop l { forward a
  require delay_margin >= 2 samples }
loop m {
}
`)
	got := dump(f)
	want := `gain a -1[-1] min=-2[-2] max=3[3]
sample 1[1]
sample 4[4]rad/s
block q (/ 1 $z) via tustin prewarp 10[10]rad/s
loop l {forward a; require delay_margin >= 2[2]samples} closed=true
loop m {} closed=true
`
	if got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
	g := f.Stmts[0].(*GainStmt)
	if string(f.Src[g.MinKw.From:g.MinKw.To]) != "min" || string(f.Src[g.MaxKw.From:g.MaxKw.To]) != "max" {
		t.Errorf("keyword spans wrong: %v %v", g.MinKw, g.MaxKw)
	}
	if g.Value.Pos() != 9 || g.Value.End() != 11 {
		t.Errorf("signed value span %v, want {9 11}", g.Value.Span)
	}
	if u := f.Stmts[2].(*SampleStmt).Value; u.Unit != "rad/s" || string(f.Src[u.UnitSpan.From:u.UnitSpan.To]) != "rad/s" {
		t.Errorf("rad/s unit: %q %v", u.Unit, u.UnitSpan)
	}
}

func TestNeverNil(t *testing.T) {
	for _, src := range []string{"", "\n", "(((", "loop {", "}", "block b = ", "gain", "\xff", "#", "block a = (z\nblock b = 1"} {
		f, _ := Parse("x", []byte(src))
		if f == nil || f.Lines == nil {
			t.Fatalf("Parse(%q) returned nil", src)
		}
		Walk(f, func(n Node) bool {
			if n.Pos() > n.End() || n.Pos() < 0 || int(n.End()) > len(src) {
				t.Errorf("Parse(%q): node %T has span %d-%d", src, n, n.Pos(), n.End())
			}
			return true
		})
	}
}

func TestDeepNesting(t *testing.T) {
	for _, src := range []string{
		"block b = " + strings.Repeat("(", 100000) + "z",
		"block b = " + strings.Repeat("-", 100000) + "z",
		"block b = " + strings.Repeat("(-", 50000) + "z",
	} {
		_, errs := Parse("deep", []byte(src))
		if len(errs) != 1 || !strings.Contains(errs[0].Msg, "nested too deeply") {
			t.Errorf("deep input: got %v", errs)
		}
	}
	// At the limit itself it is fine.
	src := "block b = " + strings.Repeat("(", MaxExprDepth) + "z" + strings.Repeat(")", MaxExprDepth)
	mustParse(t, src)
}

func TestWalkAndNodeAt(t *testing.T) {
	src := "gain kp = 2\nblock b = kp z^-1 via zoh\nloop l {\n  forward b\n}\n"
	f := mustParse(t, src)
	var kinds []string
	Walk(f, func(n Node) bool {
		kinds = append(kinds, strings.TrimPrefix(strings.TrimPrefix(typeName(n), "*syntax."), "syntax."))
		return true
	})
	want := "File GainStmt Ident Number BlockStmt Ident Binary NameRef Power VarRef Via Ident LoopStmt Ident PathItem Ident Ident"
	if got := strings.Join(kinds, " "); got != want {
		t.Errorf("walk order:\n%s\nwant\n%s", got, want)
	}
	at := func(sub string, off int) string {
		p := Pos(strings.Index(src, sub) + off)
		var names []string
		for _, n := range f.NodeAt(p) {
			names = append(names, strings.TrimPrefix(typeName(n), "*syntax."))
		}
		return strings.Join(names, " ")
	}
	for _, c := range []struct {
		sub  string
		off  int
		want string
	}{
		{"z^-1", 0, "BlockStmt Binary Power VarRef"},
		{"z^-1", 3, "BlockStmt Binary Power"},
		{"kp z", 1, "BlockStmt Binary NameRef"},
		{"kp z", 2, "BlockStmt Binary NameRef"}, // just after kp
		{"zoh", 1, "BlockStmt Via Ident"},
		{"b\n}", 0, "LoopStmt PathItem Ident"},
		{"forward", 2, "LoopStmt PathItem Ident"},
		{"= 2", 2, "GainStmt Number"},
	} {
		if got := at(c.sub, c.off); got != c.want {
			t.Errorf("NodeAt(%q+%d) = %s, want %s", c.sub, c.off, got, c.want)
		}
	}
	if got := f.NodeAt(Pos(len(src))); got != nil {
		t.Errorf("NodeAt(EOF) = %v, want nil", got)
	}
}

func typeName(n Node) string {
	return strings.TrimPrefix(strings.Replace(fmtType(n), "syntax.", "", 1), "*")
}
