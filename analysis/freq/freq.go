// Package freq computes the frequency response of a discrete loop L(z) at
// sample period T on the upper unit circle z = e^{jθ}, θ = ωT from 0 to the
// Nyquist angle π inclusive, and from it the stability margins the format
// defines: gain margin at the phase crossings of −180°, phase margin at the
// gain crossings of |L| = 1, delay margin, and peak sensitivity.
//
// Crossings are located as roots of real functions of θ built from the
// numerator N and denominator D of L without dividing:
//
//	phase crossings: g(θ) = Im(N(e^{jθ}) conj D(e^{jθ})) = 0 with Re(N conj D) < 0
//	gain crossings:  h(θ) = |N(e^{jθ})|² − |D(e^{jθ})|² = 0
//
// Sign changes are bracketed on a dense grid and bisected; tangential
// touches are caught by refining the grid minima of |g| and |h|.
package freq

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"sync"

	"ringside/analysis/diskmargin"
	"ringside/analysis/internal/anglegrid"
	"ringside/analysis/internal/search"
	"ringside/analysis/poly"
	polyroots "ringside/analysis/roots"
)

// Crossing is one crossing of the response: Hz is its frequency; Value is
// the gain margin in dB at a phase crossing, or the phase margin in degrees
// at a gain crossing.
type Crossing struct {
	Hz    float64
	Value float64
}

// Margins are the stability margins of a loop with closed loop 1 + L = 0.
// A nil pointer means the quantity does not exist (see the fields).
type Margins struct {
	// GainMarginDB = −20·log10|L| at the phase crossing whose value has the
	// smallest magnitude (nearest to instability), sign kept; nil when L
	// never crosses −180°.
	GainMarginDB, PhaseCrossoverHz *float64
	// PhaseMarginDeg = 180° + arg L, wrapped to (−180°, 180°], the smallest
	// over the gain crossings; nil when |L| never crosses 1.
	PhaseMarginDeg, GainCrossoverHz *float64
	// DelayMarginS = PM_rad/ω_c (0 when PM ≤ 0), the smallest over the gain
	// crossings with ω_c > 0; DelayMarginSamples is the same divided by T.
	// Nil with no gain crossing (or only one at 0 Hz with PM > 0, which no
	// delay can move).
	DelayMarginS, DelayMarginSamples *float64
	// PeakSensitivityDB = max over [0, π/T] of 20·log10|1/(1+L)|; nil when
	// 1 + L vanishes on the circle (a closed-loop pole on it).
	PeakSensitivityDB, PeakSensitivityHz *float64
	// Every crossing, ascending Hz.
	PhaseCrossings, GainCrossings []Crossing
}

const (
	// RootTolRad is the bisection width, in rad/sample, to which crossings
	// are located: far below any plotting or reporting resolution while
	// still above the ~1e-16·π spacing of float64 angles near π.
	RootTolRad = 1e-12
	// TouchTol: a grid minimum of |g| (or |h|) that Brent's method refines to
	// at most TouchTol times the size of its terms (|N||D|, resp.
	// |N|² + |D|²) is a tangential touch and counts as a crossing. Rounding
	// of the Horner evaluations alone is ~1e-15 of that size; a smaller
	// margin than 1e-9 would miss touches computed from rounded coefficients.
	TouchTol = 1e-9
	// NoiseTol: |g| or |h| below NoiseTol times the size of its terms is
	// indistinguishable from zero: Horner evaluation of N and D rounds at
	// about deg·ε ≈ 1e-15 relative, and 1e-13 leaves room for degrees in the
	// dozens. Such grid values are treated as exact zeros.
	NoiseTol = 1e-13
	// SingularTol: at a crossing where |D| ≤ SingularTol·(|N| + |D|), L has a
	// pole on the circle (e.g. an integrator at z = 1) and the point is
	// skipped; likewise |N| ≤ SingularTol·(|N| + |D|) means L = 0 there.
	SingularTol = 1e-9
	// ClosedLoopCircleTol: a root of N + D within this distance of the unit
	// circle, or a sensitivity peak where |N + D| ≤ ClosedLoopCircleTol·(|N| + |D|),
	// makes the peak sensitivity undefined (nil).
	ClosedLoopCircleTol = 1e-9
	// DegenerateTol: g or h is identically zero when all its trigonometric
	// coefficients are below DegenerateTol times the size of the products
	// they are sums of (then L is real, or of unit modulus, on the whole
	// circle).
	DegenerateTol = 1e-12
	// baseGridPerDegree and minBaseGrid set the uniform part of the grid: a
	// trigonometric polynomial of degree n has at most 2n roots per period,
	// so 32 points per degree put about 16 grid points per root on average;
	// roots closer than a grid cell sit near a pole or zero close to the
	// circle, where the grid is refined geometrically, or are caught as a
	// dip of |f| between two larger neighbours (refined by Brent's method).
	// The scipy cross-check (240 loops) and the structure cross-check find
	// the same crossings as with 128 points per degree, at a quarter of
	// the evaluations.
	baseGridPerDegree = 32
	minBaseGrid       = 256
	// nearCircle: roots of N, D and N + D with ||r| − 1| below it get a
	// geometric cluster of extra grid points around their angle.
	nearCircle = 0.2
)

