package syntax

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseFormat: Parse never panics and its tree stays inside the
// source; when Format succeeds, its output parses without errors, means
// the same, and is a fixed point of Format.
func FuzzParseFormat(f *testing.F) {
	for _, pat := range []string{"testdata/*.loop", "testdata/errors/*.loop", "testdata/format/*.input"} {
		files, _ := filepath.Glob(pat)
		for _, name := range files {
			if src, err := os.ReadFile(name); err == nil {
				f.Add(src)
			}
		}
	}
	f.Add([]byte("block b = 2e1 e (z\n-1)^-2 via zoh\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		file, _ := Parse("fuzz", src)
		Walk(file, func(n Node) bool {
			if n.Pos() < 0 || n.Pos() > n.End() || int(n.End()) > len(src) {
				t.Fatalf("node %T has span %d-%d in %d bytes", n, n.Pos(), n.End(), len(src))
			}
			return true
		})
		out, err := Format(src)
		if err != nil {
			return
		}
		file2, errs := Parse("out", out)
		if len(errs) > 0 {
			t.Fatalf("output does not parse: %v\ninput %q\noutput %q", errs, src, out)
		}
		if d1, d2 := dump(file), dump(file2); d1 != d2 {
			t.Fatalf("meaning changed:\n%s\nbecame\n%s\ninput %q\noutput %q", d1, d2, src, out)
		}
		again, err := Format(out)
		if err != nil || !bytes.Equal(again, out) {
			t.Fatalf("not idempotent (%v):\ninput %q\nonce  %q\ntwice %q", err, src, out, again)
		}
	})
}
