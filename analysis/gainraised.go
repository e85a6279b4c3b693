package analysis

import (
	"math"

	"ringside/analysis/gainlimit"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
)

// raisedGuard: a value closer than this (relative) to a boundary of a
// raised loop's spans is never ruled out by the spans (the boundaries come
// from an affine fit good to AffineTolerance, and its roots lose some
// digits more).
const raisedGuard = 1e-6

// raisedLoops holds, for a gain on which every loop's characteristic
// polynomial is affine and of low order, the loops with L raised by their
// required gain margin r (L·10^(r/20)), as D-decompositions of the gain
// axis (gainlimit.AffineSpans).
//
// Why they bound the safe value: let the loop be stable at k with gain
// margin GM ≥ r dB (the phase crossing nearest 0 dB). Were the raised loop
// unstable at k, a pole of 1 + β·L would cross the circle for some factor
// β in (1, 10^(r/20)), where β·L = −1: a phase crossing with a margin in
// (0, r) dB, so GM < r. Hence a value at which a raised loop is unstable
// cannot keep the margin. (The converse fails on conditionally stable
// loops, so a boundary of the raised loops is only a guess to verify.)
type raisedLoops struct {
	c     *checker
	name  string
	loops []*Loop
	alpha []float64
	a, b  []poly.Poly // raised characteristic polynomial a + k·b per loop
	iv    []gainlimit.Interval
	spans [][]gainlimit.Span
	// unstable caches the eigenvalue check of a span (loop, span index):
	// true when the raised loop is certainly unstable inside it.
	unstable map[[2]int]bool
}

// raised returns the raised loops, or nil when some loop's
// characteristic polynomial is not affine in the gain or above
// MaxAffineDegree.
func (c *checker) raised(name string, k0 float64, loops []*Loop) *raisedLoops {
	r := &raisedLoops{c: c, name: name, loops: loops, unstable: map[[2]int]bool{}}
	for _, l := range loops {
		alpha := math.Pow(10, c.requiredGM(l)/20)
		a, b, ok := c.affineScaled(l, name, k0, alpha)
		if !ok || max(a.Degree(), b.Degree()) > MaxAffineDegree {
			return nil
		}
		iv, spans, err := gainlimit.AffineSpans(a, b, k0)
		if err != nil {
			return nil
		}
		r.alpha = append(r.alpha, alpha)
		r.a, r.b = append(r.a, a), append(r.b, b)
		r.iv, r.spans = append(r.iv, iv), append(r.spans, spans)
	}
	return r
}

// boundary returns the value where the required gain margin runs out: the
// upper end of each raised loop's stable interval (around k0 when k0 is
// raised-stable, otherwise the nearest one below), the smallest over the
// loops and the stability limit. It is a guess that the caller verifies:
// the margin convention (the crossing nearest 0 dB) can differ on
// conditionally stable loops.
func (r *raisedLoops) boundary(k0 float64, lim *GainLimits) (float64, bool) {
	if r == nil || !lim.Exact {
		return 0, false
	}
	best := math.Inf(1)
	for _, iv := range r.iv {
		if !iv.Found || iv.Hi == nil {
			return 0, false
		}
		if !iv.ContainsCurrent && *iv.Hi > k0 {
			return 0, false
		}
		best = math.Min(best, *iv.Hi)
	}
	if lim.StableMax != nil {
		best = math.Min(best, *lim.StableMax)
	}
	return best, !math.IsInf(best, 1) && best != 0
}

// fails reports whether k provably misses the required gain margin
// because some raised loop is unstable there: k lies inside one of its
// spans, clear of the ends, whose instability an eigenvalue check has
// confirmed, and the Schur–Cohn test of the raised polynomial at k itself
// agrees (so a boundary lost between the span's ends cannot hide a
// stable stretch). False means "not ruled out", never "meets".
func (r *raisedLoops) fails(k float64) bool {
	if r == nil {
		return false
	}
	for i := range r.loops {
		j := spanAt(r.spans[i], k)
		if j < 0 || r.spans[i][j].Stable || !r.spanUnstable(i, j) {
			continue
		}
		p := r.a[i].Add(r.b[i].Scale(k))
		deg := max(r.a[i].Degree(), r.b[i].Degree())
		if p.Degree() < deg {
			return true // a root went to infinity
		}
		if st, err := gainlimit.SchurStable(p); err == nil && !st {
			return true
		}
	}
	return false
}

// spanAt is the index of the span holding k clear of its ends, or -1.
func spanAt(spans []gainlimit.Span, k float64) int {
	for j, s := range spans {
		if s.Lo != nil && !(k-*s.Lo > raisedGuard*math.Max(math.Abs(k), math.Abs(*s.Lo))) {
			continue
		}
		if s.Hi != nil && !(*s.Hi-k > raisedGuard*math.Max(math.Abs(k), math.Abs(*s.Hi))) {
			continue
		}
		return j
	}
	return -1
}

// spanUnstable checks span j of loop i once: the raised loop, built from
// its blocks like every trial model, is certainly unstable at the span's
// midpoint (or a step beyond its single end).
func (r *raisedLoops) spanUnstable(i, j int) bool {
	key := [2]int{i, j}
	if v, ok := r.unstable[key]; ok {
		return v
	}
	s := r.spans[i][j]
	k := inner(s.Lo, s.Hi, 0.5)
	m, ok := r.c.modelScaled(r.loops[i], r.name, k, r.alpha[i])
	v := false
	if ok {
		if ps, err := m.Poles(); err == nil {
			verdict, _ := lti.Decide(ps, r.c.env.Options.Tolerance)
			v = verdict == lti.Unstable
		}
	}
	r.unstable[key] = v
	return v
}
