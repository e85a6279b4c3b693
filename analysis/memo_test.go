package analysis

import (
	"context"
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
		if !reflect.DeepEqual(a, b) {
			t.Errorf("loop %s differs with the memo", l.Name)
		}
		for j, q := range g.Requirements {
			if q.Item != nil && (q.Item.From != l.Requirements[j].Item.From || !strings.Contains(string(src[q.Item.From:q.Item.To]), q.Metric)) {
				t.Errorf("loop %s: requirement %s not placed in this tree", l.Name, q.Metric)
			}
		}
	}
	for i, g := range plain.Gains {
		if !reflect.DeepEqual(got.Gains[i].Limits, g.Limits) {
			t.Errorf("gain %s: limits differ with the memo", g.Name)
		}
	}
	return got
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
}
