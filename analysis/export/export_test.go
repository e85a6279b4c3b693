package export

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ringside/analysis"
	"ringside/analysis/internal/scipyref"
)

// Blocks of the compile test, each realized in several structures and
// formats: a pair of notches with poles crowded near z = 1, a resonant
// low-pass, a lead and a PI (an integrator, which saturates in fixed point).
var exprs = map[string]string{
	"notch": "(z^2 - 1.997776z + 0.998001)(z^2 - 1.996402z + 0.998001) / ((z^2 - 1.991776z + 0.992016)(z^2 - 1.984411z + 0.986049))",
	"lp":    "0.02 / (z^2 - 1.8z + 0.82)",
	"lead":  "(z - 0.9) / (z - 0.5)",
	"pi":    "0.5 + 0.01z / (z - 1)",
}

var combos = []struct{ expr, st, f string }{
	{"notch", "sections", "q1.14"}, {"notch", "sections", "q1.18"}, {"notch", "direct", "q3.28"},
	{"notch", "sections", "float32"}, {"notch", "direct", "float64"}, {"notch", "sections", "float64"},
	{"notch", "delta", "float32"}, {"notch", "delta", "float64"}, {"notch", "delta", "q35.12"},
	{"lp", "direct", "q1.14"}, {"lp", "direct", "q1.30"}, {"lp", "sections", "q4.11"}, {"lp", "delta", "q21.20"},
	{"lead", "direct", "q1.14"}, {"lead", "direct", "float32"}, {"pi", "direct", "q7.8"}, {"pi", "sections", "q2.40"},
}

func source() string {
	var b strings.Builder
	b.WriteString("sample 100 us\n")
	for i, c := range combos {
		fmt.Fprintf(&b, "block b%d = %s\nrealize b%d as %s in %s\n", i, exprs[c.expr], i, c.st, c.f)
	}
	return b.String()
}

func checked(t *testing.T, src string) *analysis.Result {
	t.Helper()
	dir := t.TempDir()
	path := filepath.Join(dir, "blocks.loop")
	res := analysis.Check(context.Background(), path, []byte(src), analysis.Env{Roots: []string{dir}, Options: analysis.DefaultOptions()})
	return res
}

func gcc(t *testing.T) string {
	t.Helper()
	if p, err := exec.LookPath("gcc"); err == nil {
		return p
	}
	if os.Getenv("RINGSIDE_REQUIRE_GCC") == "1" {
		t.Fatal("gcc not found (RINGSIDE_REQUIRE_GCC=1)")
	}
	t.Skip("gcc not found")
	return ""
}

// TestHeaderCompilesAndMatches compiles the exported header with gcc
// (-std=c99 -Wall -Werror, at -O0 and -O2), runs every block on the
// contract's test input and compares with the JSON test vector: identical
// words for fixed point, 1e-6 relative for floating point.
func TestHeaderCompilesAndMatches(t *testing.T) {
	cc := gcc(t)
	src := source()
	res := checked(t, src)
	blocks, err := Blocks(res)
	if err != nil {
		t.Fatal(err)
	}
	header := C(res, blocks, Source{Path: "blocks.loop", Content: []byte(src), Version: "test"})
	js, err := JSON(res, blocks)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Blocks []struct {
			Name, Format string
			Test         struct{ Output []json.Number }
		}
	}
	if err := json.Unmarshal(js, &doc); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "blocks.h"), []byte(header), 0o644)
	os.WriteFile(filepath.Join(dir, "main.c"), []byte(mainC(blocks)), 0o644)
	for _, opt := range []string{"-O0", "-O2"} {
		exe := filepath.Join(dir, "run"+opt)
		if out, err := exec.Command(cc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", opt, "-o", exe, filepath.Join(dir, "main.c"), "-lm").CombinedOutput(); err != nil {
			t.Fatalf("gcc %s: %v\n%s", opt, err, out)
		}
		out, err := exec.Command(exe).Output()
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(strings.TrimSpace(string(out)), "\n")
		if len(lines) != len(doc.Blocks)*64 {
			t.Fatalf("%s: %d lines of output", opt, len(lines))
		}
		for bi, b := range doc.Blocks {
			fixed := strings.HasPrefix(b.Format, "q")
			for k, want := range b.Test.Output {
				got := lines[bi*64+k]
				if fixed {
					if got != want.String() {
						t.Fatalf("%s %s (%s, %v) sample %d: C %s, simulation %s", opt, b.Name, b.Format, combos[bi], k, got, want)
					}
					continue
				}
				g, _ := strconv.ParseFloat(got, 64)
				w, _ := want.Float64()
				if math.Abs(g-w) > 1e-6*math.Max(math.Abs(w), 1e-30) {
					t.Fatalf("%s %s (%s) sample %d: C %v, simulation %v", opt, b.Name, b.Format, k, g, w)
				}
			}
		}
	}
}

