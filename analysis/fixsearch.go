package analysis

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"ringside/syntax"
)

// A gain quick-fix must keep every requirement (written, or the defaults
// of a loop without require lines) of every loop of the file that the gain
// reaches, not only the gain margin: a value that restores the margin but
// leaves 56 % overshoot is not a fix. The search below evaluates each loop
// at trial values through the same analysis as the check itself (closed-
// loop poles, margins, step response, requirements), so the fix and the
// check cannot disagree.
//
// Method: a scan of the allowed range (the stable interval, within the
// gain's own min/max), then bisection to the edge of the acceptable set
// nearest the current value, then rounding to three significant figures on
// the acceptable side and a final check of the rounded value. A scan can
// miss an acceptable sliver narrower than its spacing; so a requirement is
// said to be "not met by any value found", never "impossible".

// fitScanPoints is the number of evenly spaced scan points; fitEdgePoints
// more crowd each end of the range geometrically (to 2^-7 of its width),
// where the stability limit makes figures change fastest.
const (
	fitScanPoints = 16
	fitEdgePoints = 5
	// fitBisections halves the bracket at the edge of the acceptable set
	// to 2^-10 of a scan step (1/17 of the range), about the three-figure
	// rounding that follows.
	fitBisections = 10
)

// GainFit is the value a quick-fix offers for a gain, and what it meets.
type GainFit struct {
	Value float64
	// Missed lists the requirements still missed at Value (empty when
	// every requirement is met), as "overshoot <= 10 % (loop pump)".
	Missed []string
	// Unreachable lists the requirements no scanned value meets.
	Unreachable []string
	Loops       []string
}

// trial is the outcome of every loop at one value of the gain.
type trial struct {
	k      float64
	stable bool
	missed []string // sorted
}

// fitGain searches a value of gain g that keeps every requirement of
// every loop using it; nil when there is no stable range to search or the
// loops cannot be evaluated.
func (c *checker) fitGain(g *Gain) *GainFit {
	lim := g.Limits
	if lim == nil || !lim.Found {
		return nil
	}
	loops := c.using[g.Name] // the loops of lim.Loops
	if len(loops) == 0 {
		return nil
	}
	at := func(k float64) trial { return c.trialAt(g.Name, k, loops) }
	// The safe value of the gain margin search comes first: when it keeps
	// everything, it is the answer (and the largest such value).
	if v, ok := lim.SafeValue(); ok && g.allows(v) {
		if t := at(v); t.stable && len(t.missed) == 0 {
			return &GainFit{Value: v, Loops: lim.Loops}
		}
	}
	lo, hi, ok := fitRange(g, lim)
	if !ok {
		return nil
	}
	trials := scan(scanPoints(lo, hi), g.Value, at)
	best, unreachable := bestTrial(trials, g.Value)
	if best < 0 {
		return nil
	}
	accept := func(t trial) bool { return t.stable && subset(t.missed, trials[best].missed) }
	k := edgeToward(trials, best, g.Value, at, accept)
	v, ok := roundInside(k, trials[best].k, func(x float64) bool { return g.allows(x) && accept(at(x)) })
	if !ok {
		return nil
	}
	if now := at(g.Value); now.stable && len(now.missed) <= len(trials[best].missed) {
		return nil // no value found does better than the current one
	}
	return &GainFit{Value: v, Missed: at(v).missed, Unreachable: unreachable, Loops: lim.Loops}
}

// trialAt runs the loop analysis of every loop with gain name set to k,
// its diagnostics discarded.
func (c *checker) trialAt(name string, k float64, loops []*Loop) trial {
	t := trial{k: k, stable: true}
	ev := c.base.sweep(name, k)
	for _, l := range loops {
		lc := *c
		// A trial's numbers are for this search only: the memo keeps what
		// the next check may read again, not every trial value's roots.
		lc.diags, lc.pending, lc.trial, lc.memo = &diagList{}, nil, true, nil
		tl := lc.loop(ev, l.Stmt)
		if !tl.OK || !tl.Stable {
			t.stable = false
			continue
		}
		for _, q := range tl.Requirements {
			if !q.Met {
				t.missed = append(t.missed, requirementText(q, l.Name))
			}
		}
	}
	sort.Strings(t.missed)
	return t
}

// wants reports whether a loop analysis computes a figure needed only by
// the given metrics: always, except in a fix search's trial, where it is
// computed only when a require line of the loop names one of them (the
// step response and the disk margin are most of a trial's cost).
func (c *checker) wants(reqs []*syntax.RequireItem, metrics ...string) bool {
	if !c.trial {
		return true
	}
	for _, r := range reqs {
		if r.Metric != nil && slices.Contains(metrics, r.Metric.Name) {
			return true
		}
	}
	return false
}

func requirementText(q Requirement, loop string) string {
	return fmt.Sprintf("%s %s %s (loop %s)", q.Metric, q.Op, fmtMetric(q.Metric, q.Want), loop)
}

