// Package robust decides whether a loop stays stable for every value of its
// uncertain gains (a box: each gain over its own range), and finds the point
// of the box with the largest closed-loop pole radius.
//
// Methods, in order of preference:
//
//   - One gain entering the characteristic polynomial affinely: exact. The
//     stable interval of the gain (gainlimit.Affine: unit-circle crossings
//     of a + k·b and Schur–Cohn between them) must contain the whole range.
//   - Several gains entering it affinely (jointly: no products of varying
//     gains): the edge theorem (Bartlett, Hollot and Lin, "Root locations
//     of an entire polytope of polynomials: it suffices to check the edges",
//     Math. Control Signals Systems 1, 1988). The polynomials of the box
//     form a polytope; it is stable exactly when every exposed edge is, and
//     every exposed edge is the image of an edge of the box. Each of the
//     n·2^(n−1) box edges is an exact one-parameter problem (the same
//     stable interval). Corners alone are not enough.
//   - Otherwise (products of varying gains, a gain inside a discretized s
//     block): a grid over the box, refined by compass search near the worst
//     point. A grid can show instability (a point where a pole is outside)
//     but never stability between its points: the verdict is then
//     undecided (Stable nil), never "stable".
//
// The worst point: for the affine methods the largest pole radius over the
// box is attained on an edge (the edge theorem holds for every disk |z| < r,
// so the family is r-stable exactly when its edges are), so each edge is
// sampled at EdgeSamples points and the best samples of the refineEdges
// leading edges are refined by golden section; for the grid the compass
// search refines it.
package robust

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"ringside/analysis/gainlimit"
	"ringside/analysis/internal/search"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Family is a loop whose gains vary over a box.
type Family struct {
	Names  []string  // the varying gains
	Lo, Hi []float64 // the box: Lo[i] < Hi[i]
	// Char returns the closed-loop characteristic polynomial at a point of
	// the box, for the exact methods; ok is false when the loop cannot be
	// formed there. Nil when the expanded polynomial is not to be trusted
	// (a degree so high that its roots are ill-conditioned): the grid then
	// decides alone.
	Char func(x []float64) (p poly.Poly, ok bool)
	// Eval returns, from the loop's own model, the largest closed-loop pole
	// radius at a point and the verdict there (eigenvalues with error
	// bounds: lti.Undecided when a bound straddles the circle). The grid
	// uses it; nil: the grid takes the roots of Char, decided by Tolerance.
	Eval func(x []float64) (radius float64, v lti.Verdict, ok bool)
	// Tolerance: a pole with radius ≥ 1 − Tolerance counts as on or outside
	// the circle (the checker's verdict tolerance).
	Tolerance float64
	// Stop, when set and true, ends the analysis early with no verdict
	// (a cancelled request, a spent time budget).
	Stop func() bool
}

func (f Family) stopped() bool { return f.Stop != nil && f.Stop() }

// stoppedWhy is Result.Why of an analysis ended by Family.Stop.
const stoppedWhy = "the analysis was stopped (cancelled or out of its time budget) before it finished"

// Result is the verdict over the box and its worst point.
type Result struct {
	// Stable is nil when the method cannot decide (see Why).
	Stable *bool
	Method string
	Exact  bool   // the method proves or refutes stability (affine cases)
	Why    string // why Stable is nil
	// Worst is the point with the largest finite closed-loop pole radius
	// found, WorstRadius that radius.
	Worst       []float64
	WorstRadius float64
	// IllPosed is a point where the characteristic polynomial loses
	// degree (a pole at infinity: the loop is ill-posed there); nil when
	// none was met. Such a box is not stable.
	IllPosed []float64
	// Points are the points of the box examined (corners first), for
	// margins and plots; at most MaxPoints.
	Points [][]float64
	// Interval is, for one gain with the exact method, the gain's stable
	// interval (nil ends: unbounded).
	Interval *gainlimit.Interval

	// Grid bookkeeping: the first point certainly not stable (the worst
	// point, of the largest radius, is then not stable either unless its own
	// verdict was undecided) and how many points were undecided.
	witness   []float64
	undecided int
}

