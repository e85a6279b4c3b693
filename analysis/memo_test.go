package analysis

import (
	"context"
	"errors"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// checkBoth checks src with and without the memo and fails when the
// results differ in any diagnostic, loop figure or gain limit.
func checkBoth(t *testing.T, memo *Memo, path string, src []byte, env Env) *Result {
	t.Helper()
	env.Memo = nil
	plain := Check(context.Background(), path, src, env)
	env.Memo = memo
	got := Check(context.Background(), path, src, env)
	if !reflect.DeepEqual(got.Diagnostics, plain.Diagnostics) {
		for i := range plain.Diagnostics {
			if i >= len(got.Diagnostics) || !reflect.DeepEqual(got.Diagnostics[i], plain.Diagnostics[i]) {
				var g any = "none"
				if i < len(got.Diagnostics) {
					g = got.Diagnostics[i]
				}
				t.Fatalf("%s: diagnostic %d with the memo:\n%+v\nwithout:\n%+v", path, i, g, plain.Diagnostics[i])
			}
		}
		t.Fatalf("%s: %d diagnostics with the memo, %d without", path, len(got.Diagnostics), len(plain.Diagnostics))
	}
	for i, l := range plain.Loops {
		g := got.Loops[i]
		if g.Stmt != l.Stmt && g.Stmt.From != l.Stmt.From {
			t.Errorf("loop %s: statement not of this check", l.Name)
		}
		a, b := *g, *l
		a.Stmt, b.Stmt = nil, nil
		a.Requirements, b.Requirements = nil, nil
		if a.Realized != nil && b.Realized != nil {
			ra, rb := *a.Realized, *b.Realized
			fa, fb := *ra.Figures, *rb.Figures
			fa.Stmt, fb.Stmt, fa.Requirements, fb.Requirements = nil, nil, nil, nil
			ra.Figures, rb.Figures = &fa, &fb
			a.Realized, b.Realized = &ra, &rb
		}
		if !sameValue(reflect.ValueOf(a), reflect.ValueOf(b)) {
			t.Errorf("loop %s differs with the memo", l.Name)
		}
		for j, q := range g.Requirements {
			if q.Item != nil && (q.Item.From != l.Requirements[j].Item.From || !strings.Contains(string(src[q.Item.From:q.Item.To]), q.Metric)) {
				t.Errorf("loop %s: requirement %s not placed in this tree", l.Name, q.Metric)
			}
		}
	}
	for i, g := range plain.Gains {
		if !sameValue(reflect.ValueOf(got.Gains[i].Limits), reflect.ValueOf(g.Limits)) {
			t.Errorf("gain %s: limits differ with the memo", g.Name)
		}
	}
	sameBlocks(t, got.Blocks, plain.Blocks)
	return got
}

// sameValue is reflect.DeepEqual with NaN equal to NaN (a figure that is
// NaN in a fresh check must be NaN through the memo too).
func sameValue(a, b reflect.Value) bool {
	if a.IsValid() != b.IsValid() || a.IsValid() && a.Type() != b.Type() {
		return false
	}
	if !a.IsValid() {
		return true
	}
	switch a.Kind() {
	case reflect.Float32, reflect.Float64:
		x, y := a.Float(), b.Float()
		return x == y || math.IsNaN(x) && math.IsNaN(y)
	case reflect.Complex64, reflect.Complex128:
		x, y := a.Complex(), b.Complex()
		return sameValue(reflect.ValueOf(real(x)), reflect.ValueOf(real(y))) && sameValue(reflect.ValueOf(imag(x)), reflect.ValueOf(imag(y)))
	case reflect.Pointer, reflect.Interface:
		if a.IsNil() || b.IsNil() {
			return a.IsNil() == b.IsNil()
		}
		return a.Kind() == reflect.Pointer && a.Pointer() == b.Pointer() || sameValue(a.Elem(), b.Elem())
	case reflect.Struct:
		for i := 0; i < a.NumField(); i++ {
			if !sameValue(a.Field(i), b.Field(i)) {
				return false
			}
		}
		return true
	case reflect.Slice, reflect.Array:
		if a.Kind() == reflect.Slice && a.IsNil() != b.IsNil() || a.Len() != b.Len() {
			return false
		}
		for i := 0; i < a.Len(); i++ {
			if !sameValue(a.Index(i), b.Index(i)) {
				return false
			}
		}
		return true
	case reflect.Map:
		if a.IsNil() != b.IsNil() || a.Len() != b.Len() {
			return false
		}
		for _, k := range a.MapKeys() {
			if !sameValue(a.MapIndex(k), b.MapIndex(k)) {
				return false
			}
		}
		return true
	case reflect.Func, reflect.Chan, reflect.UnsafePointer:
		return a.IsNil() == b.IsNil()
	case reflect.String:
		return a.String() == b.String()
	case reflect.Bool:
		return a.Bool() == b.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return a.Int() == b.Int()
	default:
		return a.Uint() == b.Uint()
	}
}

// sameBlocks fails when blocks differ in anything but their statement and
// realization (read afresh by every check).
func sameBlocks(t *testing.T, got, want []*Block) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d blocks with the memo, %d without", len(got), len(want))
	}
	for i, b := range want {
		a, p := *got[i], *b
		if a.Stmt == nil || p.Stmt == nil || a.Stmt.From != p.Stmt.From {
			t.Errorf("block %s: statement not of this check", b.Name)
		}
		a.Stmt, p.Stmt, a.Realization, p.Realization = nil, nil, nil, nil
		if !sameValue(reflect.ValueOf(a), reflect.ValueOf(p)) {
			t.Errorf("block %s differs with the memo:\n%+v\n%+v", b.Name, a, p)
		}
	}
}

