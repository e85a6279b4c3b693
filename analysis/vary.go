package analysis

import (
	"context"
	"fmt"
	"math"
	"strings"

	"ringside/analysis/freq"
	"ringside/analysis/poly"
	"ringside/analysis/robust"
	"ringside/analysis/roots"
	"ringside/syntax"
)

// Range is the range of an uncertain gain (`vary A to B`).
type Range struct{ Lo, Hi float64 }

// Robust is a loop's analysis over the box of its varying gains.
type Robust struct {
	Stable *bool  // nil: undecided (Why says why)
	Method string // how the verdict was established
	Exact  bool
	Why    string
	Names  []string  // the varying gains, sorted
	Ranges []Range   // their ranges, in the order of Names
	Worst  []float64 // the point with the largest closed-loop pole radius
	// WorstRadius is that radius (+Inf where a pole goes to infinity).
	WorstRadius float64
	// GainMarginDB and PhaseMarginDeg are the smallest over MarginPoints
	// (the box's corners, its worst point and, for one gain, points along
	// its range); nil when the box is not robustly stable or no point has
	// a crossing.
	GainMarginDB, PhaseMarginDeg *float64
	MarginPoints                 int
	// Interval is, for one gain with the exact method, its stable interval
	// in this loop (nil ends: unbounded).
	IntervalLo, IntervalHi *float64
	// Region holds the closed-loop poles at the points examined; Family
	// the open loops there (for the plots).
	Region []complex128
	Family []poly.Rational
}

// WorstText writes the worst point as "kplant = 50, tau = 0.3".
func (r *Robust) WorstText() string {
	parts := make([]string, len(r.Names))
	for i, n := range r.Names {
		parts[i] = n + " = " + fmtNum(r.Worst[i])
	}
	return strings.Join(parts, ", ")
}

// RangesText writes the box as "kplant 30 to 50, tau 0.2 to 0.4".
func (r *Robust) RangesText() string {
	parts := make([]string, len(r.Names))
	for i, n := range r.Names {
		parts[i] = fmt.Sprintf("%s %s to %s", n, fmtNum(r.Ranges[i].Lo), fmtNum(r.Ranges[i].Hi))
	}
	return strings.Join(parts, ", ")
}

// varyRange reads a gain's `vary A to B` and checks A ≤ value ≤ B; it is
// called for every gain in scope, reports only for this file's gains.
func (c *checker) varyRange(g *Gain, report bool) {
	v := g.Stmt.Vary
	if v == nil || v.Lo == nil || v.Hi == nil {
		return
	}
	g.Vary = &Range{v.Lo.Value, v.Hi.Value}
	if !report {
		return
	}
	for _, n := range []*syntax.Number{v.Lo, v.Hi} {
		if n.Unit != "" {
			c.diags.add(g.Path, n.UnitSpan, Error, CodeBadUnit, fmt.Sprintf("gain %s is a plain number; remove the unit %q", g.Name, n.Unit))
		}
	}
	switch {
	case g.Vary.Lo > g.Vary.Hi:
		c.diags.add(g.Path, v.Span, Error, CodeGainRangeEmpty,
			fmt.Sprintf("gain %s varies from %s to %s: the lower end is above the upper one; write the smaller value first", g.Name, fmtNum(g.Vary.Lo), fmtNum(g.Vary.Hi)))
		g.Vary = nil
	case g.Stmt.Value != nil && (g.Value < g.Vary.Lo || g.Value > g.Vary.Hi):
		c.diags.add(g.Path, g.Stmt.Value.Span, Error, CodeGainRange,
			fmt.Sprintf("gain %s = %s lies outside its range %s to %s: the nominal value must be one of the values that may occur", g.Name, fmtNum(g.Value), fmtNum(g.Vary.Lo), fmtNum(g.Vary.Hi)))
		g.Vary = nil
	}
}

// varying returns the gains of a loop that vary over a proper range.
func (c *checker) varying(l *Loop) []*Gain {
	var out []*Gain
	for _, name := range l.Gains {
		if d := c.res.Scope[name]; d != nil && d.Gain != nil && d.Gain.Vary != nil && d.Gain.Vary.Lo < d.Gain.Vary.Hi {
			out = append(out, d.Gain)
		}
	}
	return out
}

// robustLoops analyses every loop that depends on a varying gain, side by
// side; diagnostics are joined in source order.
func (c *checker) robustLoops(ctx context.Context) {
	loops := c.res.Loops
	own := make([]*diagList, len(loops))
	parallel(len(loops), func(i int) {
		l := loops[i]
		if ctx.Err() != nil || !l.OK {
			return
		}
		vs := c.varying(l)
		if len(vs) == 0 {
			return
		}
		lc := *c
		lc.diags = &diagList{}
		own[i] = lc.diags
		lc.robustLoop(l, vs)
	})
	for _, d := range own {
		if d != nil {
			c.diags.list = append(c.diags.list, d.list...)
		}
	}
}

