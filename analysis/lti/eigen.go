package lti

import (
	"cmp"
	"errors"
	"math"
	"math/cmplx"
	"slices"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// Pole is one closed-loop pole with its error bound.
type Pole struct {
	// Z is the pole; for a cluster of Multiplicity > 1 eigenvalues that
	// the computation cannot separate, the cluster's centroid.
	Z complex128
	// Bound: the true pole (every true pole of the cluster) lies within
	// Bound of Z.
	Bound float64
	// CentroidBound: the mean of the cluster's true poles lies within
	// CentroidBound of Z (equal to Bound for a simple pole). A multiple
	// pole is decided on the circle by it.
	CentroidBound float64
	// Multiplicity is the size of Z's cluster (1 for a simple pole).
	Multiplicity int
	// Exact marks a factor common to the loop's numerator and denominator
	// (a cancelled mode), taken out before any eigenvalue is computed.
	Exact bool
}

// Place is where a pole lies relative to the unit circle.
type Place int

const (
	Inside Place = iota + 1
	OnCircle
	Outside
	// Unknown: the pole's bound straddles 1 − tol or 1 + tol.
	Unknown
)

// Place decides where p lies with tolerance tol: on the circle when its
// radius is within tol of 1 (loop-format.md), using Bound for inside and
// outside and, for a cluster, CentroidBound for "on the circle" (a
// multiple pole on the circle scatters by (ε·κ)^(1/m); its centroid does
// not).
func (p Pole) Place(tol float64) Place {
	r := cmplx.Abs(p.Z)
	switch {
	case r+p.Bound < 1-tol:
		return Inside
	case r-p.Bound > 1+tol:
		return Outside
	case math.Abs(r-1)+p.Bound <= tol, math.Abs(r-1)+p.CentroidBound <= tol:
		return OnCircle
	}
	return Unknown
}

// Method of the bounds (Golub & Van Loan, Matrix Computations, 4th ed.,
// §7.2.2 and §7.5.6; Gershgorin's theorem, §7.2.1):
//
//   - A is balanced (see balance: diagonal scaling by powers of two,
//     exact, eigenvalues unchanged), then LAPACK Dgeev gives eigenvalues
//     λᵢ with unit right and left eigenvectors xᵢ, yᵢ. Dgeev is backward
//     stable: its results are exact for A + E with ‖E‖ ≈ ε‖A‖.
//   - η, the backward error used, is the largest of n·ε·‖A‖_F, the
//     measured residuals ‖A xᵢ − λᵢ xᵢ‖, plus the model's own error
//     (the block roots') relative to max(1, ‖A‖_F).
//   - κᵢ = ‖xᵢ‖‖yᵢ‖/|yᵢᴴxᵢ| is λᵢ's condition number. In the eigenvector
//     basis, Gershgorin's disks of X⁻¹(A + E)X have radii at most n·κᵢ·η:
//     every eigenvalue of A + E lies in their union, and a connected set of
//     m disks holds exactly m of them. That radius is each pole's Bound.
//   - Disks that overlap (within a factor clusterSafety) are one cluster:
//     an m-fold eigenvalue splits by about (ε·κ)^(1/m) and its members'
//     disks touch. The cluster's Bound encloses every member's disk; its
//     centroid's error is, to first order, ‖P‖·η with P the spectral
//     projector of the cluster (Kato, Perturbation Theory for Linear
//     Operators, II §2: the mean of a λ-group changes by tr(E P)/m).
const clusterSafety = 2

// Eigen returns the eigenvalues of the n×n row-major matrix a as poles with
// bounds; modelErr is the relative error of the model's entries beyond
// rounding (0 when exact). a is not modified.
func Eigen(a []float64, n int, modelErr float64) ([]Pole, error) {
	if n == 0 {
		return nil, nil
	}
	w, err := balancedWork(a, n)
	if err != nil {
		return nil, err
	}
	defer workPool.Put(w)
	copy(w.bal, w.a)
	norm := frobenius(w.bal)
	ga := blas64.General{Rows: n, Cols: n, Stride: n, Data: w.a}
	vl := blas64.General{Rows: n, Cols: n, Stride: n, Data: w.vl}
	vr := blas64.General{Rows: n, Cols: n, Stride: n, Data: w.vr}
	if !w.geev(ga, vl, vr) {
		return nil, errors.New("lti: the eigenvalue iteration did not converge")
	}
	vals := make([]complex128, n)
	xs := make([][]complex128, n) // right vectors of A
	ys := make([][]complex128, n) // left vectors of A
	for j := 0; j < n; j++ {
		vals[j] = complex(w.wr[j], w.wi[j])
		switch {
		case w.wi[j] == 0:
			xs[j], ys[j] = column(w.vr, n, j, -1), column(w.vl, n, j, -1)
		case w.wi[j] > 0:
			xs[j], ys[j] = column(w.vr, n, j, j+1), column(w.vl, n, j, j+1)
		case j > 0 && w.wi[j-1] == -w.wi[j]:
			xs[j], ys[j] = conjV(xs[j-1]), conjV(ys[j-1])
		default: // NaN, or not Dgeev's pair layout: nothing to trust
			return nil, errors.New("lti: the eigenvalue iteration gave non-finite values")
		}
	}
	eta := float64(n) * eps * norm
	for j := range vals {
		eta = math.Max(eta, residual(w.bal, n, vals[j], xs[j]))
	}
	eta += modelErr * math.Max(1, norm)
	radius := make([]float64, n)
	for j := range vals {
		radius[j] = notNaN(float64(n) * condition(xs[j], ys[j]) * eta)
	}
	return clusters(vals, xs, ys, radius, eta), nil
}

// eigenvalues returns the eigenvalues of the n×n row-major matrix a alone:
// no vectors, so no bounds, at about a third of Eigen's cost. Each is an
// exact eigenvalue of A + E with ‖E‖ of the order ε‖A‖ (Dgeev is backward
// stable), so it lies in the union of the disks Eigen bounds its poles by
// (their backward error η is at least n·ε·‖A‖_F): a value here at radius r
// means some pole of Eigen reaches radius r with its bound.
func eigenvalues(a []float64, n int) ([]complex128, error) {
	w, err := balancedWork(a, n)
	if err != nil {
		return nil, err
	}
	defer workPool.Put(w)
	ga := blas64.General{Rows: n, Cols: n, Stride: n, Data: w.a}
	none := blas64.General{Stride: 1}
	if !w.geevValues(ga, none) {
		return nil, errors.New("lti: the eigenvalue iteration did not converge")
	}
	out := make([]complex128, n)
	for j := range out {
		out[j] = complex(w.wr[j], w.wi[j])
	}
	return out, nil
}

// balancedWork takes a scratch from the pool holding a copy of the n×n
// matrix a, balanced; non-finite entries are refused (LAPACK would not end).
func balancedWork(a []float64, n int) (*work, error) {
	for _, v := range a[:n*n] {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errors.New("lti: non-finite entry in the state matrix")
		}
	}
	w := newWork(n)
	copy(w.a, a[:n*n])
	balance(w.a, n)
	return w, nil
}

