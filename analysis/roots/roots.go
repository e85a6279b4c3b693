// Package roots finds every complex root of a real polynomial, with an
// error estimate, and groups repeated roots into clusters.
//
// Method. Exact zero roots (trailing zero low-order coefficients) are
// factored out first. The rest is rescaled by a power of two, z = 2^k·w, so
// that its roots lie near the unit circle (an exact change of variable).
// Degrees 1 and 2 are solved in closed form; higher degrees take the
// eigenvalues of the companion matrix of the monic rescaled polynomial with
// gonum's mat.Eigen. Its LAPACK-style Dgeev already balances the matrix
// (Dgebal with permutation and scaling, checked in gonum v0.17.0), so no
// second balancing is done here. The eigenvalue solver is backward stable
// for the companion matrix, which makes the roots those of a nearby
// polynomial (Edelman & Murakami 1995, "Polynomial roots from companion
// matrix eigenvalues").
//
// Each simple root is then polished by Newton's method on the original
// (unrounded) coefficients and the polished value is kept only if it lowers
// |p(z)|. Roots that cannot be told apart at working precision are grouped:
// a multiple root of multiplicity m splits under a relative coefficient
// perturbation η into m roots on a circle of radius about
// (η·Σ|c_i||z|^i / |p^(m)(z)/m!|)^(1/m) (first-order perturbation of a
// multiple root), so a group is accepted as one cluster when all its members
// lie within clusterSafety times that radius of their mean. The mean of a
// cluster is far more accurate than any member: the error terms of order
// η^(1/m) cancel in the sum, leaving an error of order η times the
// cluster's condition.
//
// Accuracy reached (measured by the tests): BackwardError ≤ 1e-14 for
// the repeated-root cases ((z−0.9)^4, (z−0.9)^8, (z−1)^2, (z+1)^3, repeated
// complex pairs) and for coefficient scales from 1e-300 to 1e300; 1.4e-14
// for the degree-20 Wilkinson polynomial, whose roots are then within 16·eps
// times their condition number of the integers; ≤ 3.5e-13 over 220 random
// polynomials of degree ≤ 20 cross-checked with numpy.roots; ≤ 4e-11 for
// random degree-40 polynomials (the companion eigenvalues alone give about
// 1e-8 there; polishing brings every residual to rounding level). Cluster
// means agree with the exact multiple root to 1e-12 or better, while the
// members are off by eps^(1/m).
package roots

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"ringside/analysis/poly"
)

// MaxDegree is the highest degree Find accepts; beyond it, an error. The
// companion eigenvalue method costs O(n³) and, more to the point, the roots
// of a higher-degree polynomial given by its coefficients in double
// precision are too ill-conditioned to mean anything for a control loop.
const MaxDegree = 64

// eps is the unit roundoff of float64.
const eps = 0x1p-52

// polishIterations bounds the Newton steps taken per simple root. Starting
// from a backward-stable eigenvalue, Newton converges quadratically, so two
// or three steps reach the attainable accuracy; the rest guards slow cases.
const polishIterations = 6

// clusterSafety multiplies the perturbation radius of a multiple root when
// deciding whether a group of roots is one cluster. The radius formula is a
// first-order estimate; a factor of a few absorbs its constant without
// merging roots that are resolved (a factor of 10 would merge the roots 15
// and 16 of the degree-20 Wilkinson polynomial, which are distinct).
const clusterSafety = 4

// clusterEtaFactor scales eps to the relative coefficient perturbation
// assumed for the clustering test: the companion eigenvalue solver has a
// backward error of a modest multiple of n·eps.
const clusterEtaFactor = 8

// Cluster is a group of roots that are one multiple root at working
// precision. Value is the mean of the members (exactly real for a real
// cluster); Multiplicity is how many roots it holds. Simple roots are
// clusters of one.
type Cluster struct {
	Value        complex128
	Multiplicity int
}

// Result holds the roots of a polynomial.
type Result struct {
	// Roots holds every root, repeated per multiplicity. Conjugate pairs are
	// exact conjugates, adjacent, the one with Im > 0 first; real roots have
	// Im exactly 0. Sorted by descending modulus, then by ascending |angle|.
	Roots []complex128
	// Clusters groups roots that form one multiple root at working
	// precision, in the order of their first member in Roots.
	Clusters []Cluster
	// BackwardError is max_i |c_i − ĉ_i| / max_i |c_i| between the monic
	// input c and the monic polynomial ĉ rebuilt from Roots. When the
	// monic input does not fit in float64, it is measured on the
	// power-of-two rescaled polynomial instead.
	BackwardError float64
}