// family is the box of a loop's varying gains, with other gains set by
// fixed (nil: as declared).
func (c *checker) family(l *Loop, vs []*Gain, fixed map[string]float64) robust.Family {
	f := robust.Family{Tolerance: c.env.Options.Tolerance}
	for _, g := range vs {
		f.Names = append(f.Names, g.Name)
		f.Lo, f.Hi = append(f.Lo, g.Vary.Lo), append(f.Hi, g.Vary.Hi)
	}
	f.Char = func(x []float64) (poly.Poly, bool) {
		char, _, ok := c.loopWith(l, c.base.assign(c.point(f.Names, x, fixed)))
		return char, ok && char.Finite()
	}
	return f
}

func (c *checker) point(names []string, x []float64, fixed map[string]float64) map[string]float64 {
	values := make(map[string]float64, len(names)+len(fixed))
	for k, v := range fixed {
		values[k] = v
	}
	for i, n := range names {
		values[n] = x[i]
	}
	return values
}

func (c *checker) robustLoop(l *Loop, vs []*Gain) {
	f := c.family(l, vs, nil)
	res := robust.Analyse(f)
	r := &Robust{Stable: res.Stable, Method: res.Method, Exact: res.Exact, Why: res.Why, Names: f.Names,
		Worst: res.Worst, WorstRadius: res.WorstRadius}
	for _, g := range vs {
		r.Ranges = append(r.Ranges, *g.Vary)
	}
	if res.Interval != nil {
		r.IntervalLo, r.IntervalHi = res.Interval.Lo, res.Interval.Hi
		if c.openOnCircle(f.Names[0], []*Loop{l}) { // zero is then an exact end
			snapZero(r.IntervalLo, r.IntervalHi)
			snapZero(r.IntervalHi, r.IntervalLo)
		}
	}
	l.Robust = r
	if r.Worst == nil {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeRangeUndecided,
			fmt.Sprintf("loop %s: stability over %s is not established: %s", l.Name, r.RangesText(), res.Why))
		return
	}
	c.robustFigures(l, r, marginPoints(f, res))
	switch {
	case r.Stable == nil:
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeRangeUndecided,
			fmt.Sprintf("loop %s: stability over %s is not established (%s): %s; the largest closed-loop pole radius found is %s at %s. Treat the range as unproven: test the plant at those values, or model the dependence so that it enters affinely",
				l.Name, r.RangesText(), res.Method, res.Why, FormatRadius(r.WorstRadius), r.WorstText()))
	case !*r.Stable:
		c.rangeUnstable(l, r, vs)
	}
}

// marginPoints are where margins are computed: the corners, the worst
// point and, for one gain, the points examined along its range.
func marginPoints(f robust.Family, res robust.Result) [][]float64 {
	n := 1 << len(f.Names)
	if len(f.Names) == 1 {
		n = len(res.Points)
	}
	pts := append([][]float64(nil), res.Points[:min(n, len(res.Points))]...)
	return append(pts, res.Worst)
}

// robustFigures evaluates the loop at the examined points: the smallest
// margins (over stable points only, and only when the box is stable), the
// closed-loop poles and open loops for the plots.
func (c *checker) robustFigures(l *Loop, r *Robust, margins [][]float64) {
	stable := r.Stable != nil && *r.Stable
	for _, x := range margins {
		char, open, ok := c.loopWith(l, c.base.assign(c.point(r.Names, x, nil)))
		if !ok {
			continue
		}
		r.Family = append(r.Family, open)
		if rs, err := roots.Find(char); err == nil {
			r.Region = append(r.Region, rs.Roots...)
		}
		if !stable {
			continue
		}
		m, err := freq.Compute(open, c.res.SampleT)
		if err != nil {
			continue
		}
		r.MarginPoints++
		r.GainMarginDB = minPtr(r.GainMarginDB, m.GainMarginDB)
		r.PhaseMarginDeg = minPtr(r.PhaseMarginDeg, m.PhaseMarginDeg)
	}
}

func minPtr(a, b *float64) *float64 {
	if b == nil {
		return a
	}
	if a == nil || *b < *a {
		v := *b
		return &v
	}
	return a
}

// rangeUnstable reports a box that is not robustly stable, naming the worst
// point, with fixes that set a tunable gain of the loop to a value for
// which the whole box is stable (exact methods only).
func (c *checker) rangeUnstable(l *Loop, r *Robust, vs []*Gain) {
	nominal := "it is stable at its nominal values"
	if !l.Stable {
		nominal = "it is not stable at its nominal values either"
	}
	radius := "a closed-loop pole goes to infinity (the polynomial loses degree)"
	if !math.IsInf(r.WorstRadius, 1) {
		radius = "its largest closed-loop pole has radius " + FormatRadius(r.WorstRadius)
	}
	msg := fmt.Sprintf("loop %s is NOT stable over the range %s: at %s %s; %s, but the plant you get may be any point of the range (method: %s)",
		l.Name, r.RangesText(), r.WorstText(), radius, nominal, r.Method)
	if len(r.Names) == 1 && (r.IntervalLo != nil || r.IntervalHi != nil) {
		msg += fmt.Sprintf("; stable only for %s", stableText(r.Names[0], r.IntervalLo, r.IntervalHi))
	}
	x := c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeRangeUnstable, msg)
	var hints []string
	for _, name := range l.Gains {
		d := c.res.Scope[name]
		if d == nil || d.Gain == nil || d.Gain.Vary != nil || d.Gain.Stmt.Value == nil || len(x.Fixes) >= 3 {
			continue
		}
		if fix, hint, ok := c.narrowFix(l, vs, d.Gain); ok {
			x.Fixes = append(x.Fixes, fix)
			hints = append(hints, hint)
		}
	}
	if len(hints) > 0 {
		x.Message += "; " + strings.Join(hints, "; or ")
	} else if r.Exact {
		x.Message += "; no smaller value of one tunable gain makes the whole range stable: change the controller's structure or narrow the range"
	}
}

