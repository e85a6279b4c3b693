package analysis

import (
	"math"
	"sort"

	"ringside/analysis/gainlimit"
	"ringside/analysis/poly"
)

// MaxDDecompDegree is the highest characteristic-polynomial degree in z
// for which polyInterval evaluates the expanded polynomial on the circle
// (gainlimit.DBoundary widens its test for a real root by the rounding
// bound of that evaluation, and gives up where rounding swamps it); it
// keeps the ω grid, 48 points per degree, to a few thousand points.
// Beyond it, the march with eigenvalue checks.
const MaxDDecompDegree = 40

// gainNodes are the points s = (k − k0)/h at which a loop's characteristic
// polynomial is evaluated to fit it as a polynomial in s: distinct, spread
// over [−1.5, 1.5] so the Vandermonde systems stay well conditioned; the
// first D+1 fit degree D and the rest check it.
var gainNodes = []float64{0, 1, -1, 0.5, -1.5, 1.5, -0.5}

// gainFitSpread widens the fit's nodes to k0 ± 24·max(|k0|, 1): a
// dependence that only looks polynomial near k0 (e^{−kT} of a gain inside
// a ZOH s block, to 1e-12 over a small range at a fast sample rate) must
// show its higher terms at the check points. A non-polynomial dependence
// that a degree-4 polynomial matches to gainFitTol over that whole range is
// taken as polynomial; its ends are still verified by eigenvalue checks.
const gainFitSpread = 16

// gainFitTol is the relative accuracy to which the fitted polynomial must
// reproduce the check points (as AffineTolerance: rounding of the products
// stays near 1e-13; a dependence of higher degree or not polynomial at all
// misses by O(1)).
const gainFitTol = AffineTolerance

// gainPolyForm fits loop l's characteristic polynomial as
// Σ_j s^j q[j](z), s = (k − k0)/h, of the lowest degree D ≤
// gainlimit.MaxGainDegree that reproduces every evaluation; ok is false
// when none does (the gain sits inside a discretized s block, say, where
// the dependence is not polynomial).
func (c *checker) gainPolyForm(l *Loop, name string, k0, h float64) ([]poly.Poly, bool) {
	var vals []poly.Poly
	scale := 0.0
	for _, s := range gainNodes {
		p, _, ok := c.loopAt(l, name, k0+h*s)
		if !ok || !p.Finite() {
			return nil, false
		}
		vals = append(vals, p)
		scale = math.Max(scale, maxAbs(p))
	}
	for d := 1; d <= gainlimit.MaxGainDegree && d+1 < len(gainNodes); d++ {
		q := fitInS(gainNodes[:d+1], vals[:d+1])
		good := true
		for i := d + 1; i < len(gainNodes) && good; i++ {
			good = evalInS(q, gainNodes[i]).Equal(vals[i], gainFitTol*math.Max(scale, 1e-300))
		}
		if good {
			return q, true
		}
	}
	return nil, false
}

// fitInS interpolates the polynomials vals at the nodes s coefficient by
// coefficient (Newton's divided differences, then expanded to powers of s).
func fitInS(s []float64, vals []poly.Poly) []poly.Poly {
	n := len(s)
	dd := append([]poly.Poly(nil), vals...)
	for j := 1; j < n; j++ {
		for i := n - 1; i >= j; i-- {
			dd[i] = dd[i].Sub(dd[i-1]).Scale(1 / (s[i] - s[i-j]))
		}
	}
	// Horner on the Newton form: q = dd[n−1]; q = q·(s − s[i]) + dd[i].
	q := []poly.Poly{dd[n-1]}
	for i := n - 2; i >= 0; i-- {
		next := make([]poly.Poly, len(q)+1)
		for j := range next {
			next[j] = poly.Poly{}
		}
		for j, c := range q {
			next[j+1] = next[j+1].Add(c)
			next[j] = next[j].Sub(c.Scale(s[i]))
		}
		next[0] = next[0].Add(dd[i])
		q = next
	}
	return q
}

func evalInS(q []poly.Poly, s float64) poly.Poly {
	out := poly.Poly{}
	for j := len(q) - 1; j >= 0; j-- {
		out = out.Scale(s).Add(q[j])
	}
	return out
}

