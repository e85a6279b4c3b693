package analysis

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ringside/analysis/internal/scipyref"
	"ringside/analysis/poly"
)

// The structure cross-check runs testdata/crosscheck/structure_ref.py on
// loops from the families where one expanded characteristic polynomial
// fails (long cascades, slow sampling, lightly damped modes, long delays,
// multiple poles inside and on the circle, cancelled modes). Its primary
// reference is the largest root of the characteristic polynomial formed
// exactly in 60-digit arithmetic and solved by mpmath.polyroots; the
// second, independent one is numpy's eigenvalues of a state-space model
// built with scipy. The loops are written here as .loop text and checked
// by Check, end to end.

type refBlock struct {
	Num   []float64    `json:"num,omitempty"`
	Den   []float64    `json:"den,omitempty"`
	Lags  []float64    `json:"lags,omitempty"`
	Modes [][2]float64 `json:"modes,omitempty"`
	Gain  float64      `json:"gain,omitempty"`
	expr  string       // the block's expression in the .loop file (default: from Num, Den)
}

type refCase struct {
	Name      string              `json:"name"`
	T         float64             `json:"T"`
	Positive  bool                `json:"positive,omitempty"`
	Blocks    map[string]refBlock `json:"blocks"`
	Forward   []string            `json:"forward"`
	Feedback  []string            `json:"feedback"`
	MarginsOf *refBlock           `json:"margins_of,omitempty"`
	Exact     *float64            `json:"exact_radius,omitempty"` // known by construction
	GMBlocks  bool                `json:"gm_blocks,omitempty"`    // reference gain margin of the loop's own L
	order     []string            // block declaration order
}

