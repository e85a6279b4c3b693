package analysis

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"

	"ringside/analysis/gainlimit"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/internal/par"
	"ringside/syntax"
)

// AffineTolerance: a loop's characteristic polynomial counts as affine in a
// gain when values at two further points agree with the line through the
// first two to this relative accuracy (rounding in polynomial products of
// degree ≤ 64 stays near 1e-13; nonlinear dependence misses by O(1)).
const AffineTolerance = 1e-9

// pendingFix is a loop diagnostic that gets gain fixes once every gain's
// limits are known.
type pendingFix struct {
	diag int
	loop *Loop
	// stability: the diagnostic is about stability, so capping the gain at
	// its stability limit fixes it; margin diagnostics need the margin value.
	stability bool
	// metric is the missed requirement's metric ("" for stability).
	metric string
}

// loopAt evaluates a loop's characteristic polynomial and open loop with
// gain name set to k.
func (c *checker) loopAt(l *Loop, name string, k float64) (poly.Poly, poly.Rational, bool) {
	return c.loopWith(l, c.evalAt(name, k))
}

// loopWith evaluates a loop's characteristic polynomial and open loop with
// the gains ev sets.
func (c *checker) loopWith(l *Loop, ev *evaluator) (poly.Poly, poly.Rational, bool) {
	p, ok := c.atPoint(l, ev, false)
	return p.char, p.open, ok
}

// affine returns a, b with char(k) = a + k·b when that holds.
func (c *checker) affine(l *Loop, name string, k0 float64) (a, b poly.Poly, ok bool) {
	return c.affineScaled(l, name, k0, 1)
}

// affineScaled is affine for the loop with L multiplied by alpha, whose
// characteristic polynomial is den(L) + alpha·num(L).
func (c *checker) affineScaled(l *Loop, name string, k0, alpha float64) (a, b poly.Poly, ok bool) {
	f := c.affineForm(l, name, k0)
	if !f.ok {
		return nil, nil, false
	}
	a, b = f.char(alpha)
	return a, b, true
}

// char returns a, b with den(L) + alpha·num(L) = a + k·b.
func (f affineForm) char(alpha float64) (a, b poly.Poly) {
	return f.denA.Add(f.numA.Scale(alpha)), f.denB.Add(f.numB.Scale(alpha))
}

// affineForm holds num(L) and den(L) as affine functions of a gain:
// num = numA + k·numB, den = denA + k·denB.
type affineForm struct {
	numA, numB, denA, denB poly.Poly
	ok                     bool
	// k0, h: the fit's centre and width; numScale, denScale: the largest
	// coefficient of num and den over its four values (the check's scale);
	// numResid, denResid: the largest coefficient difference between the
	// fit and the evaluated polynomials at the two values it was checked at.
	k0, h              float64
	numScale, denScale float64
	numResid, denResid float64
}

// FitRounding is the relative coefficient error an evaluated polynomial
// may carry from rounding (products and sums of degree ≤ 64 stay near
// 1e-13, see AffineTolerance): the least error errAt assumes, even where
// the check values happened to agree exactly.
const FitRounding = 1e-13

// errAt bounds the error of each coefficient of den + alpha·num at k: at
// the fit's four values, spread over a width h around k0, the fit and the
// evaluated polynomials differ by the residuals measured at the two check
// values (at least FitRounding of their scale: the rounding of an
// evaluation), and an affine function's error grows at most linearly away
// from them (by the distance over the closest pair's spacing, 0.37·h).
func (f affineForm) errAt(k, alpha float64) float64 {
	den := math.Max(f.denResid, FitRounding*f.denScale)
	num := math.Max(f.numResid, FitRounding*f.numScale)
	return (den + math.Abs(alpha)*num) * (1 + math.Abs(k-f.k0)/(0.37*f.h))
}

type formKey struct {
	loop *Loop
	gain string
}