// notNaN turns an undefined bound (0·∞ from an overflowed model) into +Inf:
// nothing is known.
func notNaN(b float64) float64 {
	if math.IsNaN(b) {
		return math.Inf(1)
	}
	return b
}

// frobenius is the Frobenius norm, scaled by the largest entry so that
// neither the squares overflow nor underflow.
func frobenius(a []float64) float64 {
	m := 0.0
	for _, v := range a {
		m = math.Max(m, math.Abs(v))
	}
	if m == 0 || math.IsInf(m, 0) {
		return m
	}
	s := 0.0
	for _, v := range a {
		s += (v / m) * (v / m)
	}
	return m * math.Sqrt(s)
}

// work holds the scratch of one eigenvalue computation, reused from one
// computation to the next (a gain search runs thousands).
type work struct {
	a, bal, vl, vr, scale, wr, wi, work []float64
	buf                                 []float64
}

var workPool = sync.Pool{New: func() any { return new(work) }}

// newWork takes a scratch from the pool, sized for order n.
func newWork(n int) *work {
	w := workPool.Get().(*work)
	size := 4*n*n + 3*n
	if cap(w.buf) < size {
		w.buf = make([]float64, size)
	}
	buf := w.buf[:size]
	clear(buf)
	w.a, w.bal, w.vl, w.vr = buf[:n*n], buf[n*n:2*n*n], buf[2*n*n:3*n*n], buf[3*n*n:4*n*n]
	w.scale, w.wr, w.wi = buf[4*n*n:4*n*n+n], buf[4*n*n+n:4*n*n+2*n], buf[4*n*n+2*n:]
	return w
}