type refResult struct {
	Name        string   `json:"name"`
	RadiusMP    float64  `json:"radius_mp"`
	RadiusMPErr float64  `json:"radius_mp_err"`
	RadiusSS    float64  `json:"radius_ss"`
	GMDB        *float64 `json:"gm_db"`
	GMHz        *float64 `json:"gm_hz"`
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// ident turns a number into name characters (1e-30 → 1em30, 0.5 → 0p5).
func ident(v float64) string {
	return strings.NewReplacer(".", "p", "-", "m", "+", "").Replace(num(v))
}

// polyText writes p (lowest power first) as a sum of terms in z.
func polyText(p []float64) string {
	var terms []string
	for i, c := range p {
		if c == 0 {
			continue
		}
		switch i {
		case 0:
			terms = append(terms, num(c))
		case 1:
			terms = append(terms, num(c)+"*z")
		default:
			terms = append(terms, fmt.Sprintf("%s*z^%d", num(c), i))
		}
	}
	if len(terms) == 0 {
		return "0"
	}
	return "(" + strings.ReplaceAll(strings.Join(terms, " + "), "+ -", "- ") + ")"
}

func (c *refCase) add(name string, b refBlock) {
	if c.Blocks == nil {
		c.Blocks = map[string]refBlock{}
	}
	c.Blocks[name] = b
	c.order = append(c.order, name)
}

func (c *refCase) source() string {
	var b strings.Builder
	fmt.Fprintf(&b, "sample %s s\n", num(c.T))
	for _, name := range c.order {
		bl := c.Blocks[name]
		switch {
		case bl.expr != "":
			fmt.Fprintf(&b, "block %s = %s\n", name, bl.expr)
		case bl.Num != nil:
			fmt.Fprintf(&b, "block %s = %s / %s\n", name, polyText(bl.Num), polyText(bl.Den))
		default:
			var fs []string
			for _, tau := range bl.Lags {
				fs = append(fs, fmt.Sprintf("(%s s + 1)", num(tau)))
			}
			for _, m := range bl.Modes {
				fs = append(fs, fmt.Sprintf("(s^2 + %s s + %s)", num(2*m[1]*m[0]), num(m[0]*m[0])))
			}
			g := bl.Gain
			for _, m := range bl.Modes {
				g *= m[0] * m[0]
			}
			fmt.Fprintf(&b, "block %s = %s / (%s) via zoh\n", name, num(g), strings.Join(fs, ""))
		}
	}
	fmt.Fprintf(&b, "loop %s {\n  forward %s\n", c.Name, strings.Join(c.Forward, " "))
	if len(c.Feedback) > 0 {
		fmt.Fprintf(&b, "  feedback %s\n", strings.Join(c.Feedback, " "))
	}
	if c.Positive {
		b.WriteString("  sign positive\n")
	}
	b.WriteString("}\n")
	return b.String()
}

func zblock(num, den []float64) refBlock { return refBlock{Num: num, Den: den} }

// lagZ is (1 − a)/(z − a): unit DC gain, |·| ≤ 1 on the circle for 0 < a < 1.
func lagZ(a float64) refBlock { return zblock([]float64{1 - a}, []float64{-a, 1}) }

// structureCases builds the families.
func structureCases() []refCase {
	var cs []refCase
	// Furnace: ten first-order lags (time constants 30…300 s) behind a PI
	// controller, sampled every 2 s.
	for _, kp := range []float64{0.35, 0.6, 0.9} {
		c := refCase{Name: fmt.Sprintf("furnace_kp%s", ident(kp)), T: 2, GMBlocks: true}
		taus := []float64{30, 45, 60, 80, 100, 130, 160, 200, 250, 300}
		ti := 900.0
		c.add("pi", zblock([]float64{-kp, kp + kp*c.T/ti}, []float64{-1, 1}))
		c.Forward = append(c.Forward, "pi")
		for i, tau := range taus {
			n := fmt.Sprintf("lag%d", i)
			c.add(n, refBlock{Lags: []float64{tau}, Gain: 1})
			c.Forward = append(c.Forward, n)
		}
		cs = append(cs, c)
	}
	// The conveyor demo (testdata/demo/conveyor.loop): PI at 1 kHz, the
	// ZOH of 40/(s² + 9s + 40), one sample of measurement delay. Its poles
	// moved by ~1e-11 when the integrator became exact; the 50-digit
	// reference decides which figures are right.
	{
		c := refCase{Name: "conveyor_demo", T: 1e-3, GMBlocks: true}
		c.add("pi_ctrl", zblock([]float64{-0.8, 0.8 + 5*0.001}, []float64{-1, 1}))
		c.add("belt", refBlock{Modes: [][2]float64{{math.Sqrt(40), 9 / (2 * math.Sqrt(40))}}, Gain: 1})
		c.add("enc", refBlock{Num: []float64{1}, Den: []float64{0, 1}, expr: "z^-1"})
		c.Forward, c.Feedback = []string{"pi_ctrl", "belt"}, []string{"enc"}
		cs = append(cs, c)
	}
	// Forty identical lags 1/(z − 0.5) and a small gain, as forty blocks and
	// as one factor raised to the 40th power.
	for _, k := range []float64{1e-30, 1e-11} {
		c := refCase{Name: fmt.Sprintf("forty_blocks_%s", ident(k)), T: 1e-3}
		// Closed form: (z − 0.5)^40 = −k puts the roots at
		// 0.5 + k^(1/40)·e^{j(2i+1)π/40}, the largest modulus at i = 0.
		exact := cmplx.Abs(0.5 + complex(math.Pow(k, 1.0/40), 0)*cmplx.Rect(1, math.Pi/40))
		c.Exact = &exact
		c.add("k", zblock([]float64{k}, []float64{1}))
		c.add("lag", zblock([]float64{1}, []float64{-0.5, 1}))
		c.Forward = []string{"k"}
		for i := 0; i < 40; i++ {
			c.Forward = append(c.Forward, "lag")
		}
		cs = append(cs, c)
		d := refCase{Name: fmt.Sprintf("forty_power_%s", ident(k)), T: 1e-3, Exact: &exact}
		den := poly.New(-0.5, 1).Pow(40)
		d.add("p", refBlock{Num: []float64{k}, Den: den, expr: num(k) + " / (z - 0.5)^40"})
		d.Forward = []string{"p"}
		cs = append(cs, d)
	}
	// 32nd order with |L| ≤ 0.3 on the circle: 0.3 times 32 unit-DC lags
	// (each of modulus ≤ 1 there), stable by the small-gain theorem.
	{
		c := refCase{Name: "order32_small_gain", T: 1e-3}
		c.add("g", zblock([]float64{0.3}, []float64{1}))
		c.Forward = []string{"g"}
		for i := 0; i < 32; i++ {
			n := fmt.Sprintf("l%d", i)
			c.add(n, lagZ(0.05+0.9*float64(i)/31))
			c.Forward = append(c.Forward, n)
		}
		cs = append(cs, c)
	}
	// Flexible modes with damping down to 0.005 behind a lag and a small
	// integral controller, at 1 kHz.
	for _, zeta := range []float64{0.005, 0.02} {
		c := refCase{Name: fmt.Sprintf("flexible_zeta%s", ident(zeta)), T: 1e-3}
		c.add("ctrl", zblock([]float64{0, 0.02}, []float64{-1, 1}))
		c.add("m1", refBlock{Modes: [][2]float64{{2 * math.Pi * 40, zeta}}, Gain: 1})
		c.add("m2", refBlock{Modes: [][2]float64{{2 * math.Pi * 95, 2 * zeta}}, Gain: 1})
		c.add("m3", refBlock{Modes: [][2]float64{{2 * math.Pi * 210, zeta}}, Gain: 1})
		c.add("act", refBlock{Lags: []float64{0.01}, Gain: 1})
		c.Forward = []string{"ctrl", "act", "m1", "m2", "m3"}
		cs = append(cs, c)
	}
	// Order 30 with a fifty-sample delay in the feedback path: many phase
	// crossings.
	for _, g := range []float64{0.2, 0.6} {
		c := refCase{Name: fmt.Sprintf("order30_delay50_g%s", ident(g)), T: 1e-3, GMBlocks: true}
		c.add("g", zblock([]float64{g}, []float64{1}))
		c.Forward = []string{"g"}
		for i := 0; i < 20; i++ {
			n := fmt.Sprintf("l%d", i)
			c.add(n, lagZ(0.3+0.6*float64(i)/19))
			c.Forward = append(c.Forward, n)
		}
		for i := 0; i < 5; i++ {
			r, th := 0.97-0.01*float64(i), 0.3+0.4*float64(i)
			p := complex(r*math.Cos(th), r*math.Sin(th))
			den := []float64{real(p)*real(p) + imag(p)*imag(p), -2 * real(p), 1}
			n := fmt.Sprintf("r%d", i)
			c.add(n, zblock([]float64{den[0] + den[1] + den[2]}, den))
			c.Forward = append(c.Forward, n)
		}
		c.add("delay", refBlock{Num: []float64{1}, Den: poly.Monomial(1, 50), expr: "z^-50"})
		c.Feedback = []string{"delay"}
		cs = append(cs, c)
	}
	// Multiple closed-loop poles: L = N/z^(m+1) with N = (z − a)^m (z − 1/4) − z^(m+1),
	// so that 1 + L = 0 is (z − a)^m (z − 1/4) = 0 exactly (binary coefficients).
	for m := 2; m <= 5; m++ {
		for _, a := range []float64{0.5, 1, -1} {
			c := refCase{Name: fmt.Sprintf("multiple%d_at_%s", m, ident(a)), T: 1e-3}
			p := poly.New(-a, 1).Pow(m).Mul(poly.New(-0.25, 1))
			n := p.Sub(poly.Monomial(1, m+1))
			c.add("n", zblock(n, poly.Monomial(1, m+1)))
			c.Forward = []string{"n"}
			c.Exact = ptrTo(math.Max(math.Abs(a), 0.25))
			cs = append(cs, c)
		}
	}
	// Cancelled modes: a plant pole cancelled by a controller zero, stable
	// (0.9), on the circle (1) and outside (1.2).
	for _, p := range []float64{0.9, 1, 1.2} {
		c := refCase{Name: fmt.Sprintf("cancelled_%s", ident(p)), T: 1e-3}
		c.add("plant", refBlock{Num: []float64{0.05}, Den: poly.New(-p, 1).Mul(poly.New(-0.8, 1)),
			expr: fmt.Sprintf("0.05 / ((z - %s)(z - 0.8))", num(p))})
		c.add("ctrl", refBlock{Num: poly.New(-p, 1).Scale(0.5), Den: []float64{-0.3, 1},
			expr: fmt.Sprintf("0.5(z - %s) / (z - 0.3)", num(p))})
		c.Forward = []string{"ctrl", "plant"}
		c.MarginsOf = &refBlock{Num: []float64{0.025}, Den: poly.New(-0.8, 1).Mul(poly.New(-0.3, 1))}
		cs = append(cs, c)
	}
	// A block whose denominator has a conjugate pair beside a triple real
	// root: 0.5 ± 0.9j and 0.5 (three times), expanded. Root clustering must
	// keep the pair apart from the triple root (it once merged them and
	// called an unstable loop stable).
	pair := refCase{Name: "pair_beside_triple", T: 1e-3}
	pair.add("p", zblock([]float64{0.001}, []float64{-0.1325, 0.92, -2.465, 3.31, -2.5, 1}))
	pair.Forward = []string{"p"}
	cs = append(cs, pair)
	return cs
}

// twoBlockCase is L = k·(z − 0.5)/(z − 1) · k·0.1/(z − 0.9) at k = 1: the
// gain appears in two blocks, so L = k²·G and the characteristic
// polynomial is not affine in k.
func twoBlockCase() refCase {
	c := refCase{Name: "two_block_gain", T: 1e-3, GMBlocks: true}
	c.add("c", zblock([]float64{-0.5, 1}, []float64{-1, 1}))
	c.add("p", zblock([]float64{0.1}, []float64{-0.9, 1}))
	c.Forward = []string{"c", "p"}
	return c
}

// TestIsolatedUnstableGain: with the gain in two blocks, L = k²·G, so the
// loop is stable for 0 < |k| < k_max with k_max = 10^(GM_G/40) (GM_G the
// gain margin of G, numpy reference) — and unstable at k = 0 itself, where
// the integrator 1/(z − 1) is left on the circle: the interval around
// k = 0.5 is (0, k_max), not (−k_max, k_max).
func TestIsolatedUnstableGain(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the python reference")
	}
	c := twoBlockCase()
	r := runStructureRef(t, []refCase{c})[c.Name]
	if r.GMDB == nil {
		t.Fatal("no reference gain margin")
	}
	kmax := math.Pow(10, *r.GMDB/40)
	res := checkSrc(t, "sample 1 ms\ngain k = 0.5\nblock c = k * (z - 0.5) / (z - 1)\nblock p = k * 0.1 / (z - 0.9)\nloop two_block_gain {\n  forward c p\n}\n", nil)
	g := gainNamed(t, res, "k")
	lim := g.Limits
	if lim == nil || lim.StableMin == nil || lim.StableMax == nil || !lim.CurrentStable {
		t.Fatalf("limits %+v", lim)
	}
	if *lim.StableMin != 0 || math.Abs(*lim.StableMax-kmax) > 1e-6*kmax {
		t.Errorf("stable interval (%g, %g), want (0, %.9g)", *lim.StableMin, *lim.StableMax, kmax)
	}
}

