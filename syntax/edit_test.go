package syntax

import (
	"fmt"
	"math/rand"
	"strings"
	"testing"
)

// Renaming k to e3 in `2k` must not give the number 2e3: the rename keeps
// the tree (here by a space) or is refused.
func TestRenameKeepsTheTree(t *testing.T) {
	src := []byte("gain k = 0.5\nblock c2 = 2k\nblock c3 = .5k + k\nloop l {\n  forward c2 k\n}\n")
	f, _ := Parse("", src)
	spans := nameSpans(f)["k"]
	edits, err := Rename(src, spans, "k", "e3")
	if err != nil {
		t.Fatal(err)
	}
	out, _ := ApplyEdits(src, edits)
	if strings.Contains(string(out), "2e3") || strings.Contains(string(out), ".5e3") {
		t.Fatalf("rename re-lexed a number:\n%s", out)
	}
	if err := SameTree(src, out, map[string]string{"k": "e3"}); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	for _, bad := range []string{"s", "z", "via", "max", "loop", "2x", "a-b", "", "é"} {
		if _, err := Rename(src, spans, "k", bad); err == nil {
			t.Errorf("rename to %q accepted", bad)
		}
	}
}

func TestSameTreeSeesChanges(t *testing.T) {
	a := []byte("block b = 2 k\n")
	for _, b := range []string{"block b = 2e3\n", "block b = 2 + k\n", "block b = 2 k via zoh\n", "block b = 2 k\nblock c = 1\n"} {
		if SameTree(a, []byte(b), map[string]string{"k": "e3"}) == nil {
			t.Errorf("%q read as the same tree as %q", b, a)
		}
	}
	for _, c := range [][2]string{
		{"gain k = 1 vary 0.5 to 2\n", "gain k = 1 vary 0.5 to 3\n"},
		{"realize n as sections in q1.14\n", "realize n as direct in q1.14\n"},
		{"realize n as sections in q1.14\n", "realize m as sections in q1.14\n"},
	} {
		if SameTree([]byte(c[0]), []byte(c[1]), nil) == nil {
			t.Errorf("%q read as the same tree as %q", c[1], c[0])
		}
	}
	if err := SameTree([]byte("realize n as sections in q1.14\n"), []byte("realize  m  as sections in q1.14\n"), map[string]string{"n": "m"}); err != nil {
		t.Errorf("renamed realize line: %v", err)
	}
	if err := SameTree(a, []byte("block   b = 2*e3 # note\n"), map[string]string{"k": "e3"}); err != nil {
		t.Errorf("layout and '*' versus side by side: %v", err)
	}
}

// A fix that leaves a syntax error, or edits the byte order mark, is refused.
func TestCheckFix(t *testing.T) {
	src := []byte("\ufeffgain k = 1\nblock p = k/(z - 0.5)\n")
	f, _ := Parse("", src)
	ok := []Edit{{Span{3, 3}, "sample 1 ms\n"}}
	if err := CheckFix(f, ok); err != nil {
		t.Errorf("sample line after the mark refused: %v", err)
	}
	for _, bad := range [][]Edit{
		{{Span{0, 0}, "sample 1 ms\n"}},                    // before the mark
		{{Span{12, 12}, "gain = \n"}},                      // a broken statement
		{{Span{Pos(len(src) - 2), Pos(len(src) - 1)}, ""}}, // drops ')'
	} {
		if err := CheckFix(f, bad); err == nil {
			t.Errorf("fix %+v accepted", bad)
		}
	}
}

// "\n", "\r\n" and a lone "\r" are all line ends (LSP 3.17); a leading byte
// order mark has no column on the command line.
func TestLinesLineEnds(t *testing.T) {
	for _, src := range []string{"ab\ncd\nef", "ab\r\ncd\r\nef", "ab\rcd\ref", "ab\ncd\ref", "\ufeffab\rcd\r\nef"} {
		l := NewLines([]byte(src))
		if l.Count() != 3 {
			t.Errorf("%q: %d lines, want 3", src, l.Count())
			continue
		}
		e := Pos(strings.Index(src, "e"))
		if line, col := l.LineCol(e); line != 3 || col != 1 {
			t.Errorf("%q: e at %d:%d, want 3:1", src, line, col)
		}
		if line, col := l.LineCol(Pos(strings.Index(src, "a"))); line != 1 || col != 1 {
			t.Errorf("%q: a at %d:%d, want 1:1 (the mark has no column)", src, line, col)
		}
		// The editor counts a mark it sent as a character of its text.
		want := 1 + strings.Count(src, "\ufeff")
		if ln, col := l.UTF16(Pos(strings.Index(src, "b"))); ln != 0 || col != want {
			t.Errorf("%q: b at %d:%d (UTF-16), want 0:%d", src, ln, col, want)
		}
		if end := l.LineEnd(0); src[end-1] != 'b' {
			t.Errorf("%q: line 0 ends at %d", src, end)
		}
	}
	f, errs := Parse("", []byte("gain a = 1\rblock b = a z^-1\r# note\rloop l {\r  forward b\r}\r"))
	if len(errs) > 0 || len(f.Stmts) != 3 {
		t.Fatalf("CR-only file: %d statements, errors %v", len(f.Stmts), errs)
	}
}