// Find returns the roots of p. It fails for the zero polynomial, a
// non-finite coefficient, a degree above MaxDegree, roots whose modulus
// does not fit in float64, or coefficients too far apart in size to be
// rescaled around the roots' geometric mean without underflow. A nonzero
// constant has no roots.
func Find(p poly.Poly) (Result, error) {
	p = p.Trim()
	if !p.Finite() {
		return Result{}, errors.New("roots: polynomial has a non-finite coefficient")
	}
	if len(p) == 0 {
		return Result{}, errors.New("roots: the zero polynomial has no finite set of roots")
	}
	n := len(p) - 1
	if n > MaxDegree {
		return Result{}, fmt.Errorf("roots: degree %d exceeds the maximum %d", n, MaxDegree)
	}
	zeros := 0
	for zeros < n && p[zeros] == 0 {
		zeros++
	}
	q := p[zeros:]
	sc := rescale(q)
	if lost(sc.w[0]) || lost(sc.w[len(sc.w)-1]) {
		// The coefficients span more than the float64 exponent range
		// around the roots' geometric mean; an end that underflowed (to
		// zero or to a subnormal, losing its digits) would silently change
		// the degree, invent zero roots, or overflow the companion matrix.
		return Result{}, errors.New("roots: the coefficients span too wide a range for float64 (some root's modulus is out of range)")
	}

	wroots, err := scaledRoots(sc.w)
	if err != nil {
		return Result{}, err
	}
	pairs := toItems(wroots)
	eta := math.Max(clusterEtaFactor*float64(len(q))*eps, backwardError(sc.w, expand(pairs)))
	groups := cluster(sc.w, pairs, eta)
	for _, g := range groups {
		if g.n == 1 {
			it := &pairs[g.members[0]]
			it.z = polish(sc.w, it.z, it.pair)
		}
	}

	// Order and clusters are computed in w units (z = 2^k·w keeps moduli
	// in order and angles unchanged), then everything goes back to z.
	order := sortItems(pairs)
	rank := make([]int, len(pairs))
	for r, i := range order {
		rank[i] = r
	}
	var res Result
	res.Clusters = clusterValues(sc.w, sc.k, pairs, groups, rank)
	polishedW := expand(pairs) // in w units, for the fallback backward error
	for i := range pairs {
		pairs[i].z = scaleC(pairs[i].z, sc.k)
		if cmplx.IsInf(pairs[i].z) || cmplx.IsNaN(pairs[i].z) {
			return Result{}, errors.New("roots: a root's modulus exceeds the float64 range")
		}
	}
	for _, c := range res.Clusters {
		if cmplx.IsInf(c.Value) || cmplx.IsNaN(c.Value) {
			return Result{}, errors.New("roots: a root's modulus exceeds the float64 range")
		}
	}
	for _, i := range order {
		res.Roots = append(res.Roots, pairs[i].expand()...)
	}
	for range zeros {
		res.Roots = append(res.Roots, 0)
	}
	if zeros > 0 {
		res.Clusters = append(res.Clusters, Cluster{Value: 0, Multiplicity: zeros})
	}
	res.BackwardError = inputBackwardError(p, res.Roots, sc.w, polishedW)
	return res, nil
}

// scaledRoots returns the roots of the rescaled polynomial w: in closed
// form up to degree 2, as companion eigenvalues above.
func scaledRoots(w poly.Poly) ([]complex128, error) {
	switch len(w) - 1 {
	case 0:
		return nil, nil
	case 1:
		return []complex128{complex(-w[0]/w[1], 0)}, nil
	case 2:
		return quadratic(w[1]/w[2], w[0]/w[2]), nil
	}
	zs, err := companionRoots(w)
	if err != nil {
		return nil, err
	}
	for _, z := range zs {
		if cmplx.IsNaN(z) || cmplx.IsInf(z) {
			return nil, errors.New("roots: the eigenvalue iteration overflowed (coefficients too far apart in size)")
		}
	}
	return zs, nil
}