func stableText(name string, lo, hi *float64) string {
	switch {
	case lo != nil && hi != nil:
		return fmt.Sprintf("%s < %s < %s", fmtNum(*lo), name, fmtNum(*hi))
	case lo != nil:
		return fmt.Sprintf("%s > %s", name, fmtNum(*lo))
	case hi != nil:
		return fmt.Sprintf("%s < %s", name, fmtNum(*hi))
	}
	return "every value of " + name
}

// narrowFactors are the fractions of a tunable gain's value tried, nearest
// first, when looking for a value that makes the whole box stable.
var narrowFactors = []float64{0.9, 0.8, 0.7, 0.6, 0.5, 0.4, 0.3, 0.2, 0.1, 0.05, 0.02, 0.01}

// narrowFix looks for a value of the tunable gain g (scaled towards zero)
// for which the whole box is stable by an exact method, then pulls it back
// from the stability boundary by the loop's required gain margin where
// that still holds, rounds it to three significant figures towards zero
// and verifies the rounded value.
func (c *checker) narrowFix(l *Loop, vs []*Gain, g *Gain) (Fix, string, bool) {
	k0 := g.Value
	if k0 == 0 {
		return Fix{}, "", false
	}
	stableAt := func(k float64) bool {
		res := robust.Analyse(c.family(l, vs, map[string]float64{g.Name: k}))
		return res.Exact && res.Stable != nil && *res.Stable
	}
	fail, pass := 1.0, 0.0
	for _, s := range narrowFactors {
		if stableAt(k0 * s) {
			pass = s
			break
		}
		fail = s
	}
	if pass == 0 {
		return Fix{}, "", false
	}
	for i := 0; i < 8; i++ { // the boundary between fail and pass, to 0.4 %
		mid := (fail + pass) / 2
		if stableAt(k0 * mid) {
			pass = mid
		} else {
			fail = mid
		}
	}
	var v float64
	found := false
	for _, s := range []float64{pass * math.Pow(10, -c.requiredGM(l)/20), pass} {
		v = towardZero(k0 * s)
		if v != 0 && v != k0 && stableAt(v) && (g.Max == nil || v <= *g.Max) && (g.Min == nil || v >= *g.Min) {
			found = true
			break
		}
	}
	if !found {
		return Fix{}, "", false
	}
	fix := Fix{Title: fmt.Sprintf("Set %s to %s (whole range of %s stable)", g.Name, fmtNum(v), strings.Join(l.Robust.Names, ", ")),
		Edits: []Edit{{Path: g.Path, Span: g.Stmt.Value.Span, NewText: fmtNum(v)}}}
	return fix, fmt.Sprintf("%s = %s makes the whole range stable", g.Name, fmtNum(v)), true
}

// towardZero rounds to three significant figures towards zero.
func towardZero(v float64) float64 {
	if v < 0 {
		return -roundDown(-v)
	}
	return roundDown(v)
}

// Lines describes the analysis over the box in plain words (the loop
// hover); every figure is the one the JSON and diagnostics carry.
func (r *Robust) Lines() []string {
	verdict := "stability not established"
	switch {
	case r.Stable != nil && *r.Stable:
		verdict = "stable for every value"
	case r.Stable != nil:
		verdict = "**NOT stable** for every value"
	}
	out := []string{fmt.Sprintf("Over the range %s: %s (method: %s).", r.RangesText(), verdict, r.Method)}
	if r.Why != "" {
		out = append(out, "Why undecided: "+r.Why+".")
	}
	if r.Worst != nil {
		out = append(out, fmt.Sprintf("Worst point: %s, largest closed-loop pole radius %s.", r.WorstText(), FormatRadius(r.WorstRadius)))
	}
	if len(r.Names) == 1 && (r.IntervalLo != nil || r.IntervalHi != nil) {
		out = append(out, fmt.Sprintf("Stable interval in this loop: %s.", stableText(r.Names[0], r.IntervalLo, r.IntervalHi)))
	}
	if r.MarginPoints > 0 {
		gm, pm := "∞", "∞"
		if r.GainMarginDB != nil {
			gm = fmtMetric("gain_margin", *r.GainMarginDB)
		}
		if r.PhaseMarginDeg != nil {
			pm = fmtMetric("phase_margin", *r.PhaseMarginDeg)
		}
		out = append(out, fmt.Sprintf("Smallest margins over %d points of the range (corners and worst point): gain %s, phase %s.", r.MarginPoints, gm, pm))
	}
	return out
}
