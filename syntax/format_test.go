package syntax

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite testdata/format/*.golden")

// checkFormatted checks the formatter's promises for one input: out
// re-parses without errors, means the same, and formats to itself.
func checkFormatted(t *testing.T, in, out []byte) {
	t.Helper()
	f1, _ := Parse("in", in)
	f2, errs := Parse("out", out)
	if len(errs) > 0 {
		t.Fatalf("formatted output does not parse: %s\n%s", errs.Format("out", f2.Lines), out)
	}
	if d1, d2 := dump(f1), dump(f2); d1 != d2 {
		t.Fatalf("meaning changed:\n%s\nbecame\n%s\noutput:\n%s", d1, d2, out)
	}
	again, err := Format(out)
	if err != nil || !bytes.Equal(again, out) {
		t.Fatalf("not idempotent (%v):\n%s\nthen\n%s", err, out, again)
	}
}

func TestFormatGolden(t *testing.T) {
	inputs, _ := filepath.Glob("testdata/format/*.input")
	if len(inputs) == 0 {
		t.Fatal("no formatter inputs")
	}
	for _, in := range inputs {
		t.Run(filepath.Base(in), func(t *testing.T) {
			src, err := os.ReadFile(in)
			if err != nil {
				t.Fatal(err)
			}
			out, err := Format(src)
			if err != nil {
				t.Fatal(err)
			}
			golden := strings.TrimSuffix(in, ".input") + ".golden"
			if *update {
				if err := os.WriteFile(golden, out, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(out, want) {
				t.Errorf("Format(%s) differs from %s:\n%s", in, golden, out)
			}
			checkFormatted(t, src, out)
		})
	}
}

func TestFormatJuxtaposition(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"9s", "9s"},
		{"9 s", "9s"},
		{"0.5 z", "0.5z"},
		{"2 (z-1)", "2(z - 1)"},
		{"s (s+1)", "s(s + 1)"},
		{"(z-1) (z-0.5)", "(z - 1)(z - 0.5)"},
		{"0.8 z^-1", "0.8z^-1"},
		{"kp z", "kp z"},
		{"kp(z)", "kp(z)"},
		{"2 e1", "2 e1"},
		{"2 e", "2 e"},
		{"2e", "2 e"},
		{"2 3", "2 3"},
		{"2 .5", "2 .5"},
		{"z^2 s", "z^2 s"},
		{"z^2s", "z^2 s"},
		{"z^2 3", "z^2 3"},
		{"(z)2", "(z)2"},
		{"k1 s", "k1 s"},
		{"- -z", "--z"},
		{"z^(-1)", "z^-1"},
		{"z^+2", "z^2"},
		{"a-b*c/d+e", "a - b * c / d + e"},
	} {
		src := []byte("block b = " + c.in + "\n")
		out, err := Format(src)
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		if got := strings.TrimSuffix(strings.TrimPrefix(string(out), "block b = "), "\n"); got != c.want {
			t.Errorf("Format(%q) = %q, want %q", c.in, got, c.want)
		}
		checkFormatted(t, src, out)
	}
}

func TestFormatRefusesErrors(t *testing.T) {
	src := []byte("gain kp 0.8\n")
	if out, err := Format(src); err == nil || out != nil {
		t.Errorf("Format of a broken file: %q, %v", out, err)
	} else if !strings.Contains(err.Error(), "expected '='") {
		t.Errorf("error %q does not name the syntax error", err)
	}
	if _, _, err := FormatRange(src, 0, 3); err == nil {
		t.Error("FormatRange of a broken file: no error")
	}
}

func TestFormatEmpty(t *testing.T) {
	for _, src := range []string{"", "\n\n", "  \n"} {
		out, err := Format([]byte(src))
		if err != nil || len(out) != 0 {
			t.Errorf("Format(%q) = %q, %v", src, out, err)
		}
	}
}

func TestFormatRange(t *testing.T) {
	src := "gain a=1\ngain bb = 2   # two\n\nblock x=z^-1\nloop l {\n forward a   bb\n}\n"
	for _, c := range []struct {
		sub      string // the range is this substring of src
		replaced string
		text     string
	}{
		{"a=1", "gain a=1", "gain a  = 1"},
		{"=1\ngain", "gain a=1\ngain bb = 2   # two", "gain a  = 1\ngain bb = 2  # two"},
		{"z^", "block x=z^-1", "block x = z^-1"},
		{"forward", "loop l {\n forward a   bb\n}", "loop l {\n  forward a bb\n}"},
	} {
		from := Pos(strings.Index(src, c.sub))
		span, text, err := FormatRange([]byte(src), from, from+Pos(len(c.sub)))
		if err != nil {
			t.Fatal(err)
		}
		if got := src[span.From:span.To]; got != c.replaced || string(text) != c.text {
			t.Errorf("range %q: replaced %q with %q, want %q with %q", c.sub, got, text, c.replaced, c.text)
		}
	}
	// An empty range inside a statement formats that statement.
	at := Pos(strings.Index(src, "z^"))
	span, text, _ := FormatRange([]byte(src), at, at)
	if src[span.From:span.To] != "block x=z^-1" || string(text) != "block x = z^-1" {
		t.Errorf("empty range: %v %q", span, text)
	}
	// A blank line holds no statement.
	at = Pos(strings.Index(src, "\n\n") + 1)
	span, text, _ = FormatRange([]byte(src), at, at)
	if span.From != at || span.To != at || len(text) != 0 {
		t.Errorf("blank line: %v %q", span, text)
	}
	// CRLF files get CRLF inside the new text.
	crlf := "loop l {\r\n forward a\r\n}\r\n"
	span, text, _ = FormatRange([]byte(crlf), 0, 1)
	if crlf[span.From:span.To] != "loop l {\r\n forward a\r\n}" || string(text) != "loop l {\r\n  forward a\r\n}" {
		t.Errorf("CRLF range: %q %q", crlf[span.From:span.To], text)
	}
}
