package server

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/analysis/columns"
	"ringside/analysis/freq"
	"ringside/analysis/pole"
	"ringside/analysis/poly"
)

// hover describes the block, loop or gain under the cursor in compact
// markdown; anything else (blank, comment, keyword, number) gets null.
func (s *Server) hover(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.TextDocumentPositionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, path, m, _, pos, err := s.docPosition(ctx, p)
	if err != nil {
		return nil, err
	}
	async(ctx)
	// Blocks need no loop numerics: the quick result does, unless the full
	// one is there or on its way (check then waits for it). Blocks of used
	// files are analysed in the same pass.
	res, err := sn.check(ctx, path, false)
	if err != nil {
		return nil, err
	}
	if rs := realizeAt(res, pos); rs != nil && rs.Block != nil {
		r, err := m.SpanRange(rs.Span)
		if err != nil {
			return nil, err
		}
		return protocol.Hover{Contents: protocol.MarkupContent{Kind: "markdown", Value: realizeHover(res, rs)}, Range: &r}, nil
	}
	t := resolveAt(res, pos)
	if t == nil {
		return nil, nil
	}
	var md string
	if t.decl != nil && t.decl.Block != nil {
		md = blockHover(t.decl.Block, res.SampleT) + realizedBlockText(t.decl.Block)
	} else {
		full, err := sn.check(ctx, path, true)
		if err != nil {
			return nil, err
		}
		t = resolveAt(full, pos)
		if t == nil {
			return nil, nil
		}
		switch {
		case t.loop != nil:
			md = loopHover(t.loop) + realizedLoopText(t.loop)
		case t.lstmt != nil:
			md = fmt.Sprintf("**loop %s**: not analysed", t.name)
		case t.decl != nil && t.decl.Gain != nil:
			md = gainHover(t.decl.Gain, full)
		default:
			return nil, nil
		}
	}
	r, err := m.SpanRange(t.span)
	if err != nil {
		return nil, err
	}
	return protocol.Hover{Contents: protocol.MarkupContent{Kind: "markdown", Value: md}, Range: &r}, nil
}

// blockHover: the z transfer function, its poles and zeros, DC gain.
func blockHover(b *analysis.Block, T float64) string {
	var w strings.Builder
	fmt.Fprintf(&w, "**block %s**", b.Name)
	switch {
	case b.Var == 's' && b.Method != 0:
		fmt.Fprintf(&w, " — continuous, discretized by %s", b.Method.Title())
		if b.PrewarpHz > 0 {
			fmt.Fprintf(&w, " prewarped at %s", analysis.FormatHz(b.PrewarpHz))
		}
		if T > 0 {
			fmt.Fprintf(&w, " at T = %s", analysis.FormatTime(T))
		}
	case b.Var == 's':
		w.WriteString(" — continuous, not discretized (no `via`)")
	case b.Var == 0:
		w.WriteString(" — static gain")
	default:
		w.WriteString(" — discrete")
	}
	w.WriteString("\n\n")
	if b.Var == 's' {
		fmt.Fprintf(&w, "```\nH(s) = %s\n```\n", rationalText(b.Cont, "s"))
	}
	if !b.OK {
		w.WriteString("No discrete transfer function (see the diagnostics).\n")
		return w.String()
	}
	fmt.Fprintf(&w, "```\nH(z) = %s\n```\n", rationalText(b.TF, "z"))
	if len(b.Poles) > 0 {
		w.WriteString("\n" + poleTable("pole", b.Poles))
	}
	if len(b.Zeros) > 0 {
		w.WriteString("\n" + zeroTable(b.Zeros, T))
	}
	fmt.Fprintf(&w, "\nDC gain H(1) = %s\n", dcText(b.DCGain))
	return w.String()
}

func dcText(v float64) string {
	if math.IsInf(v, 0) {
		return "∞ (pole at z = 1)"
	}
	db := ""
	if v != 0 && !math.IsNaN(v) {
		d := 20 * math.Log10(math.Abs(v))
		if math.Abs(d) < 5e-4 { // rounding of a unit DC gain, not a figure
			d = 0
		}
		db = fmt.Sprintf(" (%.3g dB)", d)
	}
	return analysis.FormatNumber(v) + db
}