// geev runs LAPACK's Dgeev; false when it does not converge, or panics on
// entries far outside the range it scales for (seen with fuzzed models
// spanning 1e-300 to 1e300), which then gives no eigenvalues, not a crash.
func (w *work) geev(a, vl, vr blas64.General) (ok bool) {
	defer func() {
		if recover() != nil {
			ok = false
		}
	}()
	lwork := w.query(a, vl, vr)
	return lapack64.Geev(lapack.LeftEVCompute, lapack.RightEVCompute, a, w.wr, w.wi, vl, vr, w.work[:lwork], lwork) == 0
}

// geevValues is geev for the eigenvalues alone.
func (w *work) geevValues(a, none blas64.General) (ok bool) {
	defer func() {
		if recover() != nil {
			ok = false
		}
	}()
	lwork := max(4*a.Rows, 1) // Dgeev's least workspace without vectors: 3n, and n for balancing
	if cap(w.work) < lwork {
		w.work = make([]float64, lwork)
	}
	w.work = w.work[:lwork]
	return lapack64.Geev(lapack.LeftEVNone, lapack.RightEVNone, a, w.wr, w.wi, none, none, w.work, lwork) == 0
}

func (w *work) query(a, vl, vr blas64.General) int {
	n := a.Rows
	if n < len(lworkBySize) {
		if l := int(lworkBySize[n].Load()); l > 0 {
			if cap(w.work) < l {
				w.work = make([]float64, l)
			}
			w.work = w.work[:l]
			clear(w.work) // as fresh as a new array: results never depend on reuse
			return l
		}
	}
	q := []float64{0}
	lapack64.Geev(lapack.LeftEVCompute, lapack.RightEVCompute, a, w.wr, w.wi, vl, vr, q, -1)
	w.work = make([]float64, int(q[0]))
	if n < len(lworkBySize) {
		lworkBySize[n].Store(int64(len(w.work)))
	}
	return len(w.work)
}

// lworkBySize remembers Dgeev's workspace size by order (it depends on
// the order only): the size query is a run of the routine's set-up.
var lworkBySize [64]atomic.Int64

// column reads eigenvector j, column j of Geev's row-major output v; im ≥ 0
// names the column holding the imaginary part.
func column(v []float64, n, j, im int) []complex128 {
	out := make([]complex128, n)
	for i := 0; i < n; i++ {
		re := v[i*n+j]
		if im < 0 {
			out[i] = complex(re, 0)
		} else {
			out[i] = complex(re, v[i*n+im])
		}
	}
	return out
}

func conjV(v []complex128) []complex128 {
	out := make([]complex128, len(v))
	for i, c := range v {
		out[i] = cmplx.Conj(c)
	}
	return out
}

// normV is the 2-norm of v (sums of squares: eigenvectors and residuals
// here are of modest size, and an overflow to +Inf only loosens a bound).
func normV(v []complex128) float64 {
	s := 0.0
	for _, c := range v {
		s += real(c)*real(c) + imag(c)*imag(c)
	}
	return math.Sqrt(s)
}

// residual is ‖A x − λ x‖/‖x‖ for row-major A.
func residual(a []float64, n int, lam complex128, x []complex128) float64 {
	s := 0.0
	for i := 0; i < n; i++ {
		var r complex128
		for j := 0; j < n; j++ {
			r += complex(a[i*n+j], 0) * x[j]
		}
		r -= lam * x[i]
		s += real(r)*real(r) + imag(r)*imag(r)
	}
	return math.Sqrt(s) / normV(x)
}

// condition is ‖x‖‖y‖/|yᴴx| (+Inf when yᴴx vanishes: a defective eigenvalue).
func condition(x, y []complex128) float64 {
	var d complex128
	for i := range x {
		d += cmplx.Conj(y[i]) * x[i]
	}
	if d == 0 {
		return math.Inf(1)
	}
	return normV(x) * normV(y) / cmplx.Abs(d)
}