// scaled is q rescaled: w[i] = 2^(k·i − e)·q[i], the polynomial in w with
// z = 2^k·w, divided by a power of two so that its largest coefficient is
// near 1. Every step is exact (barring underflow of negligible terms).
type scaled struct {
	w poly.Poly
	k int
}

// rescale picks k so that the geometric mean of the root moduli,
// |q0/qn|^(1/n), becomes about 1, which evens out the coefficients.
func rescale(q poly.Poly) scaled {
	n := len(q) - 1
	k := 0
	if n > 0 {
		_, e0 := math.Frexp(q[0])
		_, en := math.Frexp(q[n])
		m0, _ := math.Frexp(math.Abs(q[0]))
		mn, _ := math.Frexp(math.Abs(q[n]))
		l := float64(e0-en) + math.Log2(m0/mn)
		k = int(math.Round(l / float64(n)))
	}
	top := math.MinInt
	for i, c := range q {
		if c != 0 {
			_, e := math.Frexp(c)
			top = max(top, e+k*i)
		}
	}
	w := make(poly.Poly, len(q))
	for i, c := range q {
		w[i] = math.Ldexp(c, k*i-top)
	}
	return scaled{w: w, k: k}
}

// lost reports a rescaled end coefficient that underflowed: zero or
// subnormal (below 2^-1022, where float64 keeps fewer than 53 bits).
func lost(c float64) bool { return math.Abs(c) < 0x1p-1022 }

func scaleC(z complex128, k int) complex128 {
	return complex(math.Ldexp(real(z), k), math.Ldexp(imag(z), k))
}

// quadratic solves w² + b·w + c = 0 (c ≠ 0) without cancellation: the
// larger real root comes from the formula, the other from the product c.
func quadratic(b, c float64) []complex128 {
	disc := math.FMA(b, b, -4*c)
	if disc >= 0 {
		s := math.Sqrt(disc)
		t := -0.5 * (b + math.Copysign(s, b))
		return []complex128{complex(t, 0), complex(c/t, 0)}
	}
	re, im := -0.5*b, 0.5*math.Sqrt(-disc)
	return []complex128{complex(re, im), complex(re, -im)}
}

// companionRoots returns the eigenvalues of the companion matrix of the
// polynomial w (degree ≥ 3), in Dgeev's layout: conjugate pairs adjacent,
// Im > 0 first, exact conjugates.
func companionRoots(w poly.Poly) ([]complex128, error) {
	r, ok := Companion(w)
	if !ok {
		return nil, errors.New("roots: the eigenvalue iteration did not converge")
	}
	return r, nil
}

// item is one real root or one conjugate pair (z with Im > 0 standing for
// z and its conjugate).
type item struct {
	z    complex128
	pair bool
}

func (it item) expand() []complex128 {
	if it.pair {
		return []complex128{it.z, cmplx.Conj(it.z)}
	}
	return []complex128{complex(real(it.z), 0)}
}

func expand(items []item) []complex128 {
	var r []complex128
	for _, it := range items {
		r = append(r, it.expand()...)
	}
	return r
}

// toItems turns a conjugate-symmetric list (pairs adjacent) into items.
func toItems(zs []complex128) []item {
	var r []item
	for i := 0; i < len(zs); i++ {
		z := zs[i]
		if imag(z) == 0 {
			r = append(r, item{z: complex(real(z), 0)})
			continue
		}
		// Dgeev and quadratic emit a pair as z, conj(z) in a row.
		if imag(z) < 0 {
			z = cmplx.Conj(z)
		}
		r = append(r, item{z: z, pair: true})
		i++
	}
	return r
}

// sortItems orders items by descending modulus, then ascending |angle|,
// and returns the permutation.
func sortItems(items []item) []int {
	idx := make([]int, len(items))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		za, zb := items[idx[a]].z, items[idx[b]].z
		ma, mb := cmplx.Abs(za), cmplx.Abs(zb)
		if ma != mb {
			return ma > mb
		}
		return math.Abs(cmplx.Phase(za)) < math.Abs(cmplx.Phase(zb))
	})
	return idx
}

