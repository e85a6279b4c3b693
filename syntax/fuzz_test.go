package syntax

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"sort"
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
			if !errors.Is(err, ErrSyntax) {
				t.Fatalf("formatter refused its own layout: %v\ninput %q", err, src)
			}
			return
		}
		mid := Pos(len(src) / 2)
		if at, text, err := FormatRange(src, mid, mid); err != nil {
			t.Fatalf("range formatter refused its own layout: %v\ninput %q", err, src)
		} else if part, _ := ApplyEdits(src, []Edit{{at, string(text)}}); dump(mustParse(t, string(part))) != dump(file) {
			t.Fatalf("range formatting changed meaning:\ninput %q\noutput %q", src, part)
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

// FuzzRename renames one name of a fuzzed file to a fuzzed new name. An
// accepted rename must read back, renamed back, as the original file (by
// the independent dump); a refused one must say why.
func FuzzRename(f *testing.F) {
	f.Add([]byte("gain k = 0.5\nblock c2 = 2k\nloop l {\n  forward c2 k\n}\n"), uint8(0), "e3")
	f.Add([]byte("gain k = 0.5\nblock c2 = 2k * .5k\n"), uint8(0), "E10")
	f.Add([]byte("\ufeffgain a = 1\rblock b = a(z-1)/z\r"), uint8(1), "a2")
	f.Add([]byte("gain k = 1 max 3\nblock b = k z^-1 via zoh\n"), uint8(0), "via")
	f.Add([]byte("block p = 3/(s+1) via zoh\nblock q = 2p\n"), uint8(0), "s")
	f.Add([]byte("sample 1 ms\ngain k = 1 vary 0.5 to 2\nblock n = k/(z - 0.5)\nrealize n as sections in q1.14\n"), uint8(1), "e5")
	f.Fuzz(func(t *testing.T, src []byte, pick uint8, newName string) {
		file, _ := Parse("", src)
		occ := nameSpans(file)
		if len(occ) == 0 {
			return
		}
		var names []string
		for n := range occ {
			names = append(names, n)
		}
		sort.Strings(names)
		old := names[int(pick)%len(names)]
		if newName == old || occ[newName] != nil {
			return
		}
		edits, err := Rename(src, occ[old], old, newName)
		if err != nil {
			if err.Error() == "" {
				t.Fatal("refused without a message")
			}
			return
		}
		if CheckName(newName) != nil {
			t.Fatalf("accepted the name %q", newName)
		}
		out, err := ApplyEdits(src, edits)
		if err != nil {
			t.Fatal(err)
		}
		back, _ := Parse("", out)
		spans := nameSpans(back)[newName]
		if len(spans) != len(occ[old]) {
			t.Fatalf("%d occurrences of %s became %d of %s\n%q\n%q", len(occ[old]), old, len(spans), newName, src, out)
		}
		var undo []Edit
		for _, sp := range spans {
			undo = append(undo, Edit{sp, old})
		}
		restored, _ := ApplyEdits(out, undo)
		f1, _ := Parse("", restored)
		if dump(f1) != dump(file) {
			t.Fatalf("rename %s -> %s changed meaning:\n%q\n%q", old, newName, src, out)
		}
	})
}

// nameSpans lists the spans of every gain and block name, declared or used.
func nameSpans(f *File) map[string][]Span {
	out := map[string][]Span{}
	Walk(f, func(n Node) bool {
		switch n := n.(type) {
		case *GainStmt:
			if n.Name != nil {
				out[n.Name.Name] = append(out[n.Name.Name], n.Name.Span)
			}
		case *BlockStmt:
			if n.Name != nil {
				out[n.Name.Name] = append(out[n.Name.Name], n.Name.Span)
			}
		case *RealizeStmt:
			if n.Block != nil {
				out[n.Block.Name] = append(out[n.Block.Name], n.Block.Span)
			}
		case *NameRef:
			out[n.Name] = append(out[n.Name], n.Span)
		case *PathItem:
			for _, id := range n.Names {
				out[id.Name] = append(out[id.Name], id.Span)
			}
			return false
		}
		return true
	})
	return out
}