// Tables in hovers are aligned columns in a fenced block: they read the
// same rendered and as plain text (clients without Markdown tables show
// `|---|` rows raw).
func fenced(rows [][]string) string {
	return "```\n" + strings.Join(columns.Text(rows), "\n") + "\n```\n"
}

// poleTable lists poles with radius, angle, damping ratio, natural
// frequency, time constant and mode shape. A conjugate pair is one row (its
// upper member).
func poleTable(what string, ps []pole.Info) string {
	rows := [][]string{{what, "radius", "angle", "ζ", "ωn", "τ", "mode"}}
	for _, p := range ps {
		if imag(p.Z) < 0 {
			continue
		}
		rows = append(rows, []string{analysis.FormatComplex(p.Z), analysis.FormatRadius(p.Radius), angleText(p.AngleRad),
			floatText(p.Damping, "%.3g"), naturalText(p.NaturalRadS), tauText(p), shapeText(p)})
	}
	return fenced(rows)
}

// zeroTable lists zeros with what a zero's place means: radius, angle, the
// frequency it sits at, and its side of the unit circle (a zero has no
// mode, damping or time constant).
func zeroTable(zs []pole.Info, T float64) string {
	rows := [][]string{{"zero", "radius", "angle", "frequency", "where"}}
	for _, z := range zs {
		if imag(z.Z) < 0 {
			continue
		}
		rows = append(rows, []string{analysis.FormatComplex(z.Z), analysis.FormatRadius(z.Radius), angleText(z.AngleRad),
			zeroFreq(z.AngleRad, T), zeroSide(z)})
	}
	return fenced(rows)
}

func zeroFreq(rad, T float64) string {
	if math.IsNaN(rad) || T <= 0 {
		return "—"
	}
	return analysis.FormatHz(math.Abs(rad) / (2 * math.Pi * T))
}

// zeroSide says what the zero's radius means: inside the circle it is
// minimum-phase; outside, the step response first moves the wrong way and
// the zero limits the achievable bandwidth; on the circle it blocks a
// sinusoid at its frequency entirely.
func zeroSide(z pole.Info) string {
	switch d := z.Radius - 1; {
	case z.Radius == 0:
		return "at the origin (a one-sample advance against the poles)"
	case math.Abs(d) <= analysis.DefaultTolerance:
		return "on the circle: blocks that frequency"
	case d > 0:
		return "outside the circle (non-minimum-phase)"
	}
	return "inside (minimum-phase)"
}

func angleText(rad float64) string {
	if math.IsNaN(rad) {
		return "—"
	}
	return fmt.Sprintf("%.3g°", math.Abs(rad)*180/math.Pi)
}

func floatText(v float64, f string) string {
	if math.IsNaN(v) {
		return "—"
	}
	if math.IsInf(v, 0) {
		return "∞"
	}
	return fmt.Sprintf(f, v)
}

func naturalText(radS float64) string {
	if math.IsNaN(radS) {
		return "—"
	}
	if math.IsInf(radS, 0) {
		return "∞"
	}
	return analysis.FormatHz(radS/(2*math.Pi)) + fmt.Sprintf(" (%.3g rad/s)", radS)
}

func tauText(p pole.Info) string {
	t := p.TimeConstantS
	switch {
	case math.IsNaN(t):
		return "—"
	case math.IsInf(t, 0):
		return "∞"
	case t < 0:
		return "grows ×e in " + analysis.FormatTime(-t)
	}
	return analysis.FormatTime(t)
}

func shapeText(p pole.Info) string {
	s := p.Shape.String()
	switch {
	case p.Oscillating:
		s += ", oscillating"
	case p.Alternating:
		s += ", alternating sign"
	}
	return s
}

// rationalText prints num/den in descending powers of v.
func rationalText(r poly.Rational, v string) string {
	num, den := polyText(r.Num, v), polyText(r.Den, v)
	if den == "1" {
		return num
	}
	return paren(num, r.Num) + " / " + paren(den, r.Den)
}