// affineForm fits num(L) and den(L) through two values of the gain and
// checks the fit at two more; ok is false when either is not affine.
// Forms are kept per loop and gain (the gain searches ask several times).
func (c *checker) affineForm(l *Loop, name string, k0 float64) affineForm {
	key := formKey{l, name}
	if f, ok := c.forms.Load(key); ok {
		return f.(affineForm)
	}
	f := c.fitAffine(l, name, k0)
	c.forms.Store(key, f)
	return f
}

func (c *checker) fitAffine(l *Loop, name string, k0 float64) affineForm {
	h := math.Max(math.Abs(k0), 1)
	ks := []float64{k0, k0 + 0.37*h, k0 - 0.61*h, k0 + 1.43*h}
	var nums, dens []poly.Poly
	for _, k := range ks {
		open := l.Open // the loop as analysed, at the declared value
		if k != c.base.gain(name) || open.Num == nil {
			var ok bool
			if _, open, ok = c.loopAt(l, name, k); !ok {
				return affineForm{}
			}
		}
		nums, dens = append(nums, open.Num), append(dens, open.Den)
	}
	line := func(ps []poly.Poly) (a, b poly.Poly, scale, resid float64, ok bool) {
		b = ps[1].Sub(ps[0]).Scale(1 / (ks[1] - ks[0]))
		a = ps[0].Sub(b.Scale(k0))
		for _, p := range ps {
			scale = math.Max(scale, maxAbs(p))
		}
		for i := 2; i < len(ks); i++ {
			d := maxAbs(a.Add(b.Scale(ks[i] - k0)).Add(b.Scale(k0)).Sub(ps[i]))
			if !(d <= AffineTolerance*math.Max(scale, 1e-300)) {
				return nil, nil, 0, 0, false
			}
			resid = math.Max(resid, d)
		}
		return a, b, scale, resid, true
	}
	f := affineForm{k0: k0, h: h}
	var ok1, ok2 bool
	f.numA, f.numB, f.numScale, f.numResid, ok1 = line(nums)
	f.denA, f.denB, f.denScale, f.denResid, ok2 = line(dens)
	f.ok = ok1 && ok2
	return f
}

// gainLimits computes each gain's stable interval and safe maximum over the
// loops of this file that use it, then attaches gain fixes.
func (c *checker) gainLimits(ctx context.Context) {
	// This file's gains, then gains of used files that its loops depend on
	// (so that a fix may edit the file declaring the gain).
	gains := append([]*Gain(nil), c.res.Gains...)
	var used []string
	for name, d := range c.res.Scope {
		if d.Gain != nil && d.Path != c.res.Path {
			used = append(used, name)
		}
	}
	sort.Strings(used)
	for _, name := range used {
		gains = append(gains, c.res.Scope[name].Gain)
	}
	// Gains are independent of each other: each search only reads the
	// loops and the shared evaluator.
	using := loopsByGain(c.res.Loops)
	c.using = using
	deps := c.dependents()
	par.Each(len(gains), func(i int) {
		g := gains[i]
		if ctx.Err() != nil {
			return
		}
		if loops := using[g.Name]; len(loops) > 0 {
			g.Limits = c.memoLimits(g, loops, deps, func() *GainLimits { return c.limitsOf(g, loops) })
		}
	})
	c.attachFixes()
}

func (c *checker) limitsOf(g *Gain, loops []*Loop) *GainLimits {
	lim := &GainLimits{}
	for _, l := range loops {
		lim.Loops = append(lim.Loops, l.Name)
	}
	k0 := g.Value
	iv, err := c.interval(g.Name, k0, loops)
	if err != nil {
		lim.SafeMaxNote = "no stable interval could be computed"
		if strings.Contains(err.Error(), "non-finite") {
			lim.SafeMaxNote += ": the loop's polynomials overflow for large values of the gain"
		}
		return lim
	}
	lim.StableMin, lim.StableMax, lim.Exact, lim.CurrentStable, lim.Found = iv.Lo, iv.Hi, iv.Exact, iv.ContainsCurrent, iv.Found
	c.snapEnds(g.Name, loops, lim.StableMin, lim.StableMax)
	c.safeMax(g, loops, lim)
	return lim
}