// clusters groups eigenvalues whose disks overlap and returns the poles,
// largest radius first, each cluster member at its cluster's centroid.
func clusters(vals []complex128, xs, ys [][]complex128, radius []float64, eta float64) []Pole {
	n := len(vals)
	parent := make([]int, n)
	for i := range parent {
		parent[i] = i
	}
	find := func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if cmplx.Abs(vals[i]-vals[j]) <= clusterSafety*(radius[i]+radius[j]) {
				parent[find(i)] = find(j)
			}
		}
	}
	groups := map[int][]int{}
	for i := 0; i < n; i++ {
		r := find(i)
		groups[r] = append(groups[r], i)
	}
	out := make([]Pole, 0, n)
	for _, g := range groups {
		if len(g) == 1 {
			i := g[0]
			out = append(out, Pole{Z: vals[i], Bound: radius[i], CentroidBound: radius[i], Multiplicity: 1})
			continue
		}
		c := centroid(vals, g)
		enc := 0.0
		for _, i := range g {
			enc = math.Max(enc, cmplx.Abs(vals[i]-c)+radius[i])
		}
		cb := math.Min(notNaN(projectorNorm(xs, ys, g)*eta), notNaN(enc))
		enc = notNaN(enc)
		for range g {
			out = append(out, Pole{Z: c, Bound: enc, CentroidBound: cb, Multiplicity: len(g)})
		}
	}
	SortPoles(out)
	return out
}

// centroid is the mean of the group's eigenvalues, exactly real when the
// group holds the conjugate of each member.
func centroid(vals []complex128, g []int) complex128 {
	var s complex128
	for _, i := range g {
		s += vals[i]
	}
	c := s / complex(float64(len(g)), 0)
	self := true
	for _, i := range g {
		found := false
		for _, j := range g {
			if vals[j] == cmplx.Conj(vals[i]) {
				found = true
				break
			}
		}
		self = self && found
	}
	if self {
		c = complex(real(c), 0)
	}
	return c
}

// projectorNorm is the Frobenius norm (≥ the 2-norm) of the spectral
// projector P = X (Yᴴ X)⁻¹ Yᴴ of the group; +Inf when Yᴴ X is singular.
func projectorNorm(xs, ys [][]complex128, g []int) float64 {
	m, n := len(g), len(xs[0])
	M := make([][]complex128, m)
	for a, i := range g {
		M[a] = make([]complex128, m+n)
		for b, j := range g {
			for k := 0; k < n; k++ {
				M[a][b] += cmplx.Conj(ys[i][k]) * xs[j][k]
			}
		}
		for k := 0; k < n; k++ {
			M[a][m+k] = cmplx.Conj(ys[i][k]) // right-hand side Yᴴ
		}
	}
	if !solveInPlace(M, m) {
		return math.Inf(1)
	}
	// P = X · M⁻¹Yᴴ.
	s := 0.0
	for r := 0; r < n; r++ {
		for k := 0; k < n; k++ {
			var v complex128
			for a, i := range g {
				v += xs[i][r] * M[a][m+k]
			}
			s = math.Hypot(s, cmplx.Abs(v))
		}
	}
	return s
}

// solveInPlace reduces the augmented system [M | R] (m rows) to [I | M⁻¹R]
// by Gauss–Jordan elimination with partial pivoting.
func solveInPlace(M [][]complex128, m int) bool {
	for c := 0; c < m; c++ {
		p := c
		for r := c + 1; r < m; r++ {
			if cmplx.Abs(M[r][c]) > cmplx.Abs(M[p][c]) {
				p = r
			}
		}
		if M[p][c] == 0 {
			return false
		}
		M[c], M[p] = M[p], M[c]
		inv := 1 / M[c][c]
		for k := range M[c] {
			M[c][k] *= inv
		}
		for r := 0; r < m; r++ {
			if r == c || M[r][c] == 0 {
				continue
			}
			f := M[r][c]
			for k := range M[r] {
				M[r][k] -= f * M[c][k]
			}
		}
	}
	for _, row := range M {
		for _, v := range row {
			if cmplx.IsNaN(v) || cmplx.IsInf(v) {
				return false
			}
		}
	}
	return true
}

// SortPoles orders poles largest radius first, then upper member of a
// conjugate pair first.
func SortPoles(p []Pole) {
	slices.SortStableFunc(p, func(a, b Pole) int {
		ra, rb := cmplx.Abs(a.Z), cmplx.Abs(b.Z)
		switch {
		case ra != rb:
			return cmp.Compare(rb, ra)
		default:
			return cmp.Compare(imag(b.Z), imag(a.Z))
		}
	})
}
