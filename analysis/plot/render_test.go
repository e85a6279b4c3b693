package plot

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ringside/analysis"
)

// TestEveryFilePages draws the page and every figure of the test inputs
// and of the project's demo files: each must succeed, with one section
// per loop. With RINGSIDE_PLOT_OUT set to a folder, the pages, SVGs and
// PNGs are written there for a look by eye.
func TestEveryFilePages(t *testing.T) {
	out := os.Getenv("RINGSIDE_PLOT_OUT")
	files := []string{"testdata/blower.loop", "testdata/three.loop"}
	demo, _ := filepath.Glob("../../testdata/demo/*.loop")
	files = append(files, demo...)
	write := func(name string, b []byte) {
		if out == "" {
			return
		}
		if err := os.WriteFile(filepath.Join(out, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		res := analysis.Check(context.Background(), f, src, analysis.Env{})
		page, err := Page(res)
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		if n := strings.Count(string(page), `<section class="loop"`); n != len(res.Loops) {
			t.Errorf("%s: %d sections for %d loops", f, n, len(res.Loops))
		}
		write(strings.TrimSuffix(filepath.Base(f), ".loop")+".html", page)
		for _, l := range res.Loops {
			if !l.OK {
				continue
			}
			s, err := LoopSVG(res, l)
			if err != nil {
				t.Fatalf("%s loop %s: %v", f, l.Name, err)
			}
			parseSVG(t, s)
			write(l.Name+".svg", s)
			if out != "" {
				b, err := LoopPNG(res, l)
				if err != nil {
					t.Fatalf("%s loop %s: %v", f, l.Name, err)
				}
				write(l.Name+".png", b)
			}
		}
	}
}