// interval finds the stable interval of gain name over the loops using it:
// by D-decomposition on the frequency response when the gain scales L
// (scalingInterval); by the exact affine method on the characteristic
// polynomials when they are affine in the gain and of low order
// (MaxAffineDegree), each end then verified by an eigenvalue check; by the
// D-decomposition of the gain axis when they are polynomial of low degree
// in the gain (polyInterval); and otherwise by a march with eigenvalue
// checks (numericInterval).
func (c *checker) interval(name string, k0 float64, loops []*Loop) (gainlimit.Interval, error) {
	if iv, ok := c.scalingInterval(name, k0, loops); ok {
		return iv, nil
	}
	if iv, ok := c.affineInterval(name, k0, loops); ok {
		return iv, nil
	}
	if iv, ok := c.polyInterval(name, k0, loops); ok {
		return iv, nil
	}
	return c.numericInterval(name, k0, loops)
}

// affineInterval intersects the exact per-loop intervals when every loop is
// affine in the gain and of degree at most MaxAffineDegree, and verifies
// the result's ends just inside by eigenvalue checks.
func (c *checker) affineInterval(name string, k0 float64, loops []*Loop) (gainlimit.Interval, bool) {
	out := gainlimit.Interval{Exact: true, ContainsCurrent: true, Found: true}
	for _, l := range loops {
		a, b, ok := c.affine(l, name, k0)
		if !ok || max(a.Degree(), b.Degree()) > MaxAffineDegree {
			return out, false
		}
		iv, err := gainlimit.Affine(a, b, k0)
		if err != nil || !iv.Exact {
			return out, false
		}
		out.ContainsCurrent = out.ContainsCurrent && iv.ContainsCurrent
		out.Found = out.Found && iv.Found
		if iv.Lo != nil && (out.Lo == nil || *iv.Lo > *out.Lo) {
			out.Lo = iv.Lo
		}
		if iv.Hi != nil && (out.Hi == nil || *iv.Hi < *out.Hi) {
			out.Hi = iv.Hi
		}
	}
	if out.Lo != nil && out.Hi != nil && *out.Lo >= *out.Hi {
		out.Found = false
	}
	if len(loops) > 1 && !out.ContainsCurrent {
		return out, false // nearest intervals of different loops need not overlap
	}
	if out.Found && !c.verifiedEnds(name, out.Lo, out.Hi, loops) {
		return out, false
	}
	return out, true
}

// meets reports whether every loop is stable with gain name = k and keeps
// its required gain margin.
func (c *checker) meets(name string, k float64, loops []*Loop) bool {
	return c.excess(name, k, loops) >= 0
}

// SafeMaxTolerance is the relative width at which the search for the
// largest safe gain stops. The value offered to the user is then rounded
// down to three significant figures, so 1e-4 loses nothing and keeps the
// search to a dozen margin computations.
const SafeMaxTolerance = 1e-4