const (
	// AffineTol: the characteristic polynomial counts as affine in the
	// varying gains when it matches the affine model fitted at the corners
	// to this relative accuracy at two further points (rounding in
	// polynomial products stays near 1e-13; a product of two varying gains
	// or a gain inside a discretized block misses by O(1)).
	AffineTol = 1e-9
	// EdgeSamples is the number of points per edge (corners included) at
	// which the radius is sampled before the best one is refined.
	EdgeSamples = 17
	// RefineTol is the width, relative to a gain's range, to which golden
	// section narrows the worst point along an edge (radius errors then
	// are of the order of the radius' slope times this, below 1e-9 in all
	// loops tried; see the tests' numpy cross-check at 1e-6).
	RefineTol = 1e-10
	// MaxGridPoints bounds the grid method (points of the box evaluated
	// before refinement; each is a full evaluation of the loop, a
	// discretization included); see GridSize.
	MaxGridPoints = 1024
	// MaxGridGains is the most varying gains the grid takes (3^6 = 729
	// points); beyond it a box without an exact method is undecided.
	MaxGridGains = 6
	// MaxPoints bounds Result.Points.
	MaxPoints = 256
	// MaxGains is the most varying gains in one loop: the edge count
	// n·2^(n−1) is 1024 at 8.
	MaxGains = 8
	// compassLevels: the compass search halves its step from half a grid
	// spacing this many times (to 1/8192 of a spacing).
	compassLevels = 13
	// maxCompassEvals bounds the compass search's evaluations of the loop.
	maxCompassEvals = 400
)

// Analyse decides stability over the box.
func Analyse(f Family) Result {
	n := len(f.Names)
	if n == 0 || n > MaxGains {
		return Result{Method: "none", Why: fmt.Sprintf("%d varying gains in one loop; at most %d are analysed", n, MaxGains), WorstRadius: math.NaN()}
	}
	if f.Char != nil {
		if m, ok, why := fit(f); ok {
			return m.edges(f)
		} else if why != "" {
			return Result{Method: "none", Why: why, WorstRadius: math.NaN()}
		}
	}
	return grid(f)
}

// radius is the largest root modulus of p, +Inf when p has lost degree
// against deg (a root went to infinity). Companion eigenvalues without
// polishing: simple roots to ~1e-15 relative, a double root to ~1e-8, far
// inside the 1e-6 the worst point is checked to (the verdict never rests on
// it alone: it comes from the stable intervals).
func radius(p poly.Poly, deg int) float64 {
	if p.Degree() < deg {
		return math.Inf(1)
	}
	if deg < 1 {
		return 0
	}
	rs, ok := roots.Companion(p)
	if !ok {
		return math.NaN()
	}
	m := 0.0
	for _, z := range rs {
		m = math.Max(m, cmplx.Abs(z))
	}
	return m
}

// affine is c(x) = c0 + Σ (x_i − lo_i)·c_i.
type affine struct {
	c0  poly.Poly
	c   []poly.Poly
	lo  []float64
	deg int
}

func (m affine) at(x []float64) poly.Poly {
	p := m.c0
	for i, ci := range m.c {
		p = p.Add(ci.Scale(x[i] - m.lo[i]))
	}
	return p
}

// fit builds the affine model from the corner lo and its n neighbours and
// checks it at the far corner and at an inner point with unequal weights
// (a cross term x_i·x_j or a curved dependence shows at one of them).
// why is set when the loop cannot be formed at all.
func fit(f Family) (affine, bool, string) {
	n := len(f.Names)
	c0, ok := f.Char(f.Lo)
	if !ok {
		return affine{}, false, "the loop cannot be formed at " + pointText(f.Names, f.Lo)
	}
	m := affine{c0: c0, lo: f.Lo, c: make([]poly.Poly, n)}
	scale := maxAbs(c0)
	for i := range f.Names {
		x := append([]float64(nil), f.Lo...)
		x[i] = f.Hi[i]
		p, ok := f.Char(x)
		if !ok {
			return affine{}, false, "the loop cannot be formed at " + pointText(f.Names, x)
		}
		scale = math.Max(scale, maxAbs(p))
		m.c[i] = p.Sub(c0).Scale(1 / (f.Hi[i] - f.Lo[i]))
	}
	checks := [][]float64{append([]float64(nil), f.Hi...), make([]float64, n)}
	for i := range f.Names {
		w := math.Mod(0.618034*float64(i+1), 1)
		checks[1][i] = f.Lo[i] + w*(f.Hi[i]-f.Lo[i])
	}
	if n == 1 {
		checks[0][0] = f.Lo[0] + 0.37*(f.Hi[0]-f.Lo[0])
	}
	for _, x := range checks {
		p, ok := f.Char(x)
		if !ok {
			return affine{}, false, "the loop cannot be formed at " + pointText(f.Names, x)
		}
		if !p.Equal(m.at(x), AffineTol*math.Max(scale, math.Max(maxAbs(p), 1e-300))) {
			return affine{}, false, ""
		}
	}
	// The degree the family should keep: the largest at any corner.
	for _, x := range corners(f.Lo, f.Hi) {
		m.deg = max(m.deg, m.at(x).Degree())
	}
	return m, true, ""
}