// polyInterval is the stable interval of a gain on which every loop's
// characteristic polynomial is a polynomial of low degree (in the gain,
// ≤ gainlimit.MaxGainDegree; in z, ≤ MaxDDecompDegree), by Neimark's
// D-decomposition of the gain axis (gainlimit.DBoundary): between
// consecutive boundary candidates stability is constant, so one eigenvalue
// check of the loop models per span decides it; neighbouring stable spans
// are merged where the candidate between them is itself stable (a spurious
// candidate), and kept apart where it is not (an isolated unstable value,
// such as k = 0 with an integrator left on the circle). The chosen
// interval's ends are verified by eigenvalue checks just inside (no pole
// certainly outside) and just outside (not certainly stable). ok is false
// when the form does not fit or a check disagrees; the caller then marches.
func (c *checker) polyInterval(name string, k0 float64, loops []*Loop) (gainlimit.Interval, bool) {
	h := gainFitSpread * math.Max(math.Abs(k0), 1)
	cands := []float64{0}
	for _, l := range loops {
		q, ok := c.gainPolyForm(l, name, k0, h)
		if !ok {
			return gainlimit.Interval{}, false
		}
		for _, p := range q {
			if p.Degree() > MaxDDecompDegree {
				return gainlimit.Interval{}, false
			}
		}
		ss, err := gainlimit.DBoundary(q)
		if err != nil {
			return gainlimit.Interval{}, false
		}
		for _, s := range ss {
			cands = append(cands, k0+h*s)
		}
	}
	return c.mergedSpans(name, k0, loops, cands)
}

// mergedSpans decides stability on each span between the sorted candidates
// and at each candidate, joins stable spans across stable candidates, and
// returns the joined interval containing k0, or the nearest one, verified.
func (c *checker) mergedSpans(name string, k0 float64, loops []*Loop, cands []float64) (gainlimit.Interval, bool) {
	sort.Float64s(cands)
	var ks []float64
	for _, k := range cands {
		if math.IsNaN(k) || math.IsInf(k, 0) {
			continue
		}
		if len(ks) > 0 && math.Abs(k-ks[len(ks)-1]) <= scalingTol*math.Max(math.Abs(k), 1e-300) {
			continue
		}
		ks = append(ks, k)
	}
	var runs []gainlimit.Span // stable spans, joined across stable candidates
	open := false
	for i := 0; i <= len(ks); i++ {
		var lo, hi *float64
		if i > 0 {
			lo = &ks[i-1]
		}
		if i < len(ks) {
			hi = &ks[i]
		}
		if !c.stableAt(name, inner(lo, hi, 0.5), loops) {
			open = false
			continue
		}
		if open {
			runs[len(runs)-1].Hi = hi
		} else {
			runs = append(runs, gainlimit.Span{Lo: lo, Hi: hi, Stable: true})
		}
		open = hi != nil && c.stableAt(name, *hi, loops)
	}
	cur := c.stableAt(name, k0, loops)
	best := -1
	for i, r := range runs {
		if best < 0 || r.Distance(k0) < runs[best].Distance(k0) {
			best = i
		}
	}
	if best < 0 {
		if cur {
			return gainlimit.Interval{}, false // a check disagrees with the candidates
		}
		return gainlimit.Interval{Exact: true}, true
	}
	r := runs[best]
	contains := r.Contains(k0)
	if contains != cur || !c.verifiedEnds(name, r.Lo, r.Hi, loops) || !c.unstableBeyond(name, r.Lo, r.Hi, loops) {
		return gainlimit.Interval{}, false
	}
	return gainlimit.Interval{Lo: r.Lo, Hi: r.Hi, Exact: true, ContainsCurrent: contains, Found: true}, true
}

// unstableBeyond checks each end of (lo, hi): the loops must not be
// certainly stable at the end itself (a pole on the circle, or an isolated
// unstable value) or just outside it (a thousandth of the span out);
// otherwise the end is no boundary.
func (c *checker) unstableBeyond(name string, lo, hi *float64, loops []*Loop) bool {
	ok := func(end *float64, t float64) bool {
		return end == nil || !c.stableAt(name, *end, loops) || !c.stableAt(name, inner(lo, hi, t), loops)
	}
	return ok(lo, -1e-3) && ok(hi, 1+1e-3)
}