// allows reports whether v lies within the gain's declared min/max.
func (g *Gain) allows(v float64) bool {
	return (g.Min == nil || v >= *g.Min) && (g.Max == nil || v <= *g.Max)
}

// fitRange is the range searched: the stable interval within the declared
// min/max; an unbounded side reaches 100 times the current size (or 1)
// beyond the current value.
func fitRange(g *Gain, lim *GainLimits) (lo, hi float64, ok bool) {
	span := 100 * math.Max(math.Abs(g.Value), 1)
	lo, hi = g.Value-span, g.Value+span
	if lim.StableMin != nil {
		lo = *lim.StableMin
	}
	if lim.StableMax != nil {
		hi = *lim.StableMax
	}
	if g.Min != nil {
		lo = math.Max(lo, *g.Min)
	}
	if g.Max != nil {
		hi = math.Min(hi, *g.Max)
	}
	return lo, hi, lo < hi
}

// scanPoints lists the interior points of (lo, hi) that are scanned,
// ascending.
func scanPoints(lo, hi float64) []float64 {
	w := hi - lo
	var ts []float64
	for i := 1; i <= fitScanPoints; i++ {
		ts = append(ts, float64(i)/float64(fitScanPoints+1))
	}
	for j := 0; j < fitEdgePoints; j++ {
		e := math.Pow(2, -float64(3+j))
		ts = append(ts, e, 1-e)
	}
	sort.Float64s(ts)
	pts := make([]float64, len(ts))
	for i, t := range ts {
		pts[i] = lo + w*t
	}
	return pts
}

// scan evaluates the scan points nearest to k0 first and stops at the
// first value that meets every requirement (the nearest such point is then
// known); only when none does is the whole range scanned, to find the best
// compromise. Trials run one at a time: the loops of the file are already
// analysed side by side, and a search's garbage stays small. Points not
// evaluated are left out; the result is in ascending order.
func scan(pts []float64, k0 float64, at func(float64) trial) []trial {
	order := append([]float64(nil), pts...)
	sort.SliceStable(order, func(i, j int) bool { return math.Abs(order[i]-k0) < math.Abs(order[j]-k0) })
	var done []trial
	for _, k := range order {
		t := at(k)
		done = append(done, t)
		if t.stable && len(t.missed) == 0 {
			break
		}
	}
	sort.Slice(done, func(i, j int) bool { return done[i].k < done[j].k })
	return done
}

// bestTrial picks the stable trial that misses the fewest requirements,
// the nearest to the current value k0 among equals; -1 when no trial is
// stable. unreachable lists the requirements missed by every stable
// trial.
func bestTrial(trials []trial, k0 float64) (best int, unreachable []string) {
	best = -1
	count := map[string]int{}
	stable := 0
	for i, t := range trials {
		if !t.stable {
			continue
		}
		stable++
		for _, m := range t.missed {
			count[m]++
		}
		if best < 0 || len(t.missed) < len(trials[best].missed) ||
			len(t.missed) == len(trials[best].missed) && math.Abs(t.k-k0) < math.Abs(trials[best].k-k0) {
			best = i
		}
	}
	for m, n := range count {
		if n == stable {
			unreachable = append(unreachable, m)
		}
	}
	sort.Strings(unreachable)
	return best, unreachable
}

// edgeToward moves from the accepted trial best toward k0 as far as the
// acceptable set reaches: to the scan neighbour on k0's side when it is
// accepted too (and so on), then by bisection into the first rejected one.
func edgeToward(trials []trial, best int, k0 float64, at func(float64) trial, accept func(trial) bool) float64 {
	step := 1
	if k0 < trials[best].k {
		step = -1
	}
	i := best
	for j := i + step; j >= 0 && j < len(trials) && (trials[j].k-k0)*float64(step) <= 0 && accept(trials[j]); j += step {
		i = j
	}
	in := trials[i].k
	j := i + step
	var out float64
	switch {
	case j >= 0 && j < len(trials) && (trials[j].k-k0)*float64(step) <= 0:
		out = trials[j].k
	case (k0-in)*float64(step) > 0:
		out = k0 // the current value itself is past the last scan point
	default:
		return in
	}
	for n := 0; n < fitBisections; n++ {
		mid := in + (out-in)/2
		if accept(at(mid)) {
			in = mid
		} else {
			out = mid
		}
	}
	return in
}

// roundInside rounds k to three significant figures (then four, five) on
// the side of inner (where the search came from), keeping the first value
// that ok accepts.
func roundInside(k, inner float64, ok func(float64) bool) (float64, bool) {
	for digits := 3; digits <= 5; digits++ {
		v := roundSig(k, digits, inner < k)
		if ok(v) {
			return v, true
		}
	}
	if ok(k) {
		return k, true
	}
	return 0, false
}