// evalAbs returns p(z) and Σ|c_i||z|^i, the rounding-error scale of the
// evaluation.
func evalAbs(p poly.Poly, z complex128) (complex128, float64) {
	var v complex128
	var s float64
	az := cmplx.Abs(z)
	for i := len(p) - 1; i >= 0; i-- {
		v = v*z + complex(p[i], 0)
		s = s*az + math.Abs(p[i])
	}
	return v, s
}

// polishNoise sets the noise floor of polishing: once |p(z)| is below
// polishNoise·eps·Σ|c_i||z|^i, the residual is rounding error and a Newton
// step would move the root at random (as it would for the middle roots of
// the Wilkinson polynomial).
const polishNoise = 4

// polish refines a simple root by Newton's method on p, taking a step only
// while the residual is above its rounding-error floor and keeping it only
// if it lowers |p(z)|.
func polish(p poly.Poly, z complex128, complexRoot bool) complex128 {
	dp := p.Deriv()
	best := z
	v, s := evalAbs(p, z)
	bestRes := cmplx.Abs(v)
	for range polishIterations {
		if bestRes <= polishNoise*eps*s {
			break
		}
		d := dp.EvalC(best)
		if d == 0 {
			break
		}
		next := best - v/d
		if !complexRoot {
			next = complex(real(next), 0)
		}
		nv, ns := evalAbs(p, next)
		if !(cmplx.Abs(nv) < bestRes) {
			break
		}
		best, bestRes, v, s = next, cmplx.Abs(nv), nv, ns
	}
	if complexRoot && imag(best) <= 0 {
		return z // Newton crossed the real axis: keep the pair as found
	}
	return best
}

// group is a set of items (indices) that form one cluster. A group whose
// members are conjugate pairs only and lie off the real axis stands for two
// mirrored clusters.
type group struct {
	members []int
	self    bool // self-conjugate: one real cluster holding all members' roots
	n       int  // roots counted in the cluster (per mirrored copy if !self)
}

// taylor returns the Taylor coefficients of p at c: a_k = p^(k)(c)/k!.
func taylor(p poly.Poly, c complex128) []complex128 {
	a := make([]complex128, len(p))
	for i, v := range p {
		a[i] = complex(v, 0)
	}
	n := len(a)
	for k := 0; k < n; k++ {
		for i := n - 2; i >= k; i-- {
			a[i] += c * a[i+1]
		}
	}
	return a
}

// clusterRadius is the radius within which m roots near c are one multiple
// root at working precision, for a relative coefficient perturbation eta:
// the smallest over k ≥ m of (eta·s/|a_k|)^(1/k), a_k the Taylor
// coefficients of p at c. An m-fold root (a_m ≠ 0) gives the usual
// (eta·s/|a_m|)^(1/m); where p has a root of higher multiplicity at c (a_m
// vanishes), the higher terms bound the radius, so that roots far from c
// (a conjugate pair beside a triple root) are never merged with it.
func clusterRadius(p poly.Poly, c complex128, m int, eta float64) float64 {
	a := taylor(p, c)
	_, s := evalAbs(p, c)
	r := math.Inf(1)
	for k := m; k < len(a); k++ {
		if ak := cmplx.Abs(a[k]); ak > 0 {
			r = math.Min(r, math.Pow(eta*s/ak, 1/float64(k)))
		}
	}
	return clusterSafety * r
}

// clusterTol is the relative, coefficient-by-coefficient change of p
// within which a group of m roots counts as one m-fold root. It is a small
// multiple of eps, not of n·eps: the degree-20 Wilkinson polynomial
// ∏(z−j), j = 1…20, is only about 18 eps away from one with a double root
// near 14.58 (and 143 eps near 10.5), and its roots must stay apart, while
// the true clusters measured in the tests, built by multiplying rounded
// factors, lie within 10.3 eps. The margin is thin by nature: beyond it a
// cluster is reported as separate simple roots, each still backward stable.
const clusterTol = 12 * eps

