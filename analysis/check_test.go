package analysis

import (
	"context"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strings"
	"testing"
	"time"

	"ringside/syntax"
)

// checkSrc analyses src as the file main.loop in a temporary workspace,
// with extra files beside it.
func checkSrc(t *testing.T, src string, extra map[string]string) *Result {
	t.Helper()
	dir := t.TempDir()
	for name, body := range extra {
		p := filepath.Join(dir, filepath.FromSlash(name))
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	path := filepath.Join(dir, "main.loop")
	return Check(context.Background(), path, []byte(src), Env{Roots: []string{dir}})
}

func loopNamed(t *testing.T, r *Result, name string) *Loop {
	t.Helper()
	for _, l := range r.Loops {
		if l.Name == name {
			return l
		}
	}
	t.Fatalf("no loop %s; diagnostics: %v", name, r.Diagnostics)
	return nil
}

func gainNamed(t *testing.T, r *Result, name string) *Gain {
	t.Helper()
	for _, g := range r.Gains {
		if g.Name == name {
			return g
		}
	}
	t.Fatalf("no gain %s", name)
	return nil
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b)) }

// First-order loop K/(z − a), unity negative feedback: the characteristic
// polynomial is z − a + K, so the closed-loop pole is a − K and the loop is
// stable for a − 1 < K < a + 1 (direct derivation).
func TestFirstOrderLoop(t *testing.T) {
	r := checkSrc(t, "sample 1 ms\ngain k = 0.7\nblock p = 1 / (z - 0.9)\nloop l {\n  forward k p\n}\n", nil)
	l := loopNamed(t, r, "l")
	if !l.Stable || len(l.Poles) != 1 || !near(real(l.Poles[0].Z), 0.2, 1e-12) {
		t.Fatalf("poles %v stable %v, want one pole at 0.2", l.Poles, l.Stable)
	}
	g := gainNamed(t, r, "k")
	if g.Limits == nil || !g.Limits.Exact || g.Limits.StableMin == nil || g.Limits.StableMax == nil {
		t.Fatalf("limits %+v", g.Limits)
	}
	if !near(*g.Limits.StableMin, -0.1, 1e-9) || !near(*g.Limits.StableMax, 1.9, 1e-9) {
		t.Errorf("stable interval (%g, %g), want (-0.1, 1.9)", *g.Limits.StableMin, *g.Limits.StableMax)
	}
}

// ZOH of 1/(s(s + 1)) at T = 1 s with unity feedback and gain K: a worked
// example found in many digital-control texts (values from memory):
// G(z) = (0.3679 z + 0.2642) / ((z − 1)(z − 0.3679)); for K = 1 the
// closed-loop poles are 0.5 ± 0.6182j, and the loop is stable for
// 0 < K < 2.3925 (Jury: a0 = 0.3679 + 0.2642 K < 1).
func TestZOHWorkedExample(t *testing.T) {
	r := checkSrc(t, "sample 1 s\ngain k = 1\nblock g = 1 / (s(s + 1)) via zoh\nloop l {\n  forward k g\n}\n", nil)
	l := loopNamed(t, r, "l")
	if len(l.Poles) != 2 {
		t.Fatalf("poles %v", l.Poles)
	}
	want := complex(0.5, 0.6182)
	if d := cmplx.Abs(l.Poles[0].Z - want); d > 1e-4 {
		t.Errorf("pole %v, want %v (±1e-4: the published value has four decimals)", l.Poles[0].Z, want)
	}
	e := math.Exp(-1)
	kCrit := (1 - e) / (1 - 2*e) // a0 = e + (1 − 2e)K = 1
	g := gainNamed(t, r, "k")
	if g.Limits == nil || g.Limits.StableMax == nil || !near(*g.Limits.StableMax, kCrit, 1e-9) {
		t.Fatalf("stable max %+v, want %.6f", g.Limits, kCrit)
	}
	if g.Limits.StableMin == nil || math.Abs(*g.Limits.StableMin) > 1e-12 {
		t.Errorf("stable min %v, want 0 (the integrator opens the loop at K = 0)", g.Limits.StableMin)
	}
	// The published 2.3925 is 0.6321/0.2642, from coefficients rounded to
	// four decimals: agreement to 2e-4 is all it can give.
	if !near(kCrit, 2.3925, 2e-4) {
		t.Errorf("closed form gives %g, the published 2.3925", kCrit)
	}
}