// largestMeeting finds the switch point in [lo, hi] (f ≥ 0 at lo, not at
// hi; f is NaN where a loop is unstable) to SafeMaxTolerance and returns
// the last value known to pass. Where f is defined at both ends it steps by
// the Illinois variant of regula falsi (the margin in dB is smooth in the
// gain, so this takes a handful of steps); otherwise it bisects.
//
// flo is f's value at lo, already computed by the caller; fhi is f's value
// at hi when known without computing it (NaN otherwise): at a stability
// limit a closed-loop pole sits on the circle, L = −1 there, so the gain
// margin is 0 dB and the excess is minus the requirement.
func largestMeeting(f func(float64) float64, lo, hi, flo, fhi float64) float64 {
	side := 0
	for i := 0; i < 100 && hi-lo > SafeMaxTolerance*math.Max(math.Abs(lo), math.Abs(hi)); i++ {
		mid := lo + (hi-lo)/2
		if !math.IsNaN(fhi) && !math.IsInf(flo, 0) && flo > fhi {
			mid = lo + (hi-lo)*flo/(flo-fhi)
			// Stay clear of the ends so the bracket always shrinks.
			w := hi - lo
			mid = math.Min(math.Max(mid, lo+0.01*w), hi-0.01*w)
		}
		fm := f(mid)
		if fm >= 0 {
			lo, flo = mid, fm
			if side == 1 {
				fhi /= 2
			}
			side = 1
		} else {
			hi, fhi = mid, fm
			if side == -1 {
				flo /= 2
			}
			side = -1
		}
	}
	return lo
}

func (c *checker) maxRequiredGM(loops []*Loop) float64 {
	m := 0.0
	for _, l := range loops {
		m = math.Max(m, c.requiredGM(l))
	}
	return m
}