// multipleDistance bounds from above the smallest relative perturbation
// max_i |δ_i|/|p_i| (real δ, zero coefficients kept zero) that makes c an
// m-fold root of p + δ. It is the minimum-2-norm solution u of the linear
// conditions Σ_i |p_i| u_i C(i,j) c^(i−j) = −a_j for j < m (real and
// imaginary parts), whose largest entry is a feasible, near-optimal value.
// A cheap lower bound, max_j |a_j| / Σ_i |p_i| C(i,j) |c|^(i−j), is tried
// first, and +Inf returned as soon as it exceeds limit.
func multipleDistance(p poly.Poly, c complex128, m int, limit float64) float64 {
	a := taylor(p, c)
	abs := make(poly.Poly, len(p))
	for i, v := range p {
		abs[i] = math.Abs(v)
	}
	sa := taylor(abs, complex(cmplx.Abs(c), 0))
	for j := 0; j < m; j++ {
		if cmplx.Abs(a[j]) > limit*real(sa[j]) {
			return math.Inf(1)
		}
	}
	realC := imag(c) == 0
	rows := 2 * m
	if realC {
		rows = m
	}
	n := len(p)
	w := mat.NewDense(rows, n, nil)
	rhs := mat.NewDense(rows, 1, nil)
	for j := 0; j < m; j++ {
		for i := j; i < n; i++ {
			if p[i] == 0 {
				continue
			}
			v := complex(math.Abs(p[i])*binomial(i, j), 0) * cmplx.Pow(c, complex(float64(i-j), 0))
			if i == j {
				v = complex(math.Abs(p[i]), 0)
			}
			if realC {
				w.Set(j, i, real(v))
			} else {
				w.Set(2*j, i, real(v))
				w.Set(2*j+1, i, imag(v))
			}
		}
		if realC {
			rhs.Set(j, 0, -real(a[j]))
		} else {
			rhs.Set(2*j, 0, -real(a[j]))
			rhs.Set(2*j+1, 0, -imag(a[j]))
		}
	}
	if rows > n {
		return math.Inf(1)
	}
	var u mat.Dense
	if err := u.Solve(w, rhs); err != nil {
		return math.Inf(1)
	}
	return mat.Norm(&u, math.Inf(1))
}

func binomial(n, k int) float64 {
	r := 1.0
	for i := 1; i <= k; i++ {
		r = r * float64(n-k+i) / float64(i)
	}
	return r
}

// roots of a candidate group as complex numbers, the mirror included when self.
func groupRoots(items []item, members []int, self bool) []complex128 {
	var r []complex128
	for _, i := range members {
		it := items[i]
		if self {
			r = append(r, it.expand()...)
		} else {
			r = append(r, it.z)
		}
	}
	return r
}

func mean(zs []complex128) complex128 {
	var s complex128
	for _, z := range zs {
		s += z
	}
	return s / complex(float64(len(zs)), 0)
}

// cluster groups items. Every item seeds candidate groups made of itself
// and its k nearest items (k = 0, 1, …), taken as mirrored pairs of
// clusters or as one self-conjugate cluster; a candidate is kept when it
// passes both multiple-root tests (spread within clusterRadius, and p within
// the perturbation of an m-fold root at the mean). Subsets of a true m-fold
// cluster fail the second test, so groups are grown whole rather than by
// pairwise merging. Disjoint candidates are then taken largest first.
func cluster(p poly.Poly, items []item, eta float64) []group {
	type cand struct {
		g      group
		spread float64
	}
	var cands []cand
	try := func(members []int, self bool) {
		zs := groupRoots(items, members, self)
		if len(zs) < 2 {
			return
		}
		c := mean(zs)
		if self {
			c = complex(real(c), 0)
		}
		spread := spreadOf(zs, c)
		if spread <= clusterRadius(p, c, len(zs), eta) && multipleDistance(p, refineMultiple(p, c, len(zs), self, spread), len(zs), clusterTol) <= clusterTol {
			cands = append(cands, cand{group{members: members, self: self, n: len(zs)}, spread})
		}
	}
	for i := range items {
		near := make([]int, 0, len(items))
		for j := range items {
			if j != i {
				near = append(near, j)
			}
		}
		zi := items[i].z
		sort.SliceStable(near, func(a, b int) bool {
			return cmplx.Abs(items[near[a]].z-zi) < cmplx.Abs(items[near[b]].z-zi)
		})
		members := []int{i}
		allPairs := items[i].pair
		for k := 0; ; k++ {
			ms := append([]int(nil), members...)
			sort.Ints(ms)
			if allPairs {
				try(ms, false)
			}
			try(ms, true)
			if k == len(near) {
				break
			}
			members = append(members, near[k])
			allPairs = allPairs && items[near[k]].pair
		}
	}
	sort.SliceStable(cands, func(a, b int) bool {
		if cands[a].g.n != cands[b].g.n {
			return cands[a].g.n > cands[b].g.n
		}
		return cands[a].spread < cands[b].spread
	})
	used := make([]bool, len(items))
	var gs []group
	for _, c := range cands {
		free := true
		for _, i := range c.g.members {
			free = free && !used[i]
		}
		if !free {
			continue
		}
		for _, i := range c.g.members {
			used[i] = true
		}
		gs = append(gs, c.g)
	}
	for i, it := range items {
		if !used[i] {
			gs = append(gs, group{members: []int{i}, self: !it.pair, n: 1})
		}
	}
	return gs
}

