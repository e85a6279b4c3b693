package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// ringside export: what is written, where, and the exit status of each
// refusal.
func TestExportCommand(t *testing.T) {
	demo, _ := filepath.Abs("testdata/demo/spindle.loop")
	dir := t.TempDir()
	t.Chdir(dir)
	os.WriteFile("good.loop", []byte("sample 1 ms\nblock lp = 0.02 / (z^2 - 1.8z + 0.82)\nrealize lp as sections in q1.14\n"), 0o644)
	os.WriteFile("none.loop", []byte("sample 1 ms\nblock lp = 0.02 / (z^2 - 1.8z + 0.82)\n"), 0o644)
	outside := t.TempDir()
	os.Symlink(outside, "elsewhere")
	os.Symlink("good.loop", "link.h")

	exp := func(args ...string) (int, string, string) {
		var out, errb bytes.Buffer
		code := run(append([]string{"export"}, args...), nil, &out, &errb)
		return code, out.String(), errb.String()
	}
	code, out, _ := exp("good.loop")
	if code != 0 || !strings.Contains(out, "static inline int16_t lp_step(lp_state *st, int16_t x_in)") || !strings.Contains(out, "source SHA-256: ") {
		t.Fatalf("export good.loop: exit %d\n%s", code, out)
	}
	code, js, _ := exp("--lang", "json", "good.loop")
	var doc struct {
		Blocks []struct{ Test struct{ Output []int64 } }
	}
	if code != 0 || json.Unmarshal([]byte(js), &doc) != nil || len(doc.Blocks) != 1 || len(doc.Blocks[0].Test.Output) != 64 {
		t.Fatalf("export --lang json: exit %d\n%s", code, js)
	}
	if code, _, _ := exp("-o", "sub.h", "good.loop"); code != 0 {
		t.Fatalf("-o sub.h: exit %d", code)
	}
	if b, _ := os.ReadFile("sub.h"); string(b) != out {
		t.Error("-o wrote something else than stdout shows")
	}
	if tmp, _ := filepath.Glob(".sub.h.*"); len(tmp) != 0 {
		t.Errorf("temporary files left: %v", tmp)
	}
	for _, c := range []struct {
		args []string
		want int
		msg  string
	}{
		{[]string{demo}, 1, "realize-unstable"},
		{[]string{"none.loop"}, 2, "no block of the file has a `realize` line"},
		{[]string{"-o", filepath.Join(outside, "x.h"), "good.loop"}, 2, "outside the working folder"},
		{[]string{"-o", "elsewhere/x.h", "good.loop"}, 2, "outside the working folder"},
		{[]string{"-o", "link.h", "good.loop"}, 2, "cannot write link.h"},
		{[]string{"--lang", "rust", "good.loop"}, 2, "--lang takes one of c, json"},
		{[]string{"missing.loop"}, 2, "cannot read"},
	} {
		code, _, msg := exp(c.args...)
		if code != c.want || !strings.Contains(msg, c.msg) {
			t.Errorf("export %v: exit %d, want %d with %q\n%s", c.args, code, c.want, c.msg, msg)
		}
	}
	if _, err := os.Stat(filepath.Join(outside, "x.h")); err == nil {
		t.Error("a file was written outside the working folder")
	}
}