// Integrator loop K·T/(z − 1): L(−1) = −KT/2, so the phase crosses −180° at
// Nyquist with gain margin 20·log10(2/(KT)); the closed-loop pole is 1 − KT
// (direct derivation).
func TestIntegratorMargin(t *testing.T) {
	r := checkSrc(t, "sample 10 ms\ngain k = 50\nblock integ = 0.01 / (z - 1)\nloop l {\n  forward k integ\n}\n", nil)
	l := loopNamed(t, r, "l")
	if !l.Stable || !near(real(l.Poles[0].Z), 0.5, 1e-12) {
		t.Fatalf("pole %v", l.Poles)
	}
	gm := l.Margins.GainMarginDB
	if gm == nil || !near(*gm, 20*math.Log10(2/0.5), 1e-9) {
		t.Fatalf("gain margin %v, want %g", gm, 20*math.Log10(4))
	}
	if hz := *l.Margins.PhaseCrossoverHz; !near(hz, 50, 1e-9) {
		t.Errorf("phase crossover %g Hz, want Nyquist 50 Hz", hz)
	}
	// A raise of the gain by the gain margin puts the pole at z = −1.
	safe := gainNamed(t, r, "k").Limits
	if safe.StableMax == nil || !near(*safe.StableMax, 200, 1e-9) {
		t.Errorf("stable max %v, want 200", safe.StableMax)
	}
	// Required 6 dB by default: 2/(KT) ≥ 10^(6/20) → K ≤ 200/1.9953.
	if safe.SafeMax == nil || !near(*safe.SafeMax, 200/math.Pow(10, 6.0/20), SafeMaxTolerance) {
		t.Errorf("safe max %v, want %g", safe.SafeMax, 200/math.Pow(10, 6.0/20))
	}
}

// Second-order Jury conditions (common practice): z² + a1·z + a0 is stable
// iff |a0| < 1 and |a1| < 1 + a0. Checked on a grid of coefficients, each
// closing a loop L = (z² + a1 z + a0 − z²)/z² … built as forward block.
func TestJurySecondOrder(t *testing.T) {
	for _, a1 := range []float64{-1.9, -1.2, -0.5, 0, 0.4, 1.1, 1.8} {
		for _, a0 := range []float64{-0.95, -0.3, 0.2, 0.7, 0.99, 1.05} {
			// Loop with forward (a1 z + a0)/z² closes to z² + a1 z + a0.
			src := "sample 1 ms\nblock f = (" + ftoa(a1) + "z + " + ftoa(a0) + ") / z^2\nloop l {\n  forward f\n}\n"
			r := checkSrc(t, src, nil)
			l := loopNamed(t, r, "l")
			want := math.Abs(a0) < 1 && math.Abs(a1) < 1+a0
			if l.Stable != want {
				t.Errorf("z² %+gz %+g: stable %v, Jury says %v (poles %v)", a1, a0, l.Stable, want, l.Poles)
			}
		}
	}
}

func ftoa(v float64) string { return FormatNumber(v) }

// Pole facts of the trade (common practice): z = e^{sT}, so a pole at
// radius r and angle θ has damping −ln r / sqrt(ln²r + θ²) and a time
// constant −T/ln r; a negative real pole alternates in sign.
func TestPoleFacts(t *testing.T) {
	r := checkSrc(t, "sample 1 ms\nblock p = 1 / ((z^2 - 1.6z + 0.8)(z + 0.5))\n", nil)
	b := r.Blocks[0]
	if len(b.Poles) != 3 {
		t.Fatalf("poles %v", b.Poles)
	}
	pair := b.Poles[0]
	rad, th := math.Sqrt(0.8), math.Atan2(0.4, 0.8)
	zeta := -math.Log(rad) / math.Hypot(math.Log(rad), th)
	if !near(pair.Radius, rad, 1e-12) || !near(pair.Damping, zeta, 1e-9) || !near(pair.TimeConstantS, -1e-3/math.Log(rad), 1e-9) {
		t.Errorf("pair %+v, want radius %g damping %g", pair, rad, zeta)
	}
	neg := b.Poles[2]
	if !neg.Alternating || neg.Oscillating || !strings.Contains(neg.ShapeText(), "alternat") {
		t.Errorf("pole at -0.5: %+v %q", neg, neg.ShapeText())
	}
}