func TestSyntaxErrorCap(t *testing.T) {
	_, errs := Parse("", []byte(strings.Repeat("@", 100000)))
	if len(errs) != MaxErrors+1 || !strings.Contains(errs[MaxErrors].Msg, "99899 more") {
		t.Fatalf("%d errors, last %q", len(errs), errs[len(errs)-1].Msg)
	}
}

func TestFormatKeepsMarkAndLineBreaks(t *testing.T) {
	out, err := Format([]byte("\ufeffgain  a = 1\rblock b = a z^-1\r"))
	if err != nil || !strings.HasPrefix(string(out), "\ufeffgain a = 1\n") {
		t.Fatalf("%q, %v", out, err)
	}
	for src, want := range map[string]string{"a\r\nb": "\r\n", "a\rb\n": "\r", "a\nb\r": "\n", "ab": "\n"} {
		if got := LineBreak([]byte(src)); got != want {
			t.Errorf("LineBreak(%q) = %q, want %q", src, got, want)
		}
	}
}

// Lines.Edit gives the same index as indexing the edited text afresh,
// across CR, LF, CRLF joined or split at the edit's edges, and a BOM.
func TestLinesEdited(t *testing.T) {
	rng := rand.New(rand.NewSource(7))
	alphabet := []string{"a", "\r", "\n", "\r\n", "\ufeff", "é"}
	gen := func(n int) string {
		var b strings.Builder
		for range n {
			b.WriteString(alphabet[rng.Intn(len(alphabet))])
		}
		return b.String()
	}
	for range 3000 {
		src := []byte(gen(rng.Intn(12)))
		l := NewLines(src)
		for range 5 {
			a := rng.Intn(len(src) + 1)
			b := a + rng.Intn(len(src)-a+1)
			ins := gen(rng.Intn(4))
			next := append(append(append([]byte(nil), src[:a]...), ins...), src[b:]...)
			l.Edit(next, Pos(a), Pos(b), len(ins))
			want := NewLines(next)
			if fmt.Sprint(l.starts, l.bom) != fmt.Sprint(want.starts, want.bom) {
				t.Fatalf("%q: [%d,%d) <- %q: starts %v bom %d, want %v bom %d", src, a, b, ins, l.starts, l.bom, want.starts, want.bom)
			}
			src = next
		}
	}
}

// FixRegion answers as CheckFix does, and a region moved down the file
// (the same statements further on) has the same key and answer.
func TestFixRegionAsCheckFix(t *testing.T) {
	rng := rand.New(rand.NewSource(4))
	for name, text := range chunkSources(t) {
		src := []byte(text)
		f, _ := Parse(name, src)
		moved := append([]byte("# moved\n\n"), src...)
		fm, _ := Parse(name, moved)
		for i := 0; i < 40 && len(src) > 0; i++ {
			from := Pos(rng.Intn(len(src)))
			to := min(from+Pos(rng.Intn(6)), Pos(len(src)))
			edits := []Edit{{Span{from, to}, []string{"", "1", ")", "kp", "\n", "(z"}[rng.Intn(6)]}}
			r, err := FixRegionOf(f, edits)
			want := CheckFix(f, edits) == nil
			if got := err == nil && r.ReadsBack(); got != want {
				t.Fatalf("%s %v: region says %v, CheckFix %v", name, edits, got, want)
			}
			if err != nil {
				continue
			}
			shift := Pos(len("# moved\n\n"))
			rm, err := FixRegionOf(fm, []Edit{{Span{from + shift, to + shift}, edits[0].New}})
			if err != nil || rm.Key() != r.Key() || rm.From != r.From+shift {
				t.Fatalf("%s %v: the moved region differs (%v)", name, edits, err)
			}
		}
	}
}