// Compute returns the margins of the loop L at sample period T (seconds).
// The closed loop is 1 + L = 0; a positive-feedback sign must already be
// folded into L. Phase crossings include θ = 0 and θ = π, where L is real.
// Points where L has a pole on the circle are skipped. When L is real on the
// whole circle (g ≡ 0) or |L| = 1 on the whole circle (h ≡ 0), the crossings
// form a continuum; Compute then reports a single crossing: the point of
// smallest |GM|, resp. of smallest PM (found on the grid and refined), and
// the delay margin of that point.
// Errors: T not finite and positive, a zero or non-finite numerator or
// denominator, or a numerator whose leading coefficient underflows, or any
// coefficient overflows, when scaled to the denominator (sizes more than
// the float64 range apart), and a delay margin that overflows in seconds
// (sample periods near 1e300 s).
func Compute(L poly.Rational, T float64) (Margins, error) {
	lp, err := prepare(L, T)
	if err != nil {
		return Margins{}, err
	}
	return lp.margins(T)
}

// Sampled is a loop's response on its search grid, evaluated once: the
// margins and the disk margin both read it.
type Sampled struct {
	lp   loop
	grid []float64
	pts  gridValues
	sc   *scratch
}

// SampleFactors evaluates the loop given by its factors on its search grid
// (errors as ComputeFactors). Release gives its arrays back when the
// margins and the disk margin have been read.
func SampleFactors(f Factors, T float64) (*Sampled, error) {
	lp, err := factorLoop(f, T)
	if err != nil {
		return nil, err
	}
	sc := getScratch()
	grid := lp.grid(sc)
	return &Sampled{lp: lp, grid: grid, pts: lp.evalGrid(grid, sc), sc: sc}, nil
}

// Release returns the sampled arrays for reuse by the next loop; s must
// not be used afterwards (nothing it returned refers to them).
func (s *Sampled) Release() {
	if s != nil && s.sc != nil {
		scratchPool.Put(s.sc)
		s.sc, s.grid, s.pts = nil, nil, gridValues{}
	}
}

// scratch holds a grid and its values between loops: a check samples a
// grid of some hundred points per loop, thousands of times.
type scratch struct {
	ag       anglegrid.Scratch
	clusters []anglegrid.Cluster
	grid     []float64
	vals     []float64
}

var scratchPool = sync.Pool{New: func() any { return new(scratch) }}

func getScratch() *scratch { return scratchPool.Get().(*scratch) }

// floats returns the scratch's value array, m long (its contents are
// whatever the last loop left: every element is written before it is read).
func (sc *scratch) floats(m int) []float64 {
	if cap(sc.vals) < m {
		sc.vals = make([]float64, m)
	}
	return sc.vals[:m]
}

// Margins computes every margin of the sampled loop (see Compute).
func (s *Sampled) Margins(T float64) (Margins, error) {
	return s.lp.marginsOn(s.grid, s.pts, T)
}

// DiskMargin is the symmetric disk margin of the sampled loop
// (diskmargin.FromGrid on the same grid: its clusters around the
// closed-loop poles near the circle are those the disk margin's peaks
// need). The caller must know the loop to be stable.
func (s *Sampled) DiskMargin() (diskmargin.Margin, error) {
	return diskmargin.FromGrid(s.grid, s.pts.disk, func(th float64) float64 {
		return diskmargin.DistanceND(s.lp.eval(th))
	})
}

// margins computes every margin of lp (see Compute).
func (lp loop) margins(T float64) (Margins, error) {
	sc := getScratch()
	defer scratchPool.Put(sc)
	grid := lp.grid(sc)
	return lp.marginsOn(grid, lp.evalGrid(grid, sc), T)
}