// A pole exactly on the circle is not BIBO stable: a warning, not an error.
func TestMarginalLoop(t *testing.T) {
	r := checkSrc(t, "sample 1 ms\ngain k = 1.5\nblock p = 1 / (z - 0.5)\nloop l {\n  forward k p\n}\n", nil)
	l := loopNamed(t, r, "l")
	if l.Stable || !l.Marginal {
		t.Fatalf("stable %v marginal %v, want marginal", l.Stable, l.Marginal)
	}
	d := findDiag(r, CodePoleOnCircle)
	if d == nil || d.Severity != Warning {
		t.Fatalf("want a pole-on-circle warning, got %v", r.Diagnostics)
	}
}

func findDiag(r *Result, code string) *Diagnostic {
	for i := range r.Diagnostics {
		if r.Diagnostics[i].Code == code {
			return &r.Diagnostics[i]
		}
	}
	return nil
}

// A controller zero placed on an unstable plant pole hides it from L but
// not from the closed loop (internal stability).
func TestHiddenMode(t *testing.T) {
	r := checkSrc(t, "sample 1 ms\nblock plant = 0.1 / ((z - 1.2)(z - 0.5))\nblock ctrl = 2(z - 1.2) / (z - 0.1)\nloop l {\n  forward ctrl plant\n}\n", nil)
	l := loopNamed(t, r, "l")
	if l.Stable || len(l.Hidden) != 1 || l.Hidden[0].PoleBlock != "plant" || l.Hidden[0].ZeroBlock != "ctrl" {
		t.Fatalf("stable %v hidden %+v", l.Stable, l.Hidden)
	}
	d := findDiag(r, CodeHiddenMode)
	if d == nil || d.Severity != Error || len(d.Related) != 2 {
		t.Fatalf("hidden-mode diagnostic %+v", d)
	}
	found := false
	for _, p := range l.Poles {
		if cmplx.Abs(p.Z-1.2) < 1e-9 {
			found = true
		}
	}
	if !found {
		t.Errorf("closed-loop poles %v lack the hidden z = 1.2", l.Poles)
	}
}