// TestMemoSameAsFresh edits the demo files (a gain value that changes the
// text's length, a line inserted above everything, a block changed) and
// checks that the memoised result equals a fresh check each time, and that
// loops an edit did not touch are reused, not recomputed.
func TestMemoSameAsFresh(t *testing.T) {
	dir, _ := filepath.Abs("../testdata/demo")
	files, _ := filepath.Glob(filepath.Join(dir, "*.loop"))
	if len(files) == 0 {
		t.Fatal("no demo files")
	}
	env := Env{Roots: []string{dir}}
	for _, path := range files {
		src, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		memo := NewMemo()
		first := checkBoth(t, memo, path, src, env)
		moved := append([]byte("# a new first line\n\n"), src...)
		second := checkBoth(t, memo, path, moved, env)
		for i, l := range second.Loops {
			if l.OK && len(l.Poles) > 0 && &l.Poles[0] != &first.Loops[i].Poles[0] {
				t.Errorf("%s: loop %s recomputed after an edit that does not touch it", filepath.Base(path), l.Name)
			}
		}
		// Change every gain's value text (a longer number, same value
		// for all but the first gain).
		text := string(moved)
		for i, g := range second.Gains {
			if g.Stmt.Value == nil {
				continue
			}
			v := g.Stmt.Value
			repl := v.Text + "0"
			if i == 0 {
				repl = v.Text + "1"
			}
			from, to := int(v.From), int(v.To)
			if v.Neg {
				from++
			}
			shift := len(text) - len(moved)
			text = text[:from+shift] + repl + text[to+shift:]
		}
		checkBoth(t, memo, path, []byte(text), env)
	}
}

// TestMemoGainEdit: in a generated file, changing one gain re-analyses the
// one loop that uses it and keeps every other loop's result.
func TestMemoGainEdit(t *testing.T) {
	src := withDelay(corpus(20, 3))
	memo := NewMemo()
	env := Env{Roots: []string{"/bench"}}
	first := checkBoth(t, memo, "/bench/c.loop", []byte(src), env)
	i := strings.Index(src, "gain kp5 = ")
	j := i + strings.IndexByte(src[i:], '\n')
	edited := src[:i] + "gain kp5 = 9.5" + src[j:]
	second := checkBoth(t, memo, "/bench/c.loop", []byte(edited), env)
	for k, l := range second.Loops {
		same := &l.Poles[0] == &first.Loops[k].Poles[0]
		if same != (l.Name != "l5") {
			t.Errorf("loop %s: reused %v", l.Name, same)
		}
	}
	// Blocks too: only c5, which names kp5, is evaluated again.
	for k, b := range second.Blocks {
		if len(b.Poles) == 0 {
			continue
		}
		same := &b.Poles[0] == &first.Blocks[k].Poles[0]
		if same != (b.Name != "c5") {
			t.Errorf("block %s: reused %v", b.Name, same)
		}
	}
}

