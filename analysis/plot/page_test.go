package plot

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"math"
	"regexp"
	"strings"
	"testing"

	"ringside/analysis"
	"ringside/analysis/poly"
)

func TestPNGDecodesAtSize(t *testing.T) {
	res := checkFile(t, "testdata/blower.loop")
	b, err := LoopPNG(res, loopNamed(t, res, "blower_speed"))
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("PNG does not decode: %v", err)
	}
	// 12 in × 96 dpi = 1152 px; 4.6 in × 96 dpi = 441.6 px, rounded to 442.
	if r := img.Bounds(); r.Dx() != 1152 || r.Dy() != 442 {
		t.Errorf("PNG is %d × %d, want 1152 × 442", r.Dx(), r.Dy())
	}
	// Not blank: the curves put some non-white pixels in it.
	dark := 0
	for y := 0; y < img.Bounds().Dy(); y += 2 {
		for x := 0; x < img.Bounds().Dx(); x += 2 {
			if r, g, b, _ := img.At(x, y).RGBA(); r+g+b < 3*0x8000 {
				dark++
			}
		}
	}
	if dark < 500 {
		t.Errorf("PNG looks blank (%d dark pixels sampled)", dark)
	}
}

func TestPageHasOneSectionPerLoop(t *testing.T) {
	res := checkFile(t, "testdata/three.loop")
	b, err := Page(res)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	sections := regexp.MustCompile(`(?s)<section class="loop" id="[^"]*">(.*?)</section>`).FindAllStringSubmatch(page, -1)
	if len(sections) != 3 {
		t.Fatalf("%d loop sections, want 3", len(sections))
	}
	want := []struct{ name, verdict string }{
		{"valve_flow", "Stable, and every requirement is met."},
		{"tank_level", "NOT STABLE (pole on the unit circle): a closed-loop pole lies on the unit circle"},
		{"arm_wobble", "UNSTABLE: 2 closed-loop pole(s) lie outside the unit circle"},
	}
	for i, w := range want {
		s := sections[i][1]
		if !strings.Contains(s, "<h2>Loop "+w.name+"</h2>") {
			t.Errorf("section %d is not loop %s", i, w.name)
		}
		if !strings.Contains(s, w.verdict) {
			t.Errorf("section %s lacks verdict %q", w.name, w.verdict)
		}
		if n := strings.Count(s, "<svg"); n != 1 {
			t.Errorf("section %s has %d figures, want 1", w.name, n)
		}
		// The inline figure is well-formed XML with the loop's title.
		svg := s[strings.Index(s, "<svg"):]
		svg = svg[:strings.Index(svg, "</svg>")+len("</svg>")]
		doc := parseSVG(t, []byte(svg))
		found := false
		for _, tx := range doc.texts {
			found = found || strings.HasPrefix(tx, w.name+": ")
		}
		if !found {
			t.Errorf("figure of %s has no title", w.name)
		}
		for _, row := range []string{"Gain margin", "Phase margin", "Peak sensitivity", "Step overshoot", "Settling time (2 %)", "Largest pole radius"} {
			if !strings.Contains(s, "<th>"+row+"</th>") {
				t.Errorf("section %s lacks row %q", w.name, row)
			}
		}
	}
	// valve_flow meets radius <= 0.9 (pole at 0.6); arm_wobble misses damping >= 0.5.
	if !strings.Contains(sections[0][1], `<td>radius &lt;= 0.9</td><td>0.6</td><td class="met">met</td>`) {
		t.Errorf("valve_flow radius requirement row wrong:\n%s", sections[0][1])
	}
	if !strings.Contains(sections[2][1], `damping &gt;= 0.5</td>`) || !strings.Contains(sections[2][1], `class="missed">missed`) {
		t.Error("arm_wobble damping requirement not shown as missed")
	}
	if !strings.Contains(page, Caution) {
		t.Error("caution line missing")
	}
	// Self-contained: no remote resource of any kind.
	for _, bad := range []string{`src=`, `href="http`, `url(`, `@import`, `<script`, `<link`} {
		if strings.Contains(page, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	if strings.Contains(page, "<?xml") {
		t.Error("page carries an XML prolog inside HTML")
	}
}

func TestBadInputGivesErrors(t *testing.T) {
	res := checkFile(t, "testdata/blower.loop")
	good := loopNamed(t, res, "blower_speed")
	if _, err := LoopFigure(nil, good); err == nil {
		t.Error("nil result accepted")
	}
	if _, err := LoopFigure(res, nil); err == nil {
		t.Error("nil loop accepted")
	}
	if _, err := Page(nil); err == nil {
		t.Error("Page(nil) accepted")
	}
	bad := *good
	bad.OK = false
	if _, err := LoopSVG(res, &bad); err == nil {
		t.Error("loop that was not analysed accepted")
	}
	noT := *res
	noT.SampleT = 0
	if _, err := LoopPNG(&noT, good); err == nil {
		t.Error("zero sample period accepted")
	}
	for _, open := range []poly.Rational{
		{Num: poly.Poly{math.NaN()}, Den: poly.Poly{1, 1}},
		{Num: poly.Poly{1}, Den: poly.Poly{math.Inf(1), 1}},
		{Num: poly.Poly{1}, Den: nil},
	} {
		bad := *good
		bad.Open = open
		if _, err := LoopFigure(res, &bad); err == nil {
			t.Errorf("open loop %v accepted", open)
		}
	}
	// A loop that was not analysed still gets a section, without figure.
	r2 := *res
	r2.Loops = []*analysis.Loop{&bad}
	b, err := Page(&r2)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), "not analysed") || strings.Contains(string(b), "<svg") {
		t.Error("unanalysed loop shown wrongly")
	}
}

// A page draws at most MaxPageFigures loops and lists the rest, so its
// size stays bounded however many loops a file holds.
func TestPageSizeBounded(t *testing.T) {
	var b strings.Builder
	b.WriteString("sample 1 ms\nblock p = 0.5/(z - 0.5)\n")
	n := MaxPageFigures + 150
	for i := range n {
		fmt.Fprintf(&b, "loop l%d {\n  forward p\n}\n", i)
	}
	res := analysis.Check(context.Background(), "/p/many.loop", []byte(b.String()), analysis.Env{Roots: []string{"/p"}})
	page, err := Page(res)
	if err != nil {
		t.Fatal(err)
	}
	s := string(page)
	if got := strings.Count(s, "<svg"); got != MaxPageFigures {
		t.Errorf("%d figures, want %d", got, MaxPageFigures)
	}
	if got := strings.Count(s, `<section class="loop"`); got != n {
		t.Errorf("%d loop sections, want %d (every loop listed)", got, n)
	}
	if !strings.Contains(s, "--loop l"+fmt.Sprint(n-1)) {
		t.Error("a listed loop does not say how to plot it")
	}
	one, _ := Page(&analysis.Result{Path: res.Path, Loops: res.Loops[:1], SampleT: res.SampleT})
	if limit := (MaxPageFigures+1)*len(one) + n*1000; len(page) > limit {
		t.Errorf("page of %d loops is %d bytes, over %d", n, len(page), limit)
	}
}