// Every fix, applied, clears the diagnostic it is attached to.
func TestFixesClearTheirDiagnostic(t *testing.T) {
	cases := []struct{ name, src, code string }{
		{"set gain", "sample 1 ms\ngain k = 1.8 # tuned on site\nblock p = 1 / (z - 0.9)\nloop l {\n  forward k p\n  feedback d\n}\nblock d = z^-1\n", CodePoleOutside},
		{"margin", "sample 10 ms\ngain k = 150\nblock integ = 0.01 / (z - 1)\nloop l {\n  forward k integ\n  require gain_margin >= 6 dB\n}\n", CodeGainMarginLow},
		{"via", "sample 1 ms\nblock p = 5 / (s + 5)\nloop l {\n  forward p\n  feedback d\n}\nblock d = z^-1\n", CodeNoVia},
		{"sample", "block p = 5 / (s + 5) via zoh\n", CodeNoSample},
		{"sample after BOM", "\ufeffblock p = 5 / (s + 5) via zoh\n", CodeNoSample},
		{"flip sign in a CRLF file", "sample 1 ms\r\nblock p = -0.8 / (z - 0.5)\r\nloop l {\r\n  forward p\r\n}\r\n", CodePoleOutside},
		{"sample in a CR file", "block p = 5 / (s + 5) via zoh\rloop l {\r  forward p\r}\r", CodeNoSample},
		{"flip sign", "sample 1 ms\nblock p = 0.8 / (z - 0.5)\nloop l {\n  forward p\n  sign positive\n}\n", CodePoleOutside},
		{"sign", "sample 1 ms\nblock p = 0.5 / (z - 0.5)\nloop l {\n  forward p\n  sign negtive\n}\n", CodeBadSign},
		{"realize block", "sample 50 us\nblock n = (z^2 - 1.997776z + 0.998001)(z^2 - 1.996402z + 0.998001) / ((z^2 - 1.991776z + 0.992016)(z^2 - 1.984411z + 0.986049))\nrealize n as direct in q3.12\n", CodeRealizeUnstable},
		{"realize loop", "sample 50 us\nblock n = (z^2 - 1.997776z + 0.998001)(z^2 - 1.996402z + 0.998001) / ((z^2 - 1.991776z + 0.992016)(z^2 - 1.984411z + 0.986049))\nrealize n as direct in q3.12\nloop l {\n  forward n\n  feedback d\n  require gain_margin >= 6 dB\n}\nblock d = 0.001 / (z - 1)\n", CodeRealizeLoop},
		{"realize range", "sample 1 ms\nblock lp = 0.02 / (z^2 - 1.8z + 0.82)\nrealize lp as direct in q0.15\n", CodeRealizeRange},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := checkSrc(t, c.src, nil)
			d := findDiag(r, c.code)
			if d == nil {
				t.Fatalf("no %s diagnostic in %v", c.code, r.Diagnostics)
			}
			if len(d.Fixes) == 0 {
				t.Fatalf("%s has no fix", c.code)
			}
			for _, fx := range d.Fixes {
				out := applyEdits(c.src, fx.Edits)
				if strings.Contains(c.src, "\r\n") && strings.Count(out, "\n") != strings.Count(out, "\r\n") {
					t.Errorf("fix %q mixed line breaks into a CRLF file: %q", fx.Title, out)
				}
				if _, errs := syntax.Parse("", []byte(out)); len(errs) > 0 {
					t.Errorf("fix %q gave text that does not parse: %v\n%q", fx.Title, errs, out)
				}
				r2 := checkSrc(t, out, nil)
				if d2 := findDiag(r2, c.code); d2 != nil {
					t.Errorf("fix %q gave\n%s\nand %s remains: %s", fx.Title, out, c.code, d2.Message)
				}
				if strings.Contains(c.src, "# tuned on site") && !strings.Contains(out, "# tuned on site") {
					t.Errorf("fix %q lost the comment:\n%s", fx.Title, out)
				}
			}
		})
	}
}

func applyEdits(src string, edits []Edit) string {
	sorted := append([]Edit(nil), edits...)
	sort.Slice(sorted, func(i, j int) bool { return sorted[i].Span.From > sorted[j].Span.From })
	for _, e := range sorted {
		src = src[:e.Span.From] + e.NewText + src[e.Span.To:]
	}
	return src
}

// Diagnostic files: each `# want: code [code...]` comment names the codes
// expected on its own line; any other warning or error fails.
func TestDiagnosticFiles(t *testing.T) {
	files, _ := filepath.Glob("testdata/diag/*.loop")
	if len(files) == 0 {
		t.Fatal("no testdata/diag files")
	}
	wantRe := regexp.MustCompile(`#\s*want:\s*(.*)$`)
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			src, _ := os.ReadFile(f)
			abs, _ := filepath.Abs(f)
			r := Check(context.Background(), abs, src, Env{Roots: []string{filepath.Dir(abs)}})
			want := map[int][]string{}
			for i, line := range strings.Split(string(src), "\n") {
				if m := wantRe.FindStringSubmatch(line); m != nil {
					want[i+1] = strings.Fields(m[1])
				}
			}
			got := map[int][]string{}
			for _, d := range r.Diagnostics {
				if d.Severity == Info {
					continue
				}
				line, _ := r.File.Lines.LineCol(d.Span.From)
				got[line] = append(got[line], d.Code)
			}
			for line, codes := range want {
				for _, c := range codes {
					if !slices.Contains(got[line], c) {
						t.Errorf("line %d: want %s, got %v", line, c, got[line])
					}
				}
			}
			for line, codes := range got {
				for _, c := range codes {
					if !slices.Contains(want[line], c) {
						t.Errorf("line %d: unexpected %s (%s)", line, c, messageOf(r, line, c))
					}
				}
			}
		})
	}
}

