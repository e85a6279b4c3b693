package main

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"go/parser"
	"go/token"
	"math"
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
		code := run([]string{"check", "--format", format, "--indent", "testdata/demo"}, nil, &out, &errb)
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
		if format == "json" {
			// Figures are compared to 1e-9 relative: the 15th digit of a
			// margin may move with any reordering of floating-point work.
			if diff := jsonDiff(out.Bytes(), want); diff != "" {
				t.Errorf("json report differs from %s (go test -run TestDemoGolden -update, then review the diff): %s", golden, diff)
			}
			continue
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

// jsonDiff describes the first difference between two JSON documents,
// numbers equal within 1e-9 relative (1e-12 absolute near zero).
func jsonDiff(a, b []byte) string {
	var x, y any
	if err := json.Unmarshal(a, &x); err != nil {
		return "got invalid JSON: " + err.Error()
	}
	if err := json.Unmarshal(b, &y); err != nil {
		return "golden invalid JSON: " + err.Error()
	}
	return valueDiff("$", x, y)
}

func valueDiff(path string, x, y any) string {
	switch a := x.(type) {
	case map[string]any:
		b, ok := y.(map[string]any)
		if !ok || len(a) != len(b) {
			return fmt.Sprintf("%s: %v vs %v", path, x, y)
		}
		for k, v := range a {
			if d := valueDiff(path+"."+k, v, b[k]); d != "" {
				return d
			}
		}
	case []any:
		b, ok := y.([]any)
		if !ok || len(a) != len(b) {
			return fmt.Sprintf("%s: length %d vs %v", path, len(a), y)
		}
		for i := range a {
			if d := valueDiff(fmt.Sprintf("%s[%d]", path, i), a[i], b[i]); d != "" {
				return d
			}
		}
	case float64:
		b, ok := y.(float64)
		if !ok || math.Abs(a-b) > 1e-9*math.Max(math.Abs(a), math.Abs(b))+1e-12 {
			return fmt.Sprintf("%s: %v vs %v", path, x, y)
		}
	default:
		if x != y {
			return fmt.Sprintf("%s: %v vs %v", path, x, y)
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

// failWriter fails every write, like a full disk or a closed pipe.
type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, os.ErrClosed }

// Every output path reports a failed write or encoding with exit status 2;
// nothing vanishes silently.
func TestOutputErrorsExit2(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "a.loop")
	os.WriteFile(f, []byte("sample 1 ms\nblock p = 0.5 / (z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	for _, args := range [][]string{{"check", "--root", dir, f}, {"check", "--format", "json", "--root", dir, f},
		{"check", "--format", "sarif", "--root", dir, f}, {"fmt", f}, {"plot", "--root", dir, f}} {
		var errb bytes.Buffer
		if code := run(args, nil, failWriter{}, &errb); code != 2 || errb.Len() == 0 {
			t.Errorf("%v: exit %d, stderr %q", args, code, errb.String())
		}
	}
}