// edge is one edge of the box: dimension dim, the other coordinates at a
// corner.
type edge struct {
	dim  int
	base []float64 // the corner with x[dim] = lo[dim]
}

func edgesOf(lo, hi []float64) []edge {
	var out []edge
	n := len(lo)
	for d := 0; d < n; d++ {
		for mask := 0; mask < 1<<(n-1); mask++ {
			x := append([]float64(nil), lo...)
			bit := 0
			for j := 0; j < n; j++ {
				if j == d {
					continue
				}
				if mask>>bit&1 == 1 {
					x[j] = hi[j]
				}
				bit++
			}
			out = append(out, edge{d, x})
		}
	}
	return out
}

func corners(lo, hi []float64) [][]float64 {
	n := len(lo)
	var out [][]float64
	for mask := 0; mask < 1<<n; mask++ {
		x := make([]float64, n)
		for j := range x {
			x[j] = lo[j]
			if mask>>j&1 == 1 {
				x[j] = hi[j]
			}
		}
		out = append(out, x)
	}
	return out
}

func (e edge) point(f Family, t float64) []float64 {
	x := append([]float64(nil), e.base...)
	x[e.dim] = f.Lo[e.dim] + t*(f.Hi[e.dim]-f.Lo[e.dim])
	return x
}

// edges runs the exact method: the stable interval of the edge's gain,
// with the others at the edge's corner, must contain the gain's range.
func (m affine) edges(f Family) Result {
	n := len(f.Names)
	es := edgesOf(f.Lo, f.Hi)
	res := Result{Exact: true, WorstRadius: -1}
	if n == 1 {
		res.Method = fmt.Sprintf("exact: stable interval of %s (affine characteristic polynomial, unit-circle crossings and Schur–Cohn)", f.Names[0])
	} else {
		res.Method = fmt.Sprintf("edge theorem (Bartlett, Hollot and Lin 1988): %d edges of the box, each exact as the stable interval of one gain", len(es))
	}
	stable := true
	for _, x := range corners(f.Lo, f.Hi) {
		res.add(x)
	}
	var cands []edgeBest
	for _, e := range es {
		if f.stopped() {
			return Result{Method: res.Method, Why: stoppedWhy, WorstRadius: math.NaN()}
		}
		d := e.dim
		// c = A + k·B along the edge, k the gain's own value.
		x0 := append([]float64(nil), e.base...)
		x0[d] = 0
		mid := f.Lo[d] + (f.Hi[d]-f.Lo[d])/2
		ok, iv, exact := edgeStable(m.at(x0), m.c[d], mid, f.Lo[d], f.Hi[d], m.deg)
		if !exact {
			res.Exact = false
		}
		if n == 1 && iv != nil {
			res.Interval = iv
		}
		stable = stable && ok
		cands = append(cands, m.sampleEdge(f, e, &res, ok, iv))
	}
	m.refineWorst(f, cands, &res)
	if !res.Exact {
		res.Method += "; not exact on every edge (some interval ends found by bisection)"
	}
	switch {
	case res.WorstRadius >= 1-f.Tolerance || res.IllPosed != nil:
		stable = false // a point with a pole on or outside the circle, or at infinity
	case !res.Exact:
		res.Why = "an edge's stable interval could not be computed exactly (its ends were found by bisection) and no point with a pole on or outside the circle was found"
		return res
	}
	res.Stable = &stable
	return res
}

// edgeStable reports whether c(k) = a + k·b is stable for every k in
// [lo, hi], with the stable interval around mid; exact is false when
// gainlimit fell back to bisection.
func edgeStable(a, b poly.Poly, mid, lo, hi float64, deg int) (ok bool, iv *gainlimit.Interval, exact bool) {
	if max(a.Degree(), b.Degree()) < deg {
		return false, nil, true // degree lost along the whole edge: a pole at infinity
	}
	if b.Trim().IsZero() {
		st, err := gainlimit.SchurStable(a)
		return err == nil && st, nil, err == nil
	}
	v, err := gainlimit.Affine(a, b, mid)
	if err != nil {
		return false, nil, false
	}
	ok = v.Found && v.ContainsCurrent && (v.Lo == nil || *v.Lo < lo) && (v.Hi == nil || *v.Hi > hi)
	return ok, &v, v.Exact
}

// edgeBest is the best sample of one edge.
type edgeBest struct {
	e      edge
	t, rad float64
}

