package analysis

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// The realized loop is the ideal loop with the block's rounded transfer
// function in place: writing that rounded function out as an ordinary
// block gives the same figures. In q1.6 (steps of 1/64) 0.02 rounds to
// 1/64, −1.8 to −115/64 and 0.82 to 52/64.
func TestRealizedLoopIsTheLoopWithTheRoundedBlock(t *testing.T) {
	realized := checkSrc(t, "sample 1 ms\nblock lp = 0.02 / (z^2 - 1.8z + 0.82)\nrealize lp as direct in q1.6\nloop l {\n  forward lp k\n  feedback d\n}\nblock k = 20\nblock d = z^-1\n", nil)
	written := checkSrc(t, "sample 1 ms\nblock lp = (1/64) / (z^2 - (115/64)z + 52/64)\nloop l {\n  forward lp k\n  feedback d\n}\nblock k = 20\nblock d = z^-1\n", nil)
	rl := realized.Loops[0].Realized
	if rl == nil || !rl.Figures.OK {
		t.Fatalf("no realized figures: %+v", realized.Loops[0])
	}
	w := written.Loops[0]
	got := rl.Figures
	if got.Stable != w.Stable || math.Abs(got.MaxRadius-w.MaxRadius) > 1e-12 {
		t.Errorf("realized: stable %v radius %v; written out: %v %v", got.Stable, got.MaxRadius, w.Stable, w.MaxRadius)
	}
	for _, pair := range [][2]*float64{{got.Margins.GainMarginDB, w.Margins.GainMarginDB}, {got.Margins.PhaseMarginDeg, w.Margins.PhaseMarginDeg}} {
		if (pair[0] == nil) != (pair[1] == nil) || pair[0] != nil && math.Abs(*pair[0]-*pair[1]) > 1e-9 {
			t.Errorf("margins differ: %v vs %v", deref(pair[0]), deref(pair[1]))
		}
	}
	if b := realized.Blocks[0].Realization; b == nil || b.Sections[0].B[2] != 1.0/64 || b.Sections[0].A[1] != -115.0/64 || b.Sections[0].A[2] != 52.0/64 {
		t.Errorf("rounded coefficients %+v", b.Sections)
	}
}

func deref(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// Every realize fix is titled with the pole shift its realization gives:
// applying it and checking again shows that very shift.
func TestRealizeFixTitlesCarryTheirPoleShift(t *testing.T) {
	notch := "(z^2 - 1.997776z + 0.998001)(z^2 - 1.996402z + 0.998001) / ((z^2 - 1.991776z + 0.992016)(z^2 - 1.984411z + 0.986049))"
	src := "sample 50 us\nblock n = " + notch + "\nrealize n as direct in q3.12\n"
	r := checkSrc(t, src, nil)
	d := findDiag(r, CodeRealizeUnstable)
	if d == nil || len(d.Fixes) != 3 {
		t.Fatalf("want three fixes (one per structure): %+v", d)
	}
	for _, fx := range d.Fixes {
		r2 := checkSrc(t, applyEdits(src, fx.Edits), nil)
		b := r2.Blocks[0].Realization
		if b == nil || !b.Stable {
			t.Fatalf("fix %q: not realized or not stable", fx.Title)
		}
		want := fmt.Sprintf("(pole shift %s)", fmtNum(b.MaxPoleShift))
		if !strings.HasSuffix(fx.Title, want) {
			t.Errorf("fix %q, applied: %s", fx.Title, want)
		}
	}
	// The narrowest sections format at 16 bits: the pole pairs need the
	// range [−2, 2) (a1 ≈ −1.99), so q1.14.
	if !strings.Contains(d.Fixes[1].Title, "sections in q1.14") {
		t.Errorf("second fix %q, want sections in q1.14", d.Fixes[1].Title)
	}
}

// A block realized in its own file runs realized in every loop that uses
// it; a realize line for a used block is refused in the using file.
func TestRealizeAcrossFiles(t *testing.T) {
	plant := "sample 1 ms\nblock lp = 0.1 / (z - 0.9)\nrealize lp as direct in q0.3\n"
	r := checkSrc(t, "use \"filters.loop\"\nloop l {\n  forward lp\n}\n", map[string]string{"filters.loop": plant})
	if rl := r.Loops[0].Realized; rl == nil || !rl.Figures.OK || math.Abs(rl.Figures.MaxRadius-0.75) > 1e-12 {
		t.Fatalf("loop over a used realized block: %+v", r.Loops[0].Realized)
	}
	r = checkSrc(t, "use \"filters.loop\"\nrealize lp as sections in q1.14\n", map[string]string{"filters.loop": "sample 1 ms\nblock lp = 0.1 / (z - 0.9)\n"})
	if d := findDiag(r, CodeBadRealize); d == nil || !strings.Contains(d.Message, "declared in filters.loop") {
		t.Fatalf("realize of a used block: %v", r.Diagnostics)
	}
}

// Editing a realize line re-analyses the loops of its block: the memoised
// result equals a fresh check.
func TestMemoRealizeEdit(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "r.loop")
	env := Env{Roots: []string{dir}}
	memo := NewMemo()
	src := "sample 1 ms\nblock lp = 0.1 / (z - 0.9)\nrealize lp as direct in q0.3\nloop coarse {\n  forward lp\n}\n"
	first := checkBoth(t, memo, path, []byte(src), env)
	second := checkBoth(t, memo, path, []byte(strings.Replace(src, "q0.3", "q0.12", 1)), env)
	a, b := first.Loops[0].Realized, second.Loops[0].Realized
	if a == nil || b == nil || a.Figures.MaxRadius == b.Figures.MaxRadius {
		t.Fatalf("realized radius %v then %v: the edit did not reach the loop", a, b)
	}
}
