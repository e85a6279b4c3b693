package syntax

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

var errorMarker = regexp.MustCompile(`ERROR "((?:[^"\\]|\\.)*)"`)

// TestErrorFiles checks testdata/errors/*.loop: every error must sit on a
// line whose comment holds a matching ERROR "regexp" (several ERRORs on one
// line match that line's errors in order), and every ERROR must be met.
func TestErrorFiles(t *testing.T) {
	files, _ := filepath.Glob("testdata/errors/*.loop")
	if len(files) == 0 {
		t.Fatal("no error test files")
	}
	for _, name := range files {
		t.Run(filepath.Base(name), func(t *testing.T) {
			src, err := os.ReadFile(name)
			if err != nil {
				t.Fatal(err)
			}
			f, errs := Parse(name, src)
			want := map[int][]*regexp.Regexp{}
			for _, c := range f.Comments {
				ln, _ := f.Lines.LineCol(c.From)
				for _, m := range errorMarker.FindAllStringSubmatch(c.Text, -1) {
					pat := strings.ReplaceAll(m[1], `\"`, `"`)
					want[ln] = append(want[ln], regexp.MustCompile(pat))
				}
			}
			got := map[int][]*Error{}
			for _, e := range errs {
				ln, _ := f.Lines.LineCol(e.From)
				got[ln] = append(got[ln], e)
				if e.From > e.To || e.To > Pos(len(src)) {
					t.Errorf("line %d: bad span %v for %q", ln, e.Span, e.Msg)
				}
			}
			for ln, es := range got {
				pats := want[ln]
				for i, e := range es {
					if i >= len(pats) {
						t.Errorf("line %d: unexpected error %q", ln, e.Msg)
					} else if !pats[i].MatchString(e.Msg) {
						t.Errorf("line %d: error %q does not match %q", ln, e.Msg, pats[i])
					}
				}
			}
			for ln, pats := range want {
				if len(got[ln]) < len(pats) {
					for _, p := range pats[len(got[ln]):] {
						t.Errorf("line %d: missing error %q", ln, p)
					}
				}
			}
		})
	}
}

// TestErrorSpans checks that errors point at exactly the offending text.
func TestErrorSpans(t *testing.T) {
	for _, c := range []struct {
		src, text, msg string
	}{
		{"gain kp 0.8\n", "0.8", "expected '='"},
		{"gain kp = 1 $\n", "$", "unexpected character"},
		{"block b = z^65\n", "65", "too large"},
		{"gain a = 1\xff\n", "\xff", "invalid UTF-8 byte 0xff"},
		{"# bad \xfe byte\n", "\xfe", "invalid UTF-8 byte 0xfe"},
		{"use \"a.loop\r\n", "\"a.loop", "unterminated string"},
		{"use \"a.loop", "\"a.loop", "unterminated string"},
		{"gain b = 2 😀\n", "😀", "unexpected character '😀' (U+1F600)"},
		{"block e = z +\r\n", "", "expression ends early"},
		{"gain q = 1 µ\n", "µ", "unexpected character 'µ'"},
		{"sample 1 ms\x00\n", "\x00", "unexpected character 0x00"},
	} {
		_, errs := Parse("t", []byte(c.src))
		if len(errs) != 1 {
			t.Errorf("%q: got %d errors %v, want 1", c.src, len(errs), errs)
			continue
		}
		e := errs[0]
		if got := c.src[e.From:e.To]; got != c.text || !strings.Contains(e.Msg, c.msg) {
			t.Errorf("%q: error %q at %q, want %q at %q", c.src, e.Msg, got, c.msg, c.text)
		}
	}
	// The zero-width error at a line end sits before "\r\n".
	_, errs := Parse("t", []byte("block e = z +\r\n"))
	if len(errs) == 1 && errs[0].From != 13 {
		t.Errorf("line-end error at %d, want 13", errs[0].From)
	}
}

func TestErrorListText(t *testing.T) {
	f, errs := Parse("a.loop", []byte("gain kp 1\nblock = 2\n"))
	if len(errs) != 2 {
		t.Fatalf("got %v", errs)
	}
	want := "a.loop:1:9: expected '=' after gain name kp, found number 1\na.loop:2:7: expected a block name after block, found '='\n"
	if got := errs.Format("a.loop", f.Lines); got != want {
		t.Errorf("got %q\nwant %q", got, want)
	}
	if got := errs.Error(); got != "expected '=' after gain name kp, found number 1 (and 1 more errors)" {
		t.Errorf("Error() = %q", got)
	}
	if ErrorList(nil).Err() != nil {
		t.Error("empty list Err() != nil")
	}
}