// sampleEdge samples the radius along an edge at EdgeSamples points. On an
// unstable edge it also samples just beyond the ends of the stable
// interval, so that a narrow unstable stretch is met.
func (m affine) sampleEdge(f Family, e edge, res *Result, stable bool, iv *gainlimit.Interval) edgeBest {
	var ts []float64
	for i := 0; i < EdgeSamples; i++ {
		ts = append(ts, float64(i)/float64(EdgeSamples-1))
	}
	if !stable && iv != nil {
		w := f.Hi[e.dim] - f.Lo[e.dim]
		for _, end := range []*float64{iv.Lo, iv.Hi} {
			if end == nil {
				continue
			}
			t := (*end - f.Lo[e.dim]) / w
			for _, s := range []float64{-1e-6, 1e-6, -1e-3, 1e-3} {
				if u := t + s; u >= 0 && u <= 1 {
					ts = append(ts, u)
				}
			}
		}
	}
	best := edgeBest{e: e, rad: -1}
	for i, t := range ts {
		v := m.edgeRadius(f, e, t)
		if math.IsInf(v, 1) {
			res.offer(e.point(f, t), v)
		} else if v > best.rad {
			best.t, best.rad = t, v
		}
		if i < EdgeSamples && i%4 == 2 {
			res.add(e.point(f, t))
		}
	}
	return best
}

func (m affine) edgeRadius(f Family, e edge, t float64) float64 {
	return radius(m.at(e.point(f, t)), m.deg)
}

// refineEdges is how many edges, best sample first, golden section refines.
// The others' best samples trail by more than the refinement can add
// unless two edges peak within a sample spacing of each other's value.
const refineEdges = 3

// refineWorst refines the best samples of the leading edges by golden
// section and keeps the largest radius found.
func (m affine) refineWorst(f Family, cands []edgeBest, res *Result) {
	sort.Slice(cands, func(i, j int) bool { return cands[i].rad > cands[j].rad })
	for k, c := range cands {
		if c.rad < 0 {
			continue // no finite sample on this edge
		}
		if k < refineEdges {
			h := 1 / float64(EdgeSamples-1)
			r := func(t float64) float64 {
				v := m.edgeRadius(f, c.e, t)
				if math.IsInf(v, 1) || math.IsNaN(v) {
					return -1 // golden section keeps to the finite side
				}
				return v
			}
			t := search.GoldenMax(r, math.Max(c.t-h, 0), math.Min(c.t+h, 1), RefineTol)
			if v := r(t); v > c.rad {
				c.t, c.rad = t, v
			}
		}
		res.offer(c.e.point(f, c.t), c.rad)
	}
}

// offer records a point and its radius: the worst point when it beats it,
// the ill-posed point when the radius is infinite; NaN (no roots) is not
// recorded.
func (r *Result) offer(x []float64, v float64) bool {
	switch {
	case math.IsInf(v, 1):
		if r.IllPosed == nil {
			r.IllPosed = x
		}
	case v > r.WorstRadius:
		r.WorstRadius, r.Worst = v, x
		return true
	}
	return false
}

func (r *Result) add(x []float64) {
	if len(r.Points) < MaxPoints {
		r.Points = append(r.Points, x)
	}
}

// GridSize is the number of grid points per gain for n varying gains: the
// most that keeps the n-dimensional grid within MaxGridPoints, at least 3
// and at most 129: 129, 32, 10, 5, 4, 3 for n = 1 … 6.
func GridSize(n int) int {
	k := int(math.Floor(math.Pow(MaxGridPoints, 1/float64(n)) + 1e-9))
	return min(max(k, 3), 129)
}

