package analysis

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/analysis/robust"
	"ringside/analysis/roots"
	"ringside/internal/par"
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
	// WorstRadius is that radius.
	WorstRadius float64
	// NominalOnly: no point of the range could be examined (see Why);
	// Worst is then the nominal point.
	NominalOnly bool
	// IllPosed is a point where a closed-loop pole goes to infinity (the
	// characteristic polynomial loses degree: an ill-posed loop); nil when
	// none was met.
	IllPosed []float64
	// GainMarginDB and PhaseMarginDeg are the smallest found over
	// MarginPoints (the box's corners, its worst point and, for one gain
	// with the exact method, its samples along the range): not a bound, a
	// margin may dip lower between them; nil when the box is not robustly
	// stable or no point has a crossing.
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
func (r *Robust) WorstText() string { return pointText(r.Names, r.Worst) }

func pointText(names []string, x []float64) string {
	parts := make([]string, len(names))
	for i, n := range names {
		parts[i] = n + " = " + fmtNum(x[i])
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

// varyRange reads a gain's `vary A to B` and checks A ≤ value ≤ B. It is
// called for every gain in scope; a range that fails is dropped (the gain
// is then fixed at its value) and reported only for this file's gains.
func (c *checker) varyRange(g *Gain, report bool) {
	v := g.Stmt.Vary
	if v == nil || v.Lo == nil || v.Hi == nil {
		return
	}
	lo, hi := v.Lo.Value, v.Hi.Value
	add := func(span syntax.Span, code, msg string) {
		if report {
			c.diags.add(g.Path, span, Error, code, msg)
		}
	}
	switch {
	case lo > hi:
		add(v.Span, CodeGainRangeEmpty,
			fmt.Sprintf("gain %s varies from %s to %s: the lower end is above the upper one; write the smaller value first", g.Name, fmtNum(lo), fmtNum(hi)))
	case g.Stmt.Value != nil && (g.Value < lo || g.Value > hi):
		add(g.Stmt.Value.Span, CodeGainRange,
			fmt.Sprintf("gain %s = %s lies outside its range %s to %s: the nominal value must be one of the values that may occur", g.Name, fmtNum(g.Value), fmtNum(lo), fmtNum(hi)))
	default:
		g.Vary = &Range{lo, hi}
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
	par.Each(len(loops), func(i int) {
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
		lc.robustLoop(ctx, l, vs)
	})
	for _, d := range own {
		if d != nil {
			c.diags.list = append(c.diags.list, d.list...)
		}
	}
}

// family is the box of a loop's varying gains, with other gains set by
// fixed (nil: as declared).
func (c *checker) family(ctx context.Context, l *Loop, vs []*Gain, fixed map[string]float64) robust.Family {
	f := robust.Family{Tolerance: c.env.Options.Tolerance, Stop: func() bool { return ctx.Err() != nil }}
	for _, g := range vs {
		f.Names = append(f.Names, g.Name)
		f.Lo, f.Hi = append(f.Lo, g.Vary.Lo), append(f.Hi, g.Vary.Hi)
	}
	// The exact methods work on the expanded characteristic polynomial,
	// trusted up to MaxAffineDegree (as for the gain limits); beyond it the
	// grid decides on the loop's model alone.
	if l.Char.Degree() <= MaxAffineDegree {
		f.Char = func(x []float64) (poly.Poly, bool) {
			p, ok := c.atPoint(l, c.base.assign(c.point(f.Names, x, fixed)), false)
			return p.char, ok && p.char.Finite()
		}
	}
	f.Eval = func(x []float64) (float64, lti.Verdict, bool) {
		p, ok := c.atPoint(l, c.base.assign(c.point(f.Names, x, fixed)), true)
		if !ok || p.model == nil {
			return 0, 0, false
		}
		ps, err := p.model.Poles()
		if err != nil {
			return 0, 0, false
		}
		v, _ := lti.Decide(ps, c.env.Options.Tolerance)
		return maxPoleRadius(ps), v, true
	}
	return f
}

// pointLoop is a loop evaluated at one point of its box.
type pointLoop struct {
	char  poly.Poly
	open  poly.Rational
	model *lti.Loop // nil when some block has no factored form
}

// atPoint evaluates a loop with the gains ev sets, on the loop's own path:
// its elements, their expanded polynomials (polys) and, when asked, its
// model.
func (c *checker) atPoint(l *Loop, ev *evaluator, withModel bool) (pointLoop, bool) {
	sh := shapeOf(l.Stmt)
	fwd, ok1 := c.elements(ev, sh.fwd, false)
	fb, ok2 := c.elements(ev, sh.fb, false)
	if !ok1 || !ok2 {
		return pointLoop{}, false
	}
	var p pointLoop
	p.open, p.char, _ = polys(tfs(fwd), tfs(fb), sh.positive)
	if !withModel {
		return p, true
	}
	if m, err := model(fwd, fb, sh.positive); err == nil {
		p.model = m
	}
	return p, true
}

func maxPoleRadius(ps []lti.Pole) float64 {
	r := 0.0
	for _, p := range ps {
		r = math.Max(r, cmplx.Abs(p.Z))
	}
	return r
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

func (c *checker) robustLoop(ctx context.Context, l *Loop, vs []*Gain) {
	f := c.family(ctx, l, vs, nil)
	res := robust.Analyse(f)
	if res.Stable != nil && *res.Stable && l.Undecided {
		// The nominal point lies in the box; its own verdict could not be
		// decided, so neither can the box's.
		res.Stable, res.Why = nil, "the loop's verdict at its nominal values is undecided (a pole's error bound straddles the circle)"
	}
	r := &Robust{Stable: res.Stable, Method: res.Method, Exact: res.Exact, Why: res.Why, Names: f.Names,
		Worst: res.Worst, WorstRadius: res.WorstRadius}
	for _, g := range vs {
		r.Ranges = append(r.Ranges, *g.Vary)
	}
	if res.Interval != nil {
		r.IntervalLo, r.IntervalHi = res.Interval.Lo, res.Interval.Hi
		c.snapEnds(f.Names[0], []*Loop{l}, r.IntervalLo, r.IntervalHi) // zero is then an exact end
	}
	l.Robust = r
	r.IllPosed = res.IllPosed
	if r.Worst == nil {
		// Nothing finite was examined: the nominal point, which the loop's
		// own analysis covers, is the only one known.
		r.Worst, r.WorstRadius, r.NominalOnly = c.nominal(f.Names), l.MaxRadius, true
	} else {
		c.robustFigures(l, r, res)
	}
	switch {
	case r.Stable == nil && r.NominalOnly:
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeRangeUndecided,
			fmt.Sprintf("loop %s: stability over %s is not established: %s", l.Name, r.RangesText(), res.Why))
	case r.Stable == nil:
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeRangeUndecided,
			fmt.Sprintf("loop %s: stability over %s is not established (%s): %s; the largest closed-loop pole radius found is %s at %s. Treat the range as unproven: test the plant at those values, or model the dependence so that it enters affinely",
				l.Name, r.RangesText(), res.Method, res.Why, FormatRadius(r.WorstRadius), r.WorstText()))
	case !*r.Stable:
		c.rangeUnstable(ctx, l, r, vs)
	}
}

// nominal is the declared values of the named gains.
func (c *checker) nominal(names []string) []float64 {
	x := make([]float64, len(names))
	for i, n := range names {
		x[i] = c.gains[n]
	}
	return x
}

// robustFigures evaluates the loop at the points the robust analysis
// examined and at the worst point: closed-loop poles and open loops for the
// plots everywhere; margins at the corners and the worst point (for one
// gain with the exact method, also at its samples along the range), over
// stable points only and only when the whole box is stable.
func (c *checker) robustFigures(l *Loop, r *Robust, res robust.Result) {
	stable := r.Stable != nil && *r.Stable
	corners := 1 << len(r.Names)
	if len(r.Names) == 1 && res.Exact {
		corners = len(res.Points) // a handful of samples along the one range
	}
	pts := append(append([][]float64(nil), res.Points...), res.Worst)
	for i, x := range pts {
		margins := stable && (i < corners || i == len(pts)-1)
		// With an exact method the expanded polynomial is trusted (degree
		// ≤ MaxAffineDegree): its roots place the plot's points; margins
		// and the grid's points take the model.
		p, ok := c.atPoint(l, c.base.assign(c.point(r.Names, x, nil)), margins || !res.Exact)
		if !ok {
			continue
		}
		if p.model == nil {
			if rs, ok := roots.Companion(p.char); ok && res.Exact {
				r.Family, r.Region = append(r.Family, p.open), append(r.Region, rs...)
			}
			continue
		}
		ps, err := p.model.Poles()
		if err != nil {
			continue
		}
		r.Family = append(r.Family, p.open)
		for _, q := range ps {
			r.Region = append(r.Region, q.Z)
		}
		if !margins {
			continue
		}
		m, err := p.model.Margins(c.res.SampleT, ps)
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
func (c *checker) rangeUnstable(ctx context.Context, l *Loop, r *Robust, vs []*Gain) {
	nominal := "it is stable at its nominal values"
	if !l.Stable {
		nominal = "it is not stable at its nominal values either"
	}
	msg := fmt.Sprintf("loop %s is NOT stable over the range %s: at %s its largest closed-loop pole has radius %s; %s, but the plant you get may be any point of the range (method: %s)",
		l.Name, r.RangesText(), r.WorstText(), FormatRadius(r.WorstRadius), nominal, r.Method)
	if r.IllPosed != nil {
		msg += fmt.Sprintf("; at %s a closed-loop pole goes to infinity (1 + L(∞) = 0: the loop is ill-posed there)", pointText(r.Names, r.IllPosed))
	}
	if len(r.Names) == 1 && (r.IntervalLo != nil || r.IntervalHi != nil) {
		msg += fmt.Sprintf("; stable only for %s", stableText(r.Names[0], r.IntervalLo, r.IntervalHi))
	}
	x := c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeRangeUnstable, msg)
	var hints []string
	tunable := 0
	for _, name := range l.Gains {
		d := c.res.Scope[name]
		if d == nil || d.Gain == nil || d.Gain.Vary != nil || d.Gain.Stmt.Value == nil || len(x.Fixes) >= 3 {
			continue
		}
		tunable++
		if fix, hint, ok := c.narrowFix(ctx, l, vs, d.Gain); ok {
			x.Fixes = append(x.Fixes, fix)
			hints = append(hints, hint)
		}
	}
	switch {
	case len(hints) > 0:
		x.Message += "; " + strings.Join(hints, "; or ")
	case tunable == 0:
		x.Message += "; the loop has no tunable gain to narrow: change the controller or narrow the range"
	case r.Exact:
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
func (c *checker) narrowFix(ctx context.Context, l *Loop, vs []*Gain, g *Gain) (Fix, string, bool) {
	k0 := g.Value
	if k0 == 0 {
		return Fix{}, "", false
	}
	stableAt := func(k float64) bool {
		res := robust.Analyse(c.family(ctx, l, vs, map[string]float64{g.Name: k}))
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

// Verdict is the verdict over the range in a few words (lens, titles).
func (r *Robust) Verdict() string {
	switch {
	case r.Stable == nil:
		return "over the range: undecided"
	case *r.Stable:
		return "over the range: stable"
	}
	return "over the range: NOT STABLE"
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
	switch {
	case r.NominalOnly:
		out = append(out, fmt.Sprintf("Only the nominal point (%s) was analysed: largest closed-loop pole radius %s.", r.WorstText(), FormatRadius(r.WorstRadius)))
	default:
		out = append(out, fmt.Sprintf("Worst point: %s, largest closed-loop pole radius %s.", r.WorstText(), FormatRadius(r.WorstRadius)))
	}
	if r.IllPosed != nil {
		out = append(out, fmt.Sprintf("Ill-posed at %s: a closed-loop pole goes to infinity.", pointText(r.Names, r.IllPosed)))
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
		out = append(out, fmt.Sprintf("Smallest margins found over %d points of the range (corners and worst point): gain %s, phase %s.", r.MarginPoints, gm, pm))
	}
	return out
}
