package syntax

import (
	"strings"
	"testing"
	"unicode/utf8"
)

// errAt parses src and returns the position of its only error.
func errAt(t *testing.T, src string) (f *File, e *Error) {
	t.Helper()
	f, errs := Parse("t", []byte(src))
	if len(errs) != 1 {
		t.Fatalf("%q: want 1 error, got %v", src, errs)
	}
	return f, errs[0]
}

func TestColumnsAfterNonASCII(t *testing.T) {
	for _, c := range []struct {
		src                  string
		line, col, u16, u16l int
	}{
		// Comment with µs, ° and an emoji on the line before.
		{"# 5 µs, 30°, 😀\ngain kp 1\n", 2, 9, 8, 1},
		// Non-ASCII text on the same line before the token.
		{"use \"µs°😀.loop\" x\n", 1, 17, 17, 0},
		{"sample 5 µs 7\n", 1, 13, 12, 0},
		{"sample 5 μs 7 # °\n", 1, 13, 12, 0},
		// Both, with CRLF line ends.
		{"# µs ° 😀\r\nuse \"😀😀\" x\r\n", 2, 10, 11, 1},
	} {
		f, e := errAt(t, c.src)
		ln, col := f.Lines.LineCol(e.From)
		l16, c16 := f.Lines.UTF16(e.From)
		if ln != c.line || col != c.col || l16 != c.u16l || c16 != c.u16 {
			t.Errorf("%q: LineCol %d:%d UTF16 %d:%d, want %d:%d and %d:%d", c.src, ln, col, l16, c16, c.line, c.col, c.u16l, c.u16)
		}
		back, err := f.Lines.OffsetUTF16(l16, c16)
		if err != nil || back != e.From {
			t.Errorf("%q: OffsetUTF16(%d, %d) = %d, %v; want %d", c.src, l16, c16, back, err, e.From)
		}
	}
}

func TestCRLF(t *testing.T) {
	src := "gain a = 1\r\ngain b 2\r\nloop l {\r\n  forward a\r\n}\r\n"
	f, e := errAt(t, src)
	if ln, col := f.Lines.LineCol(e.From); ln != 2 || col != 8 {
		t.Errorf("CRLF error at %d:%d, want 2:8", ln, col)
	}
	if end := f.Lines.LineEnd(0); end != 10 {
		t.Errorf("LineEnd(0) = %d, want 10 (before \\r\\n)", end)
	}
	f = mustParse(t, strings.Replace(src, "b 2", "b = 2", 1)+"# c\r\n")
	if c := f.Comments[0]; c.Text != "# c" {
		t.Errorf("comment text %q keeps the \\r", c.Text)
	}
	if l := f.Stmts[2].(*LoopStmt); l.RBrace == NoPos || len(l.Items) != 1 {
		t.Errorf("loop over CRLF lines: %s", dumpStmt(l))
	}
}

func TestOffsetUTF16RoundTrip(t *testing.T) {
	src := []byte("gain µ = 1 # °😀x\r\n\nblock b = z\n😀")
	l := NewLines(src)
	for off := 0; off <= len(src); off++ {
		if off < len(src) && !utf8.RuneStart(src[off]) {
			continue
		}
		ln, col := l.UTF16(Pos(off))
		got, err := l.OffsetUTF16(ln, col)
		want := Pos(off)
		if off > 0 && src[off-1] == '\r' { // inside "\r\n": maps to the line end
			want = Pos(off - 1)
		}
		if err != nil || got != want {
			t.Errorf("offset %d -> %d:%d -> %d, %v", off, ln, col, got, err)
		}
	}
	for _, c := range []struct {
		line, col int
		msg       string
	}{
		{4, 0, "invalid line 4 (want 0-3)"},
		{-1, 0, "invalid line -1 (want 0-3)"},
		{0, 15, "column 15 on line 0 falls inside a character"},
		{0, 40, "invalid column 40 on line 0 (want 0-17)"},
		{0, -2, "invalid column -2 on line 0"},
		{3, 1, "column 1 on line 3 falls inside a character"},
	} {
		_, err := l.OffsetUTF16(c.line, c.col)
		if err == nil || err.Error() != c.msg {
			t.Errorf("OffsetUTF16(%d, %d) error %v, want %q", c.line, c.col, err, c.msg)
		}
	}
}
