package main

import (
	"bytes"
	"flag"
	"fmt"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden check outputs of testdata/demo")

// TestDemoGolden keeps the demo's text and JSON reports as reviewed.
func TestDemoGolden(t *testing.T) {
	for _, format := range []string{"text", "json", "sarif"} {
		var out, errb bytes.Buffer
		code := run([]string{"check", "--format", format, "testdata/demo"}, nil, &out, &errb)
		if code != 1 {
			t.Fatalf("%s: exit %d, want 1 (the demo has unstable loops); stderr: %s", format, code, errb.String())
		}
		golden := filepath.Join("testdata", "demo", "golden", "check."+format)
		if *update {
			if err := os.WriteFile(golden, out.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		want, err := os.ReadFile(golden)
		if err != nil {
			t.Fatalf("%v (run go test -run TestDemoGolden -update)", err)
		}
		if !bytes.Equal(out.Bytes(), want) {
			t.Errorf("%s report differs from %s (go test -run TestDemoGolden -update, then review the diff)\n%s", format, golden, firstDiff(out.String(), string(want)))
		}
	}
}

func firstDiff(got, want string) string {
	g, w := strings.Split(got, "\n"), strings.Split(want, "\n")
	for i := 0; i < len(g) || i < len(w); i++ {
		var a, b string
		if i < len(g) {
			a = g[i]
		}
		if i < len(w) {
			b = w[i]
		}
		if a != b {
			return fmt.Sprintf("line %d:\n got: %s\nwant: %s", i+1, a, b)
		}
	}
	return ""
}

// TestExitCodes: 0 clean, 1 errors, 2 usage or unreadable input.
func TestExitCodes(t *testing.T) {
	dir := t.TempDir()
	clean := filepath.Join(dir, "clean.loop")
	os.WriteFile(clean, []byte("sample 1 ms\nblock p = 0.5 / (z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	bad := filepath.Join(dir, "bad.loop")
	os.WriteFile(bad, []byte("sample 1 ms\nblock p = 3 / (z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	cases := []struct {
		args []string
		want int
	}{
		{[]string{"check", "--root", dir, clean}, 0},
		{[]string{"check", "--root", dir, bad}, 1},
		{[]string{"check", filepath.Join(dir, "missing.loop")}, 2},
		{[]string{"check", "--format", "xml", clean}, 2},
		{[]string{"check"}, 2},
		{[]string{"frobnicate"}, 2},
		{[]string{}, 2},
	}
	for _, c := range cases {
		var out, errb bytes.Buffer
		if got := run(c.args, nil, &out, &errb); got != c.want {
			t.Errorf("%v: exit %d, want %d\nstdout: %s\nstderr: %s", c.args, got, c.want, out.String(), errb.String())
		}
		if c.want == 2 && errb.Len() == 0 {
			t.Errorf("%v: exit 2 without a message on stderr", c.args)
		}
	}
}

// TestImportDirection keeps the layers apart: syntax imports nothing of
// ours, analysis no protocol or server package.
func TestImportDirection(t *testing.T) {
	check := func(dir string, bad func(string) bool) {
		filepath.Walk(dir, func(path string, info os.FileInfo, err error) error {
			if err != nil || info.IsDir() || !strings.HasSuffix(path, ".go") {
				return nil
			}
			f, err := parser.ParseFile(token.NewFileSet(), path, nil, parser.ImportsOnly)
			if err != nil {
				t.Errorf("%s: %v", path, err)
				return nil
			}
			for _, imp := range f.Imports {
				p := strings.Trim(imp.Path.Value, `"`)
				if bad(p) {
					t.Errorf("%s imports %s, against the layering (see DEVELOPERS.md)", path, p)
				}
			}
			return nil
		})
	}
	check("syntax", func(p string) bool { return strings.HasPrefix(p, "ringside") })
	check("analysis", func(p string) bool {
		return strings.HasPrefix(p, "ringside/server") || strings.HasPrefix(p, "go.lsp.dev") || strings.Contains(p, "jsonrpc")
	})
}