// marginsOn computes every margin of lp from its values on the grid.
func (lp loop) marginsOn(grid []float64, pts gridValues, T float64) (Margins, error) {
	var m Margins
	toHz := func(th float64) float64 { return th / (2 * math.Pi * T) }

	m.PhaseCrossings = lp.phaseCrossings(grid, pts.g, pts.gScale, T)
	for _, c := range m.PhaseCrossings {
		if m.GainMarginDB == nil || math.Abs(c.Value) < math.Abs(*m.GainMarginDB) {
			m.GainMarginDB, m.PhaseCrossoverHz = ptr(c.Value), ptr(c.Hz)
		}
	}

	// Gain crossings.
	var gainTh []float64
	if lp.unitOnCircle() {
		if th, ok := lp.bestOnGrid(grid, func(th float64) (float64, bool) {
			l, ok := lp.value(th)
			if !ok {
				return 0, false
			}
			return phaseMargin(l), true
		}); ok {
			gainTh = []float64{th}
		}
	} else {
		gainTh = roots(lp.h, lp.hScale, grid, pts.h, pts.hScale)
	}
	for _, th := range gainTh {
		l, ok := lp.value(th)
		if !ok {
			continue
		}
		pm := phaseMargin(l)
		m.GainCrossings = append(m.GainCrossings, Crossing{Hz: toHz(th), Value: pm})
		if m.PhaseMarginDeg == nil || pm < *m.PhaseMarginDeg {
			m.PhaseMarginDeg, m.GainCrossoverHz = ptr(pm), ptr(toHz(th))
		}
		// In samples first: θ/T underflows, and PM/θ·T overflows, for
		// absurd sample periods (1e300 s).
		var samples float64
		switch {
		case pm <= 0:
			samples = 0
		case th == 0:
			continue // a delay does not turn the phase at DC
		default:
			samples = pm * math.Pi / 180 / th
		}
		dm := samples * T
		if math.IsInf(dm, 0) {
			return Margins{}, fmt.Errorf("freq: delay margin of %g samples overflows float64 seconds at T = %g s", samples, T)
		}
		if m.DelayMarginS == nil || dm < *m.DelayMarginS {
			m.DelayMarginS, m.DelayMarginSamples = ptr(dm), ptr(samples)
		}
	}

	// Peak sensitivity.
	if db, th, ok := lp.peakSensitivity(grid, pts); ok {
		m.PeakSensitivityDB, m.PeakSensitivityHz = ptr(db), ptr(toHz(th))
	}
	return m, nil
}

// phaseCrossings returns every phase crossing (L real and negative) with
// its gain margin; g and gScale are lp.g and lp.gScale on the grid.
func (lp loop) phaseCrossings(grid, g, gScale []float64, T float64) []Crossing {
	var out []Crossing
	for _, th := range lp.realAxis(grid, g, gScale) {
		N, D := lp.eval(th)
		if lp.singular(th, N, D) || real(N*cmplx.Conj(D)) >= 0 {
			continue
		}
		// |N| and |D| apart, not |N/D|: the quotient overflows for a huge
		// gain over a pole near the point (the factored form allows both).
		gm := -20 * (math.Log10(cmplx.Abs(N)) - math.Log10(cmplx.Abs(D)))
		if math.IsInf(gm, 0) || math.IsNaN(gm) {
			continue
		}
		out = append(out, Crossing{Hz: th / (2 * math.Pi * T), Value: gm})
	}
	return out
}

// realAxis returns the angles where L is real (g = 0); when L is real on
// the whole circle, the one point of negative L nearest to |L| = 1.
func (lp loop) realAxis(grid, g, gScale []float64) []float64 {
	var phaseTh []float64
	if lp.realOnCircle() {
		if th, ok := lp.bestOnGrid(grid, func(th float64) (float64, bool) {
			l, ok := lp.value(th)
			if !ok || real(l) >= 0 {
				return 0, false
			}
			return math.Abs(math.Log(cmplx.Abs(l))), true
		}); ok {
			phaseTh = []float64{th}
		}
	} else {
		phaseTh = roots(lp.g, lp.gScale, grid, g, gScale)
	}
	return phaseTh
}

// phaseMargin is 180° + arg l wrapped to (−180°, 180°].
func phaseMargin(l complex128) float64 {
	pm := 180 + cmplx.Phase(l)*180/math.Pi
	if pm > 180 {
		pm -= 360
	}
	return pm
}