// grid evaluates the loop on a grid over the box and refines the worst
// point by compass search. It can refute stability, never prove it.
func grid(f Family) Result {
	n := len(f.Names)
	if n > MaxGridGains {
		return Result{Method: "none", WorstRadius: math.NaN(), Why: fmt.Sprintf("%d varying gains enter the loop other than affinely (a product of varying gains, or a gain inside a discretized s block); no exact method applies and a grid is limited to %d gains", n, MaxGridGains)}
	}
	k := GridSize(n)
	total := 1
	for i := 0; i < n; i++ {
		total *= k
	}
	res := Result{WorstRadius: -1}
	dims := make([]string, n)
	for i := range dims {
		dims[i] = fmt.Sprint(k)
	}
	shape := fmt.Sprintf("grid of %d points (spacing 1/%d of the range)", total, k-1)
	if n > 1 {
		shape = fmt.Sprintf("grid %s = %d points (spacing 1/%d of each range)", strings.Join(dims, "×"), total, k-1)
	}
	res.Method = fmt.Sprintf("%s, refined near the worst point by compass search (steps down to 1/%d of a spacing, at most %d evaluations); a grid cannot prove stability between its points",
		shape, 1<<compassLevels, maxCompassEvals)
	eval := f.evaluator()
	for _, x := range corners(f.Lo, f.Hi) {
		res.add(x)
	}
	idx := make([]int, n)
	for c := 0; c < total; c++ {
		if c%64 == 0 && f.stopped() {
			return Result{Method: res.Method, Why: stoppedWhy, WorstRadius: math.NaN()}
		}
		x := make([]float64, n)
		for i := range x {
			x[i] = f.Lo[i] + float64(idx[i])/float64(k-1)*(f.Hi[i]-f.Lo[i])
		}
		v, verdict, ok := eval(x)
		if !ok {
			res.Method = "grid"
			res.Why = "the loop cannot be formed at " + pointText(f.Names, x)
			res.WorstRadius = math.NaN()
			return res
		}
		res.offer(x, v)
		res.count(x, verdict)
		if c%max(total/64, 1) == 0 {
			res.add(x)
		}
		for i := 0; i < n; i++ { // next index, odometer style
			if idx[i]++; idx[i] < k {
				break
			}
			idx[i] = 0
		}
	}
	res.compass(f, eval, k)
	if res.witness != nil || res.IllPosed != nil {
		st := false
		res.Stable = &st
		return res
	}
	why := "no exact method applies"
	if f.Char != nil {
		why = fmt.Sprintf("the closed-loop poles depend on %s other than affinely (a product of varying gains, or a gain inside a discretized s block), so no exact method applies", strings.Join(f.Names, ", "))
	} else {
		why = "the loop's characteristic polynomial is of too high a degree for the exact methods to be trusted, so no exact method applies"
	}
	if res.undecided > 0 {
		res.Why = fmt.Sprintf("%s; %d of the %d grid points are stable and at %d the verdict is undecided (a pole's error bound straddles the circle)", why, total-res.undecided, total, res.undecided)
	} else {
		res.Why = fmt.Sprintf("%s; every one of the %d grid points is stable, which does not prove the points between them are", why, total)
	}
	return res
}

// pointEval is the loop at one point: its largest pole radius and verdict.
type pointEval func(x []float64) (float64, lti.Verdict, bool)

// evaluator returns Eval, or the roots of Char decided by Tolerance.
func (f Family) evaluator() pointEval {
	if f.Eval != nil {
		return f.Eval
	}
	deg := -1
	for _, x := range corners(f.Lo, f.Hi) { // the degree to keep: the largest at any corner
		if p, ok := f.Char(x); ok {
			deg = max(deg, p.Degree())
		}
	}
	return func(x []float64) (float64, lti.Verdict, bool) {
		p, ok := f.Char(x)
		if !ok {
			return 0, 0, false
		}
		v := radius(p, deg)
		switch {
		case math.IsNaN(v):
			return 0, 0, false
		case v >= 1-f.Tolerance:
			return v, lti.Unstable, true
		}
		return v, lti.Stable, true
	}
}

// count records a grid point's verdict: the first point certainly on or
// outside the circle is the witness that the box is not stable.
func (r *Result) count(x []float64, v lti.Verdict) {
	switch v {
	case lti.Unstable, lti.Marginal:
		if r.witness == nil {
			r.witness = x
		}
	case lti.Undecided:
		r.undecided++
	}
}

// compass improves the worst point by coordinate steps, halving the step
// when no move helps.
func (r *Result) compass(f Family, eval pointEval, k int) {
	if r.Worst == nil {
		return
	}
	n := len(f.Names)
	step := 0.5 / float64(k-1)
	evals := 0
	for level := 0; level < compassLevels && evals < maxCompassEvals && !f.stopped(); {
		moved := false
		for i := 0; i < n && !moved; i++ {
			for _, s := range []float64{1, -1} {
				x := append([]float64(nil), r.Worst...)
				x[i] = math.Min(math.Max(x[i]+s*step*(f.Hi[i]-f.Lo[i]), f.Lo[i]), f.Hi[i])
				evals++
				v, verdict, ok := eval(x)
				if ok {
					r.count(x, verdict)
				}
				if ok && r.offer(x, v) {
					moved = true
					break
				}
			}
		}
		if !moved {
			step /= 2
			level++
		}
	}
}

func maxAbs(p poly.Poly) float64 {
	m := 0.0
	for _, v := range p {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// pointText writes a point as "k1 = 30, k2 = 0.5".
func pointText(names []string, x []float64) string {
	parts := make([]string, len(names))
	for i, n := range names {
		parts[i] = fmt.Sprintf("%s = %.6g", n, x[i])
	}
	return strings.Join(parts, ", ")
}