func maxAbs(p poly.Poly) float64 {
	m := 0.0
	for _, v := range p {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// safeMax finds the largest value keeping stability and the required gain
// margin in every loop using the gain.
func (c *checker) safeMax(g *Gain, loops []*Loop, lim *GainLimits) {
	k0 := g.Value
	s := safeSearch{c: c, name: g.Name, loops: loops, lim: lim, raised: c.raised(g.Name, k0, loops)}
	if v, found := c.scalingSafeMax(g.Name, k0, loops, lim, s.raised); found {
		lim.SafeMax = &v
		return
	}
	if guess, found := s.raised.boundary(k0, lim); found {
		lo, hi := guess*(1-SafeMaxTolerance/4), guess*(1+SafeMaxTolerance/4)
		if guess < 0 {
			lo, hi = hi, lo
		}
		if s.ok(lo) && s.fails(hi) {
			lim.SafeMax = &lo // within SafeMaxTolerance of the switch
			return
		}
	}
	if !s.raised.fails(k0) {
		if e0 := s.excess(k0); e0 >= 0 {
			s.above(k0, e0)
			return
		}
	}
	s.below(k0)
}

// safeSearch is the search for one gain's safe value.
type safeSearch struct {
	c      *checker
	name   string
	loops  []*Loop
	lim    *GainLimits
	raised *raisedLoops
}

func (s *safeSearch) excess(k float64) float64 { return s.c.excess(s.name, k, s.loops) }

func (s *safeSearch) ok(k float64) bool { return s.excess(k) >= 0 }

// fails reports that k misses the margin: a raised loop unstable there
// proves it, else a full check shows it.
func (s *safeSearch) fails(k float64) bool { return s.raised.fails(k) || !s.ok(k) }

// fhi is the excess at the stability limit when hi is that limit (see
// largestMeeting), NaN otherwise.
func (s *safeSearch) fhi(hi float64) float64 {
	if s.lim.StableMax != nil && hi == *s.lim.StableMax {
		return -s.c.maxRequiredGM(s.loops)
	}
	return math.NaN()
}

// above searches up from k0, which passes with excess e0: to the stability
// limit, or to the first failing value of a doubling march.
func (s *safeSearch) above(k0, e0 float64) {
	hi := 0.0
	if s.lim.StableMax != nil {
		hi = *s.lim.StableMax
	} else {
		// No stability limit above: look for a margin limit within
		// a million times the current size.
		step := math.Max(math.Abs(k0), 1e-6)
		found := false
		for i := 0; i < 20; i++ {
			hi = k0 + step*math.Pow(2, float64(i))
			if s.fails(hi) {
				found = true
				break
			}
		}
		if !found {
			s.lim.SafeMaxNote = "no finite upper limit found: every loop keeps its gain margin as the gain grows"
			return
		}
	}
	v := largestMeeting(s.excess, k0, hi, e0, s.fhi(hi))
	s.lim.SafeMax = &v
}

// belowDepth is how far the search below a failing value goes: candidates
// down to 2^−20 (about a millionth) of it, and as far below it as 2^20/64
// times its size. A gain a millionth of the one written is not a fix the
// engineer would take, and every candidate costs a certificate or a check.
const belowDepth = 20

// below handles a failing current value: it looks below it, inside the
// stable interval when one is known, for a value that passes, then
// bisects up to the switch point.
func (s *safeSearch) below(k0 float64) {
	lim := s.lim
	top := k0
	floor := math.Inf(-1)
	if lim.Found {
		if lim.StableMax != nil && *lim.StableMax < top {
			top = *lim.StableMax
		}
		if lim.StableMin != nil {
			floor = *lim.StableMin
		}
	}
	step := math.Max(math.Abs(k0), 1e-6) / 64
	var cands []float64
	for i := 0; i < belowDepth; i++ {
		cands = append(cands, top-step*math.Pow(2, float64(i)))
		if k0 > 0 {
			cands = append(cands, top*math.Pow(0.5, float64(i+1)))
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(cands)))
	for _, lo := range cands {
		if lo <= floor || lo >= top || s.raised.fails(lo) {
			continue // raised.fails: a full check would fail too
		}
		if e := s.excess(lo); e >= 0 {
			v := largestMeeting(s.excess, lo, top, e, s.fhi(top))
			lim.SafeMax = &v
			return
		}
	}
	lim.SafeMaxNote = "no value from the current one down to a millionth of it keeps every loop stable with its required gain margin"
}

// attachFixes adds "set the gain" and "cap the gain" edits to the loop
// diagnostics that asked for them.
func (c *checker) attachFixes() {
	for _, p := range c.pending {
		x := &c.diags.list[p.diag]
		for _, name := range p.loop.Gains {
			d := c.res.Scope[name]
			if d == nil || d.Gain == nil || d.Gain.Limits == nil || d.Gain.Stmt.Value == nil || d.Gain.Vary != nil {
				continue // a varying gain is the plant's, not the engineer's to set
			}
			g := d.Gain
			if p.metric != "" && p.metric != "gain_margin" {
				c.requirementFix(x, g, p)
				continue
			}
			if f, ok := c.gainFix(g, c.requiredGM(p.loop)); ok {
				x.Fixes = append(x.Fixes, f)
			}
			if f, ok := capGainFix(g); ok && p.stability {
				x.Fixes = append(x.Fixes, f)
			}
			lim := g.Limits
			hint := ""
			switch {
			case !lim.CurrentStable && lim.Found:
				hint = fmt.Sprintf("; the loop is stable only for %s", intervalText(name, lim))
			case !lim.CurrentStable:
				hint = fmt.Sprintf("; no value of %s alone makes it stable", name)
			case lim.SafeMax == nil && lim.StableMax != nil:
				hint = fmt.Sprintf("; %s < %s keeps the loop stable", name, fmtNum(*lim.StableMax))
			}
			if lim.SafeMax != nil {
				hint += fmt.Sprintf("; %s ≤ %s keeps the required gain margin", name, fmtNum(roundDown(*lim.SafeMax)))
			}
			hint += g.fitHint()
			x.Message += hint
		}
	}
}

// setGainFix sets the gain's value to its safe maximum (rounded down to
// three significant figures, so it stays on the safe side).
func setGainFix(g *Gain, gm float64) (Fix, bool) {
	lim := g.Limits
	if lim.SafeMax == nil {
		return Fix{}, false
	}
	v := roundDown(*lim.SafeMax)
	if v == g.Value {
		return Fix{}, false
	}
	f := Fix{Title: fmt.Sprintf("Set %s to %s (largest value with %s dB gain margin)", g.Name, fmtNum(v), fmtNum(gm)),
		Edits: []Edit{{Path: g.Path, Span: g.Stmt.Value.Span, NewText: fmtNum(v)}}}
	if g.Max != nil && v > *g.Max || g.Min != nil && v < *g.Min {
		return Fix{}, false
	}
	return f, true
}

// capGainFix writes `max L` with L the stability limit rounded down, and
// lowers the value below it when needed, so the declared range holds only
// stable values.
func capGainFix(g *Gain) (Fix, bool) {
	lim := g.Limits
	if lim.StableMax == nil || !lim.Found {
		return Fix{}, false
	}
	cap := roundDown(*lim.StableMax * (1 - 1e-9))
	if cap >= *lim.StableMax {
		return Fix{}, false
	}
	if g.Max != nil && *g.Max <= cap {
		return Fix{}, false
	}
	s := g.Stmt
	var edits []Edit
	if s.Max != nil {
		edits = append(edits, Edit{Path: g.Path, Span: s.Max.Span, NewText: fmtNum(cap)})
	} else {
		at := s.Value.To
		if s.Min != nil && s.Min.To > at {
			at = s.Min.To
		}
		edits = append(edits, Edit{Path: g.Path, Span: syntax.Span{From: at, To: at}, NewText: " max " + fmtNum(cap)})
	}
	if g.Value >= cap {
		v := cap
		if lim.SafeMax != nil && *lim.SafeMax < cap {
			v = roundDown(*lim.SafeMax)
		} else {
			v = roundDown(cap * 0.5)
		}
		edits = append([]Edit{{Path: g.Path, Span: s.Value.Span, NewText: fmtNum(v)}}, edits...)
	}
	return Fix{Title: fmt.Sprintf("Cap %s below its stability limit (max %s)", g.Name, fmtNum(cap)), Edits: edits}, true
}

// ZeroSnap: when the gain at zero leaves a pole on the unit circle (an
// integrator in a loop the gain opens), zero is an exact end of the stable
// interval; the computed end carries the rounding of an expanded
// polynomial, up to ~1e-5 of the interval's width when the plant's
// coefficients are small. An end within ZeroSnap of zero, relative to the
// interval's width, is then zero.
const ZeroSnap = 1e-3

// openOnCircle reports whether some loop has a closed-loop pole on the unit
// circle with the gain set to zero.
func (c *checker) openOnCircle(name string, loops []*Loop) bool {
	onCircle := func(ps []lti.Pole) bool {
		for _, p := range ps {
			if p.Place(c.env.Options.Tolerance) == lti.OnCircle {
				return true
			}
		}
		return false
	}
	for _, l := range loops {
		// The common poles (a block pole matched by a zero: an integrator
		// the gain at zero cuts out) are exact closed-loop poles; one on the
		// circle answers without the eigenvalues of the rest.
		m, ok := c.modelAt(l, name, 0)
		if !ok {
			continue
		}
		if onCircle(m.Common()) {
			return true
		}
		if ps, err := m.Poles(); err == nil && onCircle(ps) {
			return true
		}
	}
	return false
}

// snapEnds sets an end of the interval (lo, hi) of gain name to zero when
// it lies within ZeroSnap of it and some loop has a pole on the circle at
// zero. The eigenvalue check at zero runs only when an end is that close:
// otherwise its answer changes nothing.
func (c *checker) snapEnds(name string, loops []*Loop, lo, hi *float64) {
	if (nearZero(lo, hi) || nearZero(hi, lo)) && c.openOnCircle(name, loops) {
		snapZero(lo, hi)
		snapZero(hi, lo)
	}
}

func nearZero(end, other *float64) bool {
	return end != nil && other != nil && math.Abs(*end) <= ZeroSnap*math.Abs(*other-*end)
}

func snapZero(end, other *float64) {
	if nearZero(end, other) {
		*end = 0
	}
}