func ptr(v float64) *float64 { return &v }

// loop holds N and D rescaled by a common factor (L is unchanged) so that
// products of values neither overflow nor underflow.
type loop struct {
	num, den    poly.Poly
	fac         *Factors     // the factored form, when given so (num, den unused)
	closedRoots []complex128 // roots of N + D, set by grid
}

// ErrZeroPoly reports a zero numerator or denominator.
var ErrZeroPoly = errors.New("freq: zero numerator or denominator")

func prepareT(T float64) (loop, error) {
	if !(T > 0) || math.IsInf(T, 0) {
		return loop{}, fmt.Errorf("freq: sample period %v s must be finite and positive", T)
	}
	return loop{}, nil
}

func prepare(L poly.Rational, T float64) (loop, error) {
	if _, err := prepareT(T); err != nil {
		return loop{}, err
	}
	if !L.Num.Finite() || !L.Den.Finite() {
		return loop{}, fmt.Errorf("freq: non-finite coefficient in %v / %v", []float64(L.Num), []float64(L.Den))
	}
	n, d := L.Num.Trim(), L.Den.Trim()
	if len(n) == 0 || len(d) == 0 {
		return loop{}, ErrZeroPoly
	}
	s := 0.0
	for _, v := range d {
		s = math.Max(s, math.Abs(v))
	}
	// Scale by a power of two (exact; 1/s would overflow for a subnormal s)
	// and refuse a numerator so much smaller than the denominator that its
	// leading coefficient underflows (the degree, and so L, would change),
	// or so much larger that it overflows.
	_, e := math.Frexp(s)
	ns, ds := ldexpPoly(n, -e), ldexpPoly(d, -e)
	if len(ns) != len(n) || len(ds) != len(d) || !ns.Finite() {
		return loop{}, fmt.Errorf("freq: numerator and denominator sizes differ beyond the float64 range")
	}
	return loop{num: ns, den: ds}, nil
}

// ldexpPoly returns p·2^e, trimmed.
func ldexpPoly(p poly.Poly, e int) poly.Poly {
	r := make(poly.Poly, len(p))
	for i, v := range p {
		r[i] = math.Ldexp(v, e)
	}
	return r.Trim()
}

func (l loop) eval(th float64) (N, D complex128) {
	z := cmplx.Rect(1, th)
	if l.fac != nil {
		return l.fac.nd(z)
	}
	return l.num.EvalC(z), l.den.EvalC(z)
}

// value returns L(e^{jθ}); ok is false at a pole or zero on the circle.
func (l loop) value(th float64) (complex128, bool) {
	N, D := l.eval(th)
	if l.singular(th, N, D) {
		return 0, false
	}
	return N / D, true
}

// singular reports a pole or zero of L on the circle at θ. In factored form
// that is a factor z − r within SingularTol of vanishing there (a tiny |L|
// from a tiny gain is not a zero); from polynomials, |D| or |N| negligible
// beside |N| + |D|.
func (l loop) singular(th float64, N, D complex128) bool {
	if l.fac != nil {
		z := cmplx.Rect(1, th)
		for _, rs := range [][]complex128{l.fac.Zeros, l.fac.Poles} {
			for _, r := range rs {
				if cmplx.Abs(z-r) <= SingularTol*math.Max(1, cmplx.Abs(r)) {
					return true
				}
			}
		}
		return D == 0 || N == 0
	}
	s := cmplx.Abs(N) + cmplx.Abs(D)
	return cmplx.Abs(D) <= SingularTol*s || cmplx.Abs(N) <= SingularTol*s
}

func (l loop) g(th float64) float64 {
	N, D := l.eval(th)
	return imag(N * cmplx.Conj(D))
}

func (l loop) gScale(th float64) float64 {
	N, D := l.eval(th)
	return cmplx.Abs(N) * cmplx.Abs(D)
}

func (l loop) h(th float64) float64 {
	N, D := l.eval(th)
	return sq(N) - sq(D)
}

func (l loop) hScale(th float64) float64 {
	N, D := l.eval(th)
	return sq(N) + sq(D)
}

func sq(c complex128) float64 { return real(c)*real(c) + imag(c)*imag(c) }