func paren(s string, p poly.Poly) string {
	if len(p.Trim()) <= 1 || !strings.ContainsAny(s, "+-") || strings.Count(s, " ") == 0 {
		return s
	}
	return "(" + s + ")"
}

// polyText prints a polynomial (ascending coefficients) in descending
// powers, four significant figures.
func polyText(p poly.Poly, v string) string {
	p = p.Trim()
	if len(p) == 0 {
		return "0"
	}
	var w strings.Builder
	first := true
	for k := len(p) - 1; k >= 0; k-- {
		c := p[k]
		if c == 0 {
			continue
		}
		mag := math.Abs(c)
		switch {
		case first && c < 0:
			w.WriteString("-")
		case !first && c < 0:
			w.WriteString(" - ")
		case !first:
			w.WriteString(" + ")
		}
		first = false
		coef := fmt.Sprintf("%.4g", mag)
		switch {
		case k == 0:
			w.WriteString(coef)
		case coef == "1":
			w.WriteString(power(v, k))
		default:
			w.WriteString(coef + " " + power(v, k))
		}
	}
	return w.String()
}

func power(v string, k int) string {
	if k == 1 {
		return v
	}
	return fmt.Sprintf("%s^%d", v, k)
}

// loopHover: closed-loop poles, verdict, margins, sensitivity, step
// figures and the requirements met or missed.
func loopHover(l *analysis.Loop) string {
	var w strings.Builder
	fmt.Fprintf(&w, "**loop %s**: %s\n\n", l.Name, verdictWords(l))
	if !l.OK {
		return w.String()
	}
	if len(l.Poles) > 0 {
		w.WriteString(poleTable("closed-loop pole", l.Poles) + "\n")
	}
	w.WriteString(fenced(marginRows(l.Margins)))
	if l.Disk != nil {
		fmt.Fprintf(&w, "\nDisk margin: %s.\n", l.Disk.Text())
	}
	if st := l.Step; st != nil {
		fmt.Fprintf(&w, "\nStep: overshoot %s", analysis.FormatMetric("overshoot", st.OvershootPct))
		if st.Settled {
			fmt.Fprintf(&w, ", settling %s (2 %% band)", analysis.FormatTime(st.SettlingS))
		} else {
			w.WriteString(", not settled within the simulated horizon")
		}
		w.WriteString("\n")
	} else if l.Undecided {
		w.WriteString("\nStep: none (stability undecided: no response is shown for a loop not shown stable)\n")
	} else if !l.Stable {
		w.WriteString("\nStep: none (the loop is not stable)\n")
	}
	if l.Robust != nil {
		w.WriteString("\n" + strings.Join(l.Robust.Lines(), "\n\n") + "\n")
	}
	for _, h := range l.Hidden {
		fmt.Fprintf(&w, "\nHidden mode: pole %s of %s cancelled by a zero of %s\n", analysis.FormatComplex(h.Pole), h.PoleBlock, h.ZeroBlock)
	}
	if len(l.Requirements) > 0 {
		w.WriteString("\n")
		for _, q := range l.Requirements {
			mark, word := "✓", "met"
			if !q.Met {
				mark, word = "✗", "missed"
			}
			src := ""
			if q.Item == nil {
				src = " (default)"
			}
			got := q.GotText
			if got == "" {
				got = "no figure"
			}
			fmt.Fprintf(&w, "- %s %s %s %s %s%s: %s, got %s\n", mark, q.Metric, q.Op, analysis.FormatNumber(q.Want), q.Unit, src, word, got)
		}
	}
	return w.String()
}