// clusterValues turns groups into Clusters in the order of their first
// member in the sorted roots. Multiple clusters get their mean refined by
// Newton on p^(m−1), of which an m-fold root is a simple root; the refined
// value is kept only if it lowers |p^(m−1)| and stays within the cluster.
func clusterValues(w poly.Poly, k int, items []item, gs []group, rank []int) []Cluster {
	type keyed struct {
		first int
		c     Cluster
	}
	var ks []keyed
	for _, g := range gs {
		first := math.MaxInt
		for _, i := range g.members {
			first = min(first, rank[i])
		}
		zs := groupRoots(items, g.members, g.self)
		c := mean(zs)
		if g.self {
			c = complex(real(c), 0)
		}
		m := len(zs)
		if m == 1 {
			c = items[g.members[0]].z
		} else {
			c = refineMultiple(w, c, m, g.self, spreadOf(zs, c))
		}
		c = scaleC(c, k)
		ks = append(ks, keyed{first, Cluster{Value: c, Multiplicity: m}})
		if !g.self {
			ks = append(ks, keyed{first, Cluster{Value: cmplx.Conj(c), Multiplicity: m}})
		}
	}
	sort.SliceStable(ks, func(a, b int) bool { return ks[a].first < ks[b].first })
	r := make([]Cluster, len(ks))
	for i, kc := range ks {
		r[i] = kc.c
	}
	return r
}

func spreadOf(zs []complex128, c complex128) float64 {
	var s float64
	for _, z := range zs {
		s = max(s, cmplx.Abs(z-c))
	}
	return s
}

// refineMultiple polishes the mean c of an m-fold cluster (in w units; the
// members have not been polished, so they are still in w units too).
func refineMultiple(w poly.Poly, c complex128, m int, realOnly bool, spread float64) complex128 {
	d := w
	for range m - 1 {
		d = d.Deriv()
	}
	dd := d.Deriv()
	best := c
	bestRes := cmplx.Abs(d.EvalC(c))
	for range polishIterations {
		den := dd.EvalC(best)
		if den == 0 || bestRes == 0 {
			break
		}
		next := best - d.EvalC(best)/den
		if realOnly {
			next = complex(real(next), 0)
		}
		r := cmplx.Abs(d.EvalC(next))
		if !(r < bestRes) || cmplx.Abs(next-c) > spread {
			break
		}
		best, bestRes = next, r
	}
	return best
}

// backwardError is max_i |c_i − ĉ_i| / max_i |c_i| between the monic form
// of p and the monic polynomial with the given roots.
func backwardError(p poly.Poly, roots []complex128) float64 {
	n := len(p) - 1
	rebuilt := fromRootsC(roots)
	var num, den float64
	for i := 0; i <= n; i++ {
		c := p[i] / p[n]
		num = max(num, cmplx.Abs(complex(c, 0)-rebuilt[i]))
		den = max(den, math.Abs(c))
	}
	return num / den
}

func fromRootsC(roots []complex128) []complex128 {
	c := []complex128{1}
	for _, r := range roots {
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= r * v
		}
		c = next
	}
	return c
}

// inputBackwardError measures the backward error on the monic input when
// its coefficients and the rebuilt ones are finite, else on the rescaled one.
func inputBackwardError(p poly.Poly, roots []complex128, w poly.Poly, wroots []complex128) float64 {
	if len(p) <= 1 {
		return 0
	}
	be := backwardError(p, roots)
	if math.IsNaN(be) || math.IsInf(be, 0) {
		if len(w) <= 1 {
			return 0
		}
		return backwardError(w, wroots)
	}
	return be
}