// correlation r[m + len(q) − 1] = Σ_{i−j=m} p_i q_j.
func correlation(p, q poly.Poly) []float64 {
	r := make([]float64, len(p)+len(q)-1)
	for i, a := range p {
		for j, b := range q {
			r[i-j+len(q)-1] += a * b
		}
	}
	return r
}

func absSum(p poly.Poly) float64 {
	s := 0.0
	for _, v := range p {
		s += math.Abs(v)
	}
	return s
}

// realOnCircle reports g ≡ 0: g(θ) = Σ_{m>0} (r_m − r_{−m}) sin mθ with r
// the cross-correlation of N and D.
func (l loop) realOnCircle() bool {
	if l.fac != nil {
		return sampledZero(func(th float64) (float64, float64) { return l.g(th), l.gScale(th) })
	}
	r := correlation(l.num, l.den)
	c := len(l.den) - 1
	scale := absSum(l.num) * absSum(l.den)
	for m := 1; ; m++ {
		var plus, minus float64
		inP, inM := c+m < len(r), c-m >= 0
		if !inP && !inM {
			return true
		}
		if inP {
			plus = r[c+m]
		}
		if inM {
			minus = r[c-m]
		}
		if math.Abs(plus-minus) > DegenerateTol*scale {
			return false
		}
	}
}

// unitOnCircle reports h ≡ 0: N and D have equal autocorrelations.
func (l loop) unitOnCircle() bool {
	if l.fac != nil {
		return sampledZero(func(th float64) (float64, float64) { return l.h(th), l.hScale(th) })
	}
	rn, rd := correlation(l.num, l.num), correlation(l.den, l.den)
	scale := absSum(l.num)*absSum(l.num) + absSum(l.den)*absSum(l.den)
	long, short := rn, rd
	if len(rd) > len(rn) {
		long, short = rd, rn
	}
	off := (len(long) - len(short)) / 2
	for i, v := range long {
		w := 0.0
		if j := i - off; j >= 0 && j < len(short) {
			w = short[j]
		}
		if math.Abs(v-w) > DegenerateTol*scale {
			return false
		}
	}
	return true
}

// grid returns sorted distinct angles in [0, π]: a uniform part scaled with
// the degree, geometric clusters near 0 and π, and clusters around the
// angles of roots of N, D and N + D that lie near the circle (there the
// phase and magnitude change over an angular width of about ||r| − 1|).
// gridValues holds the functions the crossing and peak searches need at
// every grid point, from one evaluation of N and D there.
type gridValues struct {
	g, gScale, h, hScale, sens, disk []float64
}

func (l loop) evalGrid(grid []float64, sc *scratch) gridValues {
	n := len(grid)
	all := sc.floats(6 * n) // one array for the six series
	part := func(i int) []float64 { return all[i*n : (i+1)*n : (i+1)*n] }
	v := gridValues{part(0), part(1), part(2), part(3), part(4), part(5)}
	for i, th := range grid {
		N, D := l.eval(th)
		nn, dd := sq(N), sq(D)
		v.g[i] = imag(N * cmplx.Conj(D))
		v.h[i] = nn - dd
		v.hScale[i] = nn + dd
		sum, diff := sq(N+D), sq(D-N)
		if normal(nn) && normal(dd) && normal(sum) && normal(diff) {
			// Every square is a normal number: one rounding per root, the
			// same values as the careful forms below, at half the work.
			an, ad := math.Sqrt(nn), math.Sqrt(dd)
			v.gScale[i] = an * ad
			v.sens[i] = ad / math.Sqrt(sum)
			v.disk[i] = math.Sqrt(diff/sum) / 2
			continue
		}
		v.gScale[i] = fastAbs(N, nn) * fastAbs(D, dd)
		v.sens[i] = fastAbs(D, dd) / fastAbs(N+D, sum)
		v.disk[i] = diskmargin.DistanceND(N, D)
	}
	return v
}

// fastAbs is |c| from its square s = |c|² when that neither overflowed nor
// lost precision to underflow (√ of a normal number: one rounding), and
// the careful cmplx.Abs otherwise: the grid evaluates it thousands of times.
func fastAbs(c complex128, s float64) float64 {
	if normal(s) {
		return math.Sqrt(s)
	}
	return cmplx.Abs(c)
}

// normal reports a square that neither overflowed nor lost precision to
// underflow.
func normal(s float64) bool { return s > 0x1p-1000 && s < 0x1p1000 }