// The files of every expected diagnostic (unknown names, later blocks,
// mixed variables, realize lines, used files...) check the same through
// the memo after lines move, a block changes and a name changes, so a
// block or loop replayed from the memo carries what a fresh check finds.
func TestMemoSameAsFreshDiagFiles(t *testing.T) {
	files, _ := filepath.Glob("testdata/diag/*.loop")
	if len(files) == 0 {
		t.Fatal("no testdata/diag files")
	}
	for _, path := range files {
		path, _ = filepath.Abs(path)
		src, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		env := Env{Roots: []string{filepath.Dir(path)}}
		memo := NewMemo()
		text := string(src)
		checkBoth(t, memo, path, []byte(text), env)
		for _, edit := range []func(string) string{
			func(s string) string { return "# moved\n\n" + s },
			func(s string) string { return strings.Replace(s, "0.5", "0.55", 1) },
			func(s string) string { return strings.Replace(s, "z - ", "z -  ", 2) },
			func(s string) string { return strings.Replace(s, "block p", "block pp", 1) },
			func(s string) string { return strings.Replace(s, "block pp", "block p", 1) },
		} {
			text = edit(text)
			checkBoth(t, memo, path, []byte(text), env)
		}
	}
}

// Blocks that name each other in a cycle, or name a block declared later,
// check the same with the memo, and edits around them too.
func TestMemoCyclesAndLaterBlocks(t *testing.T) {
	srcs := []string{
		"sample 1 ms\nblock a = b * 2\nblock b = a / (z - 0.5)\nloop l {\n  forward a\n}\n",
		"sample 1 ms\nblock a = later + 1\nblock later = 1 / (z - 0.5)\nblock c = a * later\nloop l {\n  forward c\n}\n",
		"sample 1 ms\ngain k = 2\nblock a = k / (z - 0.9)\nblock b = a * a\nblock c = b + a\nloop l {\n  forward c\n  feedback z^-1\n}\n",
		"sample 1 ms\nblock s1 = 1 / (s + 2) via zoh\nblock s2 = s1 * 3\nblock zz = s2 * z^-1\nloop l {\n  forward zz\n}\n",
	}
	for _, src := range srcs {
		memo := NewMemo()
		env := Env{Roots: []string{"/m"}}
		checkBoth(t, memo, "/m/a.loop", []byte(src), env)
		checkBoth(t, memo, "/m/a.loop", []byte("\n"+src), env)
		checkBoth(t, memo, "/m/a.loop", []byte(strings.Replace(src, "0.5", "0.25", 1)), env)
		checkBoth(t, memo, "/m/a.loop", []byte(strings.Replace(src, "k = 2", "k = 3", 1)), env)
	}
}

// On generated files (s and z blocks, gains inside blocks, shared factors,
// algebraic loops, mistakes), each checked and then edited, every result
// through the memo equals a fresh check.
func TestMemoOnGeneratedFiles(t *testing.T) {
	n := 150
	if testing.Short() {
		n = 30
	}
	rng := rand.New(rand.NewSource(7))
	env := Env{Roots: []string{"/gen"}, Read: func(string) ([]byte, error) { return nil, errors.New("no other files") }}
	for i := 0; i < n; i++ {
		data := make([]byte, 40+rng.Intn(120))
		rng.Read(data)
		src := string(fuzzLoopFile(data))
		memo := NewMemo()
		checkBoth(t, memo, "/gen/f.loop", []byte(src), env)
		for _, edit := range []func(string) string{
			func(s string) string { return "# edited\n" + s },
			func(s string) string { return strings.Replace(s, "1", "2", 1) },
			func(s string) string { return strings.Replace(s, "0.", "0.9", 1) },
		} {
			src = edit(src)
			checkBoth(t, memo, "/gen/f.loop", []byte(src), env)
		}
	}
}