func mainC(blocks []*analysis.Block) string {
	var b strings.Builder
	b.WriteString("#include <stdio.h>\n#include \"blocks.h\"\nint main(void)\n{\n\tint k;\n")
	for _, bl := range blocks {
		r := bl.Realization
		fmt.Fprintf(&b, "\t{\n\t\t%s_state s;\n\t\t%s_reset(&s);\n\t\tfor (k = 0; k < 64; k++) {\n", bl.Name, bl.Name)
		switch CType(r.Format) {
		case "double", "float":
			fmt.Fprintf(&b, "\t\t\tprintf(\"%%.17g\\n\", (double)%s_step(&s, 0.25));\n", bl.Name)
		default:
			x := int64(math.Round(math.Ldexp(0.25, r.Format.N)))
			fmt.Fprintf(&b, "\t\t\tprintf(\"%%lld\\n\", (long long)%s_step(&s, (%s)%dLL));\n", bl.Name, CType(r.Format), x)
		}
		b.WriteString("\t\t}\n\t}\n")
	}
	b.WriteString("\treturn 0;\n}\n")
	return b.String()
}

// TestFloat64AgainstLfilter: a float64 realization computes the ideal block;
// its test vector agrees with scipy.signal.lfilter of the block's own
// coefficients to 1e-9 relative (of the largest output).
func TestFloat64AgainstLfilter(t *testing.T) {
	py := scipyref.Python(t)
	src := source()
	res := checked(t, src)
	blocks, err := Blocks(res)
	if err != nil {
		t.Fatal(err)
	}
	type item struct {
		Num, Den []float64
		Out      []float64
	}
	var items []item
	for _, b := range blocks {
		if b.Realization.Format.String() != "float64" {
			continue
		}
		v, _ := b.Realization.TestVector()
		items = append(items, item{Num: b.TF.Num, Den: b.TF.Den, Out: v})
	}
	if len(items) < 3 {
		t.Fatalf("only %d float64 blocks", len(items))
	}
	in, _ := json.Marshal(items)
	script := `
import json, sys
import numpy as np
from scipy.signal import lfilter
items = json.load(sys.stdin)
out = []
for it in items:
    num, den = it["Num"], it["Den"]          # lowest power of z first
    n = len(den) - 1
    b = np.zeros(n + 1); b[n + 1 - len(num):] = num[::-1]
    a = np.array(den[::-1])                 # in powers of z^-1
    y = lfilter(b, a, 0.25 * np.ones(64))
    out.append(float(np.max(np.abs(y - it["Out"])) / np.max(np.abs(y))))
json.dump(out, sys.stdout)
`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = bytes.NewReader(in)
	out, err := cmd.Output()
	if err != nil {
		t.Fatal(err)
	}
	var rel []float64
	json.Unmarshal(out, &rel)
	for i, r := range rel {
		if !(r <= 1e-9) {
			t.Errorf("float64 block %d: relative difference from lfilter %g", i, r)
		}
	}
	t.Logf("relative differences from lfilter: %v", rel)
}

// An unrealized file and a failing realization are refused with a status.
func TestRefusals(t *testing.T) {
	for src, status := range map[string]int{
		"sample 1 ms\nblock a = 1 / (z - 0.5)\n":                                          2,
		"sample 100 us\nblock n = " + exprs["notch"] + "\nrealize n as direct in q3.12\n": 1,
		"sample 1 ms\nblock a = 1 / (z - 0.5)\nrealize a as direct in q0.3\n":             1,
	} {
		_, err := Blocks(checked(t, src))
		e, ok := err.(*Error)
		if !ok || e.Status != status {
			t.Errorf("%q: %v, want status %d", src, err, status)
		}
	}
}