// marginRows is the margins table: margin, value, frequency.
func marginRows(m freq.Margins) [][]string {
	rows := [][]string{{"margin", "value", "at"}}
	if m.GainMarginDB != nil {
		rows = append(rows, []string{"gain", analysis.FormatMetric("gain_margin", *m.GainMarginDB), hzPtr(m.PhaseCrossoverHz)})
	} else {
		rows = append(rows, []string{"gain", "∞", "no phase crossing"})
	}
	if m.PhaseMarginDeg != nil {
		rows = append(rows, []string{"phase", analysis.FormatMetric("phase_margin", *m.PhaseMarginDeg), hzPtr(m.GainCrossoverHz)})
	} else {
		rows = append(rows, []string{"phase", "∞", "no gain crossing"})
	}
	if m.DelayMarginS != nil {
		rows = append(rows, []string{"delay", fmt.Sprintf("%s (%.3g samples)", analysis.FormatMetric("delay_margin", *m.DelayMarginS), analysis.Shown(deref(m.DelayMarginSamples))), hzPtr(m.GainCrossoverHz)})
	}
	if m.PeakSensitivityDB != nil {
		rows = append(rows, []string{"peak sensitivity", analysis.FormatMetric("peak_sensitivity", *m.PeakSensitivityDB), hzPtr(m.PeakSensitivityHz)})
	}
	return rows
}

func verdictWords(l *analysis.Loop) string {
	return l.VerdictWord() + " — " + l.VerdictReason()
}

func hzPtr(p *float64) string {
	if p == nil {
		return "—"
	}
	return analysis.FormatHz(*p)
}

func deref(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// gainHover: value, range, stable interval and the safe value.
func gainHover(g *analysis.Gain, res *analysis.Result) string {
	var w strings.Builder
	fmt.Fprintf(&w, "**gain %s** = %s", g.Name, analysis.FormatNumber(g.Value))
	if g.Min != nil {
		fmt.Fprintf(&w, ", min %s", analysis.FormatNumber(*g.Min))
	}
	if g.Max != nil {
		fmt.Fprintf(&w, ", max %s", analysis.FormatNumber(*g.Max))
	}
	if g.Vary != nil {
		fmt.Fprintf(&w, ", varies %s to %s (uncertain: every loop using it is checked over the whole range)", analysis.FormatNumber(g.Vary.Lo), analysis.FormatNumber(g.Vary.Hi))
	}
	w.WriteString("\n\n")
	if g.Path != res.Path {
		w.WriteString("Declared in another file; its limits are computed where its loops are.\n")
		return w.String()
	}
	lim := g.Limits
	if lim == nil {
		w.WriteString("Used by no loop of this file.\n")
		return w.String()
	}
	lo, hi := "-∞", "∞"
	if lim.StableMin != nil {
		lo = analysis.FormatNumber(*lim.StableMin)
	}
	if lim.StableMax != nil {
		hi = analysis.FormatNumber(*lim.StableMax)
	}
	method := "numeric search"
	if lim.Exact {
		method = "exact"
	}
	switch {
	case lim.CurrentStable:
		fmt.Fprintf(&w, "Stable for %s < %s < %s (%s), loops %s.\n", lo, g.Name, hi, method, strings.Join(lim.Loops, ", "))
	case lim.Found:
		fmt.Fprintf(&w, "The current value is **unstable**; the nearest stable range is %s < %s < %s (%s), loops %s.\n", lo, g.Name, hi, method, strings.Join(lim.Loops, ", "))
	default:
		fmt.Fprintf(&w, "No value found that makes loops %s stable.\n", strings.Join(lim.Loops, ", "))
	}
	if g.Vary != nil { // uncertain: nobody sets it, the loops' hovers give the range verdicts
		return w.String()
	}
	if v, ok := lim.SafeValue(); ok {
		fmt.Fprintf(&w, "\nKeeps the required gain margin up to %s = %s.\n", g.Name, analysis.FormatNumber(v))
	} else if lim.SafeMaxNote != "" {
		fmt.Fprintf(&w, "\n%s.\n", strings.TrimSuffix(lim.SafeMaxNote, "."))
	}
	if f := g.Fit; f != nil && f.Value != g.Value {
		fmt.Fprintf(&w, "\n%s = %s %s (the quick-fix value).\n", g.Name, analysis.FormatNumber(f.Value), f.Meets())
	}
	return w.String()
}