// grid also records the roots of N + D, which the peak search needs. The
// grid is built in sc's arrays.
func (l *loop) grid(sc *scratch) []float64 {
	n := max(l.num.Degree(), l.den.Degree(), 1)
	if l.fac != nil {
		n = max(len(l.fac.Zeros), len(l.fac.Poles), 1)
	}
	count := max(minBaseGrid, baseGridPerDegree*n)
	// Geometric clusters near θ = 0 and π (π·10⁻ᵏ in from each end), and
	// around the angle of every root near the circle. A cluster stops
	// where its gaps (half the offset, at ratio 1.5) reach the uniform
	// spacing: farther out the uniform grid is the denser one.
	var ends [20]float64
	for k := 1; k <= 10; k++ {
		e := math.Pi * math.Pow(10, -float64(k))
		ends[10-k], ends[9+k] = e, math.Pi-e
	}
	clusters := sc.clusters[:0]
	for _, rs := range l.nearRoots() {
		for _, r := range rs {
			d := math.Abs(cmplx.Abs(r) - 1)
			if d >= nearCircle {
				continue
			}
			clusters = append(clusters, anglegrid.Cluster{Center: math.Abs(cmplx.Phase(r)), Start: math.Max(d, 1e-10) / 16})
		}
	}
	sc.clusters = clusters
	reach := math.Min(2*nearCircle, 2*math.Pi/float64(count))
	sc.grid = sc.ag.Build(sc.grid, count, clusters, reach, ends[:])
	return sc.grid
}

// nearRoots returns the roots of N, D and N + D (the last kept in
// closedRoots): given with the factored form, computed as companion
// eigenvalues otherwise.
func (l *loop) nearRoots() [][]complex128 {
	if l.fac != nil {
		l.closedRoots = l.fac.Closed
		return [][]complex128{l.fac.Zeros, l.fac.Poles, l.fac.Closed}
	}
	var out [][]complex128
	for i, p := range []poly.Poly{l.num, l.den, l.num.Add(l.den)} {
		rs, ok := polyroots.Companion(p)
		if !ok {
			continue
		}
		if i == 2 {
			l.closedRoots = rs
		}
		out = append(out, rs)
	}
	return out
}

// roots returns the sorted angles in [0, π] where f vanishes. Grid values
// within NoiseTol·scale of zero count as zero, and a run of such points is
// one root (at its smallest |f|); sign changes between nonzero neighbours
// are bisected; a grid minimum of |f| between two larger same-signed
// neighbours is refined by Brent's method: if the refined |f| is within
// TouchTol·scale it is one tangential touch, and if it dips deeper through
// zero it is two roots.
// fv and sv are f and scale on the grid, computed once by the caller.
func roots(f, scale func(float64) float64, grid, fv, sv []float64) []float64 {
	v := fv
	zero := make([]bool, len(grid))
	for i := range grid {
		zero[i] = math.Abs(v[i]) <= NoiseTol*sv[i]
	}
	var out []float64
	last := len(grid) - 1
	for i := 0; i <= last; i++ {
		if zero[i] {
			j, best := i, i
			for j+1 <= last && zero[j+1] {
				j++
				if math.Abs(v[j]) < math.Abs(v[best]) {
					best = j
				}
			}
			out = append(out, grid[best])
			i = j
			continue
		}
		if i < last && !zero[i+1] && v[i]*v[i+1] < 0 {
			out = append(out, bisect(f, scale, grid[i], grid[i+1], v[i]))
		}
		if (i == 0 || i == last) && math.Abs(v[i]) <= TouchTol*sv[i] {
			out = append(out, grid[i]) // touch at an end (h is even about 0 and π)
			continue
		}
		if i == 0 || i == last {
			continue
		}
		// Most points are not a local minimum of |f|: that test first.
		if a := math.Abs(v[i]); a > math.Abs(v[i-1]) || a > math.Abs(v[i+1]) {
			continue
		}
		if zero[i-1] || zero[i+1] || v[i-1]*v[i] < 0 || v[i]*v[i+1] < 0 {
			continue
		}
		s := math.Copysign(1, v[i])
		th := golden(func(x float64) float64 { return s * f(x) }, grid[i-1], grid[i+1])
		switch fm := s * f(th); {
		case math.Abs(fm) <= TouchTol*scale(th):
			out = append(out, th)
		case fm < 0: // the minimum dips through zero: two roots
			out = append(out, bisect(f, scale, grid[i-1], th, v[i-1]), bisect(f, scale, th, grid[i+1], f(th)))
		}
	}
	sort.Float64s(out)
	dedup := out[:0]
	for _, th := range out {
		if len(dedup) > 0 && th-dedup[len(dedup)-1] <= 10*RootTolRad {
			continue
		}
		dedup = append(dedup, th)
	}
	return dedup
}