// roundSig rounds v to n significant figures, down (toward −∞) or up,
// through decimal text so the value is exactly what is printed.
func roundSig(v float64, n int, down bool) float64 {
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	p := math.Pow(10, math.Floor(math.Log10(math.Abs(v)))-float64(n-1))
	var r float64
	if down {
		r = math.Floor(v/p*(1+1e-12)) * p
	} else {
		r = math.Ceil(v/p*(1-1e-12)) * p
	}
	f, _ := strconv.ParseFloat(strconv.FormatFloat(r, 'g', n, 64), 64)
	return f
}

func subset(a, b []string) bool {
	for _, x := range a {
		i := sort.SearchStrings(b, x)
		if i == len(b) || b[i] != x {
			return false
		}
	}
	return true
}

// fitFix is the quick-fix that sets gain g to the searched value, or false
// when the value is the current one or outside the declared range.
func fitFix(g *Gain, fit *GainFit) (Fix, bool) {
	if fit == nil || fit.Value == g.Value || !g.allows(fit.Value) || g.Stmt.Value == nil {
		return Fix{}, false
	}
	return Fix{Title: fmt.Sprintf("Set %s to %s (%s)", g.Name, fmtNum(fit.Value), fit.Meets()),
		Edits: []Edit{{Path: g.Path, Span: g.Stmt.Value.Span, NewText: fmtNum(fit.Value)}}}, true
}

// Meets says in a few words what the value keeps and what it cannot.
func (f *GainFit) Meets() string {
	of := "loop " + strings.Join(f.Loops, ", ")
	if len(f.Loops) > 1 {
		of = "loops " + strings.Join(f.Loops, ", ")
	}
	switch {
	case len(f.Missed) == 0:
		return "meets every requirement of " + of
	case subset(f.Missed, f.Unreachable):
		return fmt.Sprintf("meets every other requirement of %s; no value found meets %s", of, strings.Join(f.Missed, ", "))
	}
	return fmt.Sprintf("stable, the fewest requirements missed: still misses %s", strings.Join(f.Missed, ", "))
}

// MaxFitSearches bounds the gain fix searches of one check (16): each costs
// a few dozen loop analyses, and a generated file with hundreds of failing
// loops must still check in a fraction of a second. Gains past the bound,
// in source order of their loops' diagnostics, get the gain margin's safe
// value, whose title says the other requirements were not checked.
const MaxFitSearches = 16

// fit runs the search for gain g once per check, within MaxFitSearches;
// searched is false when the bound stopped it.
func (c *checker) fit(g *Gain) (searched bool) {
	if g.fitDone {
		return !g.fitSkipped
	}
	g.fitDone = true
	if !c.writtenRequirements(g) {
		return true // only rules of thumb: the gain margin's safe value is the fix
	}
	if c.fitSearches >= MaxFitSearches {
		g.fitSkipped = true
		return false
	}
	c.fitSearches++
	g.Fit = c.fitGain(g)
	return true
}

// writtenRequirements reports whether a loop that gain g reaches has a
// require line: the search is for written requirements; loops held only
// to the default rules of thumb get the gain margin's safe value, as a
// generated file of hundreds of such loops must check quickly.
func (c *checker) writtenRequirements(g *Gain) bool {
	if g.Limits == nil {
		return false
	}
	for _, l := range c.using[g.Name] { // the loops of g.Limits.Loops
		for _, q := range l.Requirements {
			if q.Item != nil {
				return true
			}
		}
	}
	return false
}

// gainFix is the "set the gain" quick-fix: the searched value when the
// search found one, else the safe value of the gain margin alone.
func (c *checker) gainFix(g *Gain, gm float64) (Fix, bool) {
	searched := c.fit(g)
	if g.Fit != nil {
		return fitFix(g, g.Fit)
	}
	f, ok := setGainFix(g, gm)
	if ok && !searched {
		f.Title = strings.TrimSuffix(f.Title, ")") + fmt.Sprintf("; other requirements not checked: more than %d gains need fixes in this file)", MaxFitSearches)
	}
	return f, ok
}

// fitHint is the searched value in a message's words, when it differs from
// the gain margin's safe value (which the message already names).
func (g *Gain) fitHint() string {
	f := g.Fit
	if f == nil || f.Value == g.Value {
		return ""
	}
	if v, ok := g.Limits.SafeValue(); ok && v == f.Value {
		return fmt.Sprintf(" and %s", f.Meets())
	}
	return fmt.Sprintf("; %s = %s %s", g.Name, fmtNum(f.Value), f.Meets())
}

// requirementFix offers the searched value on the diagnostic of a missed
// requirement other than the gain margin, when that value meets it.
func (c *checker) requirementFix(x *Diagnostic, g *Gain, p pendingFix) {
	c.fit(g)
	f := g.Fit
	if f == nil {
		return
	}
	for _, m := range f.Missed {
		if strings.HasPrefix(m, p.metric+" ") && strings.HasSuffix(m, "(loop "+p.loop.Name+")") {
			return
		}
	}
	if fx, ok := fitFix(g, f); ok {
		x.Fixes = append(x.Fixes, fx)
		x.Message += fmt.Sprintf("; %s = %s %s", g.Name, fmtNum(f.Value), f.Meets())
	}
}