func runStructureRef(t *testing.T, cases []refCase) map[string]refResult {
	t.Helper()
	py := scipyref.Python(t)
	if exec.Command(py, "-c", "import mpmath").Run() != nil && exec.Command("/usr/bin/python3", "-c", "import numpy, scipy, mpmath").Run() == nil {
		py = "/usr/bin/python3" // Debian's, with python3-mpmath
	}
	if p := os.Getenv("RINGSIDE_DUMP_REF"); p != "" {
		b, _ := json.Marshal(cases)
		os.WriteFile(p, b, 0o644) // for running the script by hand
	}
	var doc struct{ Cases []refResult }
	scipyref.RunJSONFiles(t, py, filepath.Join("..", "testdata", "crosscheck", "structure_ref.py"), cases, &doc, func(output []byte) {
		if strings.Contains(string(output), "No module named 'mpmath'") && os.Getenv("RINGSIDE_REQUIRE_SCIPY") != "1" {
			t.Skipf("%s has no mpmath (Debian python3-mpmath)", py)
		}
	})
	res := map[string]refResult{}
	for _, r := range doc.Cases {
		res[r.Name] = r
	}
	return res
}

// TestStructureCrossCheck: every verdict is right or explicitly undecided,
// and every decided largest radius lies within its bound of the 60-digit
// reference.
func TestStructureCrossCheck(t *testing.T) {
	if testing.Short() {
		t.Skip("mpmath references take a few seconds")
	}
	cases := structureCases()
	ref := runStructureRef(t, cases)
	tol := DefaultTolerance
	for _, c := range cases {
		r, ok := ref[c.Name]
		if !ok {
			t.Fatalf("%s: no reference", c.Name)
		}
		if d := os.Getenv("RINGSIDE_DUMP_LOOPS"); d != "" {
			os.WriteFile(filepath.Join(d, c.Name+".loop"), []byte(c.source()), 0o644) // for the README's old/new table
		}
		res := checkSrc(t, c.source(), nil)
		l := loopNamed(t, res, c.Name)
		if !l.OK {
			t.Errorf("%s: not analysed: %v", c.Name, res.Diagnostics)
			continue
		}
		want := "stable"
		switch {
		case r.RadiusMP > 1+tol:
			want = "unstable"
		case r.RadiusMP >= 1-tol:
			want = "marginal"
		}
		got := verdictWord(l)
		t.Logf("%-26s order %3d  radius %.12f ± %.2g  mp %.12f (err %.1g, ours off by %.1g)  numpy ss %.12f  verdict %s  GM %s dB (ref %s)",
			c.Name, len(l.Poles), l.MaxRadius, l.PoleBounds[0], r.RadiusMP, r.RadiusMPErr, math.Abs(l.MaxRadius-r.RadiusMP), r.RadiusSS, got, ptrStr(l.Margins.GainMarginDB), ptrStr(r.GMDB))
		if got == "undecided" {
			// Allowed where the eigenvalues cannot separate a five-fold
			// pole from its neighbours; elsewhere a decided verdict is due.
			if !strings.HasPrefix(c.Name, "multiple5_") {
				t.Errorf("%s: undecided", c.Name)
			}
			continue
		}
		if got != want {
			t.Errorf("%s: verdict %s, 60-digit reference radius %.15f says %s", c.Name, got, r.RadiusMP, want)
		}
		if d := math.Abs(l.MaxRadius - r.RadiusMP); d > l.PoleBounds[0]+1e-12 {
			t.Errorf("%s: largest radius %.15f, reference %.15f: off by %.3g, beyond the bound %.3g", c.Name, l.MaxRadius, r.RadiusMP, d, l.PoleBounds[0])
		}
		if r.GMDB != nil {
			m := l.Margins
			if m.GainMarginDB == nil || math.Abs(*m.GainMarginDB-*r.GMDB) > 1e-6 || math.Abs(*m.PhaseCrossoverHz-*r.GMHz) > 1e-6**r.GMHz {
				t.Errorf("%s: gain margin %v at %v Hz, reference (cancelled L) %.9g dB at %.9g Hz", c.Name, ptrStr(m.GainMarginDB), ptrStr(m.PhaseCrossoverHz), *r.GMDB, *r.GMHz)
			}
		}
	}
}