// bisect narrows a sign change of f on [a, b] (fa = f(a) ≠ 0) to
// RootTolRad, or until |f| falls within NoiseTol·scale, by the Illinois
// variant of regula falsi (Dowell & Jarratt 1971): superlinear on the
// smooth functions met here, so a handful of evaluations instead of the
// forty halvings of a grid cell down to 1e-12; a step that leaves the
// bracket falls back to halving.
func bisect(f, scale func(float64) float64, a, b, fa float64) float64 {
	fb := f(b)
	if fb == 0 || (fb < 0) == (fa < 0) {
		return b
	}
	side := 0
	for i := 0; i < 100 && b-a > RootTolRad; i++ {
		m := (a*fb - b*fa) / (fb - fa)
		if !(m > a && m < b) {
			m = a + (b-a)/2
		}
		fm := f(m)
		if math.Abs(fm) <= NoiseTol*scale(m) {
			return m
		}
		if (fm < 0) == (fa < 0) {
			a, fa = m, fm
			if side == -1 {
				fb /= 2
			}
			side = -1
		} else {
			b, fb = m, fm
			if side == 1 {
				fa /= 2
			}
			side = 1
		}
	}
	return a + (b-a)/2
}

// golden returns the minimiser of f on [a, b] by Brent's method (golden
// section with parabolic steps), to RootTolRad plus √ε relative: about a
// dozen evaluations over a grid cell. f is assumed unimodal there, which a
// grid minimum between two larger neighbours gives.
func golden(f func(float64) float64, a, b float64) float64 {
	return search.BrentMax(func(x float64) float64 { return -f(x) }, a, b, RootTolRad)
}

// bestOnGrid minimises obj over the grid (skipping points where it is not
// defined) and refines the minimum by Brent's method between neighbours.
func (l loop) bestOnGrid(grid []float64, obj func(float64) (float64, bool)) (float64, bool) {
	best, bestV := -1, math.Inf(1)
	for i, th := range grid {
		if v, ok := obj(th); ok && v < bestV {
			best, bestV = i, v
		}
	}
	if best < 0 {
		return 0, false
	}
	a, b := grid[max(best-1, 0)], grid[min(best+1, len(grid)-1)]
	th := golden(func(x float64) float64 {
		if v, ok := obj(x); ok {
			return v
		}
		return math.Inf(1)
	}, a, b)
	if v, ok := obj(th); ok && v < bestV {
		return th, true
	}
	return grid[best], true
}

// peakSensitivity returns max 20·log10(|D|/|N + D|) over [0, π] and its
// angle; ok is false when N + D has a root on the circle.
func (l loop) peakSensitivity(grid []float64, pts gridValues) (db, th float64, ok bool) {
	if l.fac == nil && l.num.Add(l.den).IsZero() {
		return 0, 0, false
	}
	for _, r := range l.closedRoots {
		if math.Abs(cmplx.Abs(r)-1) <= ClosedLoopCircleTol {
			return 0, 0, false
		}
	}
	sens := func(x float64) float64 {
		N, D := l.eval(x)
		return fastAbs(D, sq(D)) / fastAbs(N+D, sq(N+D))
	}
	v := pts.sens
	best, bestTh := -1.0, 0.0
	for i := range grid {
		left := i == 0 || v[i] >= v[i-1]
		right := i == len(grid)-1 || v[i] >= v[i+1]
		if !left || !right {
			continue
		}
		x := grid[i]
		if i > 0 && i < len(grid)-1 {
			x = golden(func(t float64) float64 { return -sens(t) }, grid[i-1], grid[i+1])
		}
		s := sens(x)
		if s < v[i] {
			s, x = v[i], grid[i]
		}
		N, D := l.eval(x)
		if cmplx.Abs(N+D) <= ClosedLoopCircleTol*(cmplx.Abs(N)+cmplx.Abs(D)) || math.IsInf(s, 0) || math.IsNaN(s) {
			return 0, 0, false
		}
		if s > best {
			best, bestTh = s, x
		}
	}
	if best < 0 {
		return 0, 0, false
	}
	return 20 * math.Log10(best), bestTh, true
}