func messageOf(r *Result, line int, code string) string {
	for _, d := range r.Diagnostics {
		if l, _ := r.File.Lines.LineCol(d.Span.From); l == line && d.Code == code {
			return d.Message
		}
	}
	return ""
}

// `use` cannot leave the workspace, by `..`, by absolute path or by link.
func TestUseConfinement(t *testing.T) {
	outside := t.TempDir()
	os.WriteFile(filepath.Join(outside, "secret.loop"), []byte("gain g = 1\n"), 0o644)
	dir := t.TempDir()
	os.Symlink(outside, filepath.Join(dir, "link"))
	for _, use := range []string{"../" + filepath.Base(outside) + "/secret.loop", outside + "/secret.loop", "link/secret.loop"} {
		src := "use \"" + use + "\"\n"
		r := Check(context.Background(), filepath.Join(dir, "main.loop"), []byte(src), Env{Roots: []string{dir}})
		if d := findDiag(r, CodeUseOutside); d == nil {
			t.Errorf("use %q: no %s diagnostic: %v", use, CodeUseOutside, r.Diagnostics)
		}
		if _, ok := r.Scope["g"]; ok {
			t.Errorf("use %q: the outside gain entered the scope", use)
		}
	}
}

func TestUseAcrossFiles(t *testing.T) {
	r := checkSrc(t, "use \"plants/p.loop\"\nsample 1 ms\ngain k = 0.5\nloop l {\n  forward k plant\n}\n",
		map[string]string{"plants/p.loop": "sample 1 ms\nblock plant = 0.2 / (z - 0.95)\n"})
	l := loopNamed(t, r, "l")
	if !l.OK || !l.Stable {
		t.Fatalf("loop %+v diagnostics %v", l, r.Diagnostics)
	}
	r = checkSrc(t, "use \"a.loop\"\n", map[string]string{"a.loop": "use \"main.loop\"\n"})
	if findDiag(r, CodeUseCycle) == nil {
		t.Errorf("no cycle diagnostic: %v", r.Diagnostics)
	}
}

// Step response of a first-order closed loop H = (1 − a)/(z − a) with a
// unit step: y[k] = 1 − a^k (direct solution of the difference equation):
// no overshoot, no steady-state error.
func TestStepFirstOrder(t *testing.T) {
	// forward 0.2/(z − 1) with unity feedback: char z − 0.8, H = 0.2/(z − 0.8).
	r := checkSrc(t, "sample 1 ms\nblock p = 0.2 / (z - 1)\nloop l {\n  forward p\n}\n", nil)
	l := loopNamed(t, r, "l")
	if l.Step == nil {
		t.Fatal("no step response")
	}
	for k, y := range l.Step.Samples[:20] {
		if want := 1 - math.Pow(0.8, float64(k)); !near(y, want, 1e-12) {
			t.Fatalf("y[%d] = %g, want %g", k, y, want)
		}
	}
	if l.Step.OvershootPct > 1e-9 || math.Abs(l.Step.SteadyStateError) > 1e-12 {
		t.Errorf("overshoot %g, steady-state error %g", l.Step.OvershootPct, l.Step.SteadyStateError)
	}
}