func ptrTo(v float64) *float64 { return &v }

func verdictWord(l *Loop) string {
	switch {
	case l.Undecided:
		return "undecided"
	case l.Stable:
		return "stable"
	case l.Marginal:
		return "marginal"
	}
	return "unstable"
}

func ptrStr(p *float64) string {
	if p == nil {
		return "nil"
	}
	return fmt.Sprint(*p)
}

// TestTriplePoleBlock: a block written 0.002/(z − 1)^3 has a triple pole
// exactly at z = 1 (read from the factor as written, no root finding), so
// it is "on the circle", never "outside"; closed around unity feedback,
// (z − 1)^3 + 0.002 = 0 puts the poles at 1 + 0.002^(1/3)·e^{j(2i+1)π/3}
// (closed form): radius |1 + 0.126·e^{jπ/3}| ≈ 1.069, unstable.
func TestTriplePoleBlock(t *testing.T) {
	res := checkSrc(t, "sample 1 ms\nblock tri = 0.002 / (z - 1)^3\nloop t {\n  forward tri\n}\n", nil)
	for _, d := range res.Diagnostics {
		if d.Code == CodeBlockOutside {
			t.Errorf("block reported outside the circle: %s", d.Message)
		}
	}
	found := false
	for _, d := range res.Diagnostics {
		found = found || d.Code == CodeBlockOnCircle
	}
	if !found {
		t.Error("no block-pole-on-circle diagnostic")
	}
	b := res.Blocks[0]
	for _, p := range b.Poles {
		if p.Z != 1 {
			t.Errorf("block pole %v, want exactly 1", p.Z)
		}
	}
	l := loopNamed(t, res, "t")
	want := cmplx.Abs(1 + complex(math.Cbrt(0.002), 0)*cmplx.Rect(1, math.Pi/3))
	if l.Stable || l.Marginal || l.Undecided || math.Abs(l.MaxRadius-want) > l.PoleBounds[0]+1e-12 {
		t.Errorf("loop radius %.15f ± %.2g (want %.15f), stable %v marginal %v undecided %v", l.MaxRadius, l.PoleBounds[0], want, l.Stable, l.Marginal, l.Undecided)
	}
}