// Requirements in samples convert with the period.
func TestRequireUnits(t *testing.T) {
	r := checkSrc(t, "sample 1 ms\nblock p = 0.2 / (z - 1)\nloop l {\n  forward p\n  require settling <= 20 samples\n  require settling <= 30 ms\n  require peak_sensitivity <= 2\n}\n", nil)
	l := loopNamed(t, r, "l")
	if len(l.Requirements) != 3 {
		t.Fatalf("requirements %+v", l.Requirements)
	}
	// 2 % settling of 1 − 0.8^k: last k with 0.8^k > 0.02 is 17, so the
	// response stays in the band from sample 18 on: 18 ms.
	if l.Requirements[0].Met != true || !near(l.Requirements[0].Want, 0.02, 1e-12) {
		t.Errorf("settling in samples: %+v (settling %g s)", l.Requirements[0], l.Step.SettlingS)
	}
	if !near(l.Requirements[2].Want, 20*math.Log10(2), 1e-12) {
		t.Errorf("peak sensitivity ratio 2 = %g dB, want %g", l.Requirements[2].Want, 20*math.Log10(2))
	}
}

// The analysis never panics on hostile expressions and says why it stops.
func TestHostileExpressions(t *testing.T) {
	for _, src := range []string{
		"sample 1 ms\nblock a = 1e308 * 1e308 * z / (z - 1)\n",
		"sample 1 ms\nblock a = ((z - 1)^60)^60\n",
		"sample 1 ms\nblock a = 1 / (z - z)\n",
		"sample 1 ms\nblock a = 0^-1\n",
		"sample 0 ms\nblock a = 1/(s+1) via zoh\n",
		"sample 1 ms\nblock a = 1/(s+1e9) via zoh\nloop l {\n forward a\n}\n",
		"sample 1 ms\nblock a = (z-0.5)^64 / z^64\nblock b = a * a\nloop l {\n forward b\n}\n",
	} {
		r := checkSrc(t, src, nil)
		errs := 0
		for _, d := range r.Diagnostics {
			if d.Severity != Info {
				errs++
			}
		}
		if errs == 0 {
			t.Errorf("%q: no diagnostic", src)
		}
	}
}

// A time budget stops the analysis cleanly: loops left over are reported,
// none gets made-up figures.
func TestBudget(t *testing.T) {
	src := withDelay(corpus(200, 5))
	opt := DefaultOptions()
	opt.Budget = time.Millisecond
	r := Check(context.Background(), "/b/c.loop", []byte(src), Env{Roots: []string{"/b"}, Options: opt})
	stopped := 0
	for _, d := range r.Diagnostics {
		if d.Code == CodeNumeric && strings.Contains(d.Message, "stopped") {
			stopped++
		}
	}
	if stopped == 0 {
		t.Fatal("a 1 ms budget on 200 loops stopped nothing")
	}
	analysed := 0
	for _, l := range r.Loops {
		if l.OK {
			analysed++
		}
	}
	if analysed+stopped != 200 || len(r.Loops) != 200 {
		t.Errorf("%d analysed + %d stopped != 200 loops", analysed, stopped)
	}
	// A loop not reached is an error (the check must not pass) and its
	// verdict names the cause, not errors that do not exist.
	if !r.HasErrors() {
		t.Error("loops left without a verdict, yet the result has no error")
	}
	for _, l := range r.Loops {
		if !l.OK && !strings.Contains(l.Verdict(), "out of time") {
			t.Errorf("loop %s not reached: verdict %q", l.Name, l.Verdict())
		}
	}
}

// A loop using a gain and a block of another file gets fixes that edit
// that file.
func TestFixesInUsedFile(t *testing.T) {
	r := checkSrc(t, "use \"parts.loop\"\nsample 1 ms\nloop l {\n  forward k p\n  feedback d\n}\nblock d = z^-1\nloop m {\n  forward cont\n  feedback d\n}\n",
		map[string]string{"parts.loop": "gain k = 1.8\nblock p = 1 / (z - 0.9)\nblock cont = 5 / (s + 5)\n"})
	parts := filepath.Join(filepath.Dir(r.Path), "parts.loop")
	for _, code := range []string{CodePoleOutside, CodeNoVia} {
		d := findDiag(r, code)
		if d == nil || len(d.Fixes) == 0 {
			t.Fatalf("%s: no diagnostic or no fix: %+v", code, d)
		}
		if e := d.Fixes[0].Edits[0]; e.Path != parts {
			t.Errorf("%s fix edits %s, want %s", code, e.Path, parts)
		}
	}
}
