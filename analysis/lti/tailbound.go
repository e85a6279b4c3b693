package lti

import "math"

// tailBound certifies the rest of a step response from the simulated state.
// With x∞ = (I − A)⁻¹B the steady state, every later output deviates from
// y∞ = C x∞ + D by y[k+m] − y∞ = C Aᵐ (x[k] − x∞). In the balanced
// coordinates x = S x̃ (S = diag(2^sᵢ) from balance: exact, and a state
// whose parts differ in size by many orders, as an integrator's beside a
// fast lag's, no longer makes the ∞-norm loose), Ã = S⁻¹AS, C̃ = CS. Take
// M with ‖Ã^M‖∞ ≤ contraction < 1 (a power of two found by repeated
// squaring, then brought down by bisection: leastContracting) and
// β = max over r < M of ‖C̃ Ãʳ‖₁; writing m = qM + r,
//
//	|C Aᵐ e| = |C̃ Ãʳ (Ã^M)^q ẽ| ≤ ‖C̃ Ãʳ‖₁ ‖Ã^M‖∞^q ‖ẽ‖∞ ≤ β ‖S⁻¹e‖∞
//
// for every m ≥ 0: a bound for all later time from one vector norm (a norm
// bound on the state-space model; it needs no eigenvectors, so repeated or
// clustered poles cost nothing; the smallest such M gives the fewest terms
// in β). The same holds in 2-norms, |C Aᵐ e| ≤ β₂‖S⁻¹e‖₂ with β₂ the
// largest ‖C̃Ãʳ‖₂ and ‖Ã^M‖₂ ≤ 0.99 (contracts): for a decaying pole pair,
// whose balanced state turns, it is the envelope itself, up to √n tighter
// than the ∞-norm form; each bound takes the smaller of the two.
// Rounding: squaring P = Ã^j errs by at most n·ε·‖P‖², tiny beside the gap
// between contraction and the 1 the proof needs, and β is a sum of M·n
// products, each with relative error below (M + n)·ε; the bound is raised
// by tailSafety to cover both with room to spare.
type tailBound struct {
	xinf  []float64
	scale []float64 // 2^−sᵢ: ẽ = S⁻¹e
	c     []float64 // C (unscaled)
	beta  float64   // max over r < M of ‖C̃Ãʳ‖₁, for ∞-norms of states
	beta2 float64   // max over r < M of ‖C̃Ãʳ‖₂, for 2-norms of states
	yinf  float64
	// pows[i] is Ã^(2^i), from the squarings (extended by leaps).
	pows [][]float64
}

// contraction is what ‖Ã^M‖∞ and the bound on ‖Ã^M‖₂ must reach (see
// contracts): any value below 1 proves the bound; 0.99 leaves a gap far
// above the rounding of the squarings.
const contraction = 0.99

// tailSafety raises the bound over the rounding of β and of Ã^M (relative
// errors far below 1e-6 for the orders and horizons met here).
const tailSafety = 1 + 1.0/1024

// tailMaxOrder bounds the model order the certificate is built for (its
// cost is n³ per squaring); larger models run the full horizon.
const tailMaxOrder = 40

// newTailBound builds the certificate for s, or reports false when it is
// not worth it or not available: order too high, I − A singular, or no
// power of A below the horizon K contracts.
func newTailBound(s System, K int) (*tailBound, bool) {
	n := s.N
	if n == 0 || n > tailMaxOrder {
		return nil, false
	}
	xinf, ok := solveShifted(s.A, s.B, n)
	if !ok {
		return nil, false
	}
	a := append([]float64(nil), s.A...)
	exps := balance(a, n)
	rows := sparseRows(a, n)
	M, p := 1, a
	pows := [][]float64{a}
	for !contracts(p, n) {
		if M *= 2; M >= K {
			return nil, false
		}
		q := make([]float64, n*n)
		matMul(q, p, p, n)
		p = q
		pows = append(pows, q)
	}
	M = leastContracting(pows, M, n)
	t := &tailBound{xinf: xinf, yinf: s.D, scale: make([]float64, n), c: s.C, pows: pows}
	for i, c := range s.C {
		t.yinf += c * xinf[i]
		t.scale[i] = math.Ldexp(1, -exps[i])
	}
	v, w := make([]float64, n), make([]float64, n)
	for i, c := range s.C {
		v[i] = math.Ldexp(c, exps[i])
	}
	for r := 0; r < M; r++ {
		sum, sq := 0.0, 0.0
		for _, c := range v {
			sum, sq = sum+math.Abs(c), sq+c*c
		}
		if sum > t.beta || sum != sum { // a NaN is kept: the check below refuses it
			t.beta = sum
		}
		if sq > t.beta2 || sq != sq {
			t.beta2 = sq
		}
		for j := range w {
			w[j] = 0
		}
		for i, c := range v {
			if c != 0 {
				for _, e := range rows[i] {
					w[e.j] += c * e.a
				}
			}
		}
		v, w = w, v
	}
	t.beta *= tailSafety
	t.beta2 = tailSafety * math.Sqrt(t.beta2)
	return t, !math.IsInf(t.beta, 0) && !math.IsNaN(t.beta) && !math.IsNaN(t.beta2) && !math.IsNaN(t.yinf)
}

// leastContracting lowers M, a power of two whose Ã^M contracts (pows[i]
// = Ã^(2^i), the last one Ã^M), to about the least such power by
// bisection between M/2 and M: each try is a product of the squared powers
// (n³ work per factor), while every unit of M saved spares one row of β (a
// slow loop's M runs to thousands). Any M whose power contracts keeps the
// proof.
func leastContracting(pows [][]float64, M, n int) int {
	if M < 64 {
		return M
	}
	lo, hi := M/2, M // Ã^lo does not contract, Ã^hi does
	p, q := make([]float64, n*n), make([]float64, n*n)
	for hi-lo > M/16 {
		mid := lo + (hi-lo)/2
		powerOf(p, q, pows, mid, n)
		if contracts(p, n) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}

// powerOf sets dst = Ã^m from the squared powers (q is scratch).
func powerOf(dst, q []float64, pows [][]float64, m, n int) {
	first := true
	for i := 0; m > 0; i, m = i+1, m>>1 {
		if m&1 == 0 {
			continue
		}
		if first {
			copy(dst, pows[i])
			first = false
			continue
		}
		matMul(q, dst, pows[i], n)
		copy(dst, q)
	}
}

// matMul sets dst = p·q for n×n matrices.
func matMul(dst, p, q []float64, n int) {
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s := 0.0
			for k := 0; k < n; k++ {
				s += p[i*n+k] * q[k*n+j]
			}
			dst[i*n+j] = s
		}
	}
}

// contracts reports whether the power P of Ã contracts in both norms the
// bounds use: ‖P‖∞ ≤ contraction, and ‖P‖₂ ≤ √(‖P‖₁‖P‖∞) ≤ contraction
// (Golub & Van Loan, Matrix Computations, §2.3: the 2-norm is at most the
// geometric mean of the 1- and ∞-norms).
func contracts(p []float64, n int) bool {
	inf := normInf(p, n)
	return inf <= contraction && math.Sqrt(normOne(p, n)*inf) <= contraction
}

// bounds returns dev, a bound on |y[j] − final|, and over, a bound on
// σ·(y[j] − final) (σ the sign of final), for every sample j from the state
// x on, given next = A x + B. The first is β‖S⁻¹(x − x∞)‖∞ (or
// β₂‖S⁻¹(x − x∞)‖₂, the smaller; likewise for d below) plus
// |final − y∞| (the DC gain the figures use, from the factors, against
// this model's steady state). Besides that, it uses the slow real mode
// that dominates a settling tail (an integrator's, an overdamped loop's):
// with e = x − x∞, u = C e and any λ in [0, 1), the exact identity
// u[k+1] = λ·u[k] + C d[k] with d = (A − λI) e, d[k+i] = Aⁱ d[k], gives
//
//	u[k+m] = λᵐ u[k] + Σ_{i<m} λ^(m−1−i) C Aⁱ d[k],  |C Aⁱ d| ≤ β ‖S⁻¹d‖∞,
//	so |u[k+m]| ≤ |u[k]| + β‖S⁻¹d‖∞/(1 − λ), σu[k+m] ≤ max(σu[k], 0) + β‖S⁻¹d‖∞/(1 − λ).
//
// λ is the least-squares ratio of S⁻¹(next − x∞) to S⁻¹e (any λ keeps the
// proof; this one leaves in d only the faster modes, which die out long
// before the slow one: the tail is certified soon after the last exit from
// the band, and the overshoot of a response that creeps up to its final
// value without the 1e-6 wait). The smaller of each pair of bounds is
// returned, raised by tailSafety.
func (t *tailBound) bounds(x, next []float64, final float64) (dev, over float64) {
	var ee, e1e, emax, u float64
	for i, v := range x {
		e := (v - t.xinf[i]) * t.scale[i]
		e1 := (next[i] - t.xinf[i]) * t.scale[i]
		ee, e1e = ee+e*e, e1e+e*e1
		if a := math.Abs(e); a > emax || a != a {
			emax = a
		}
		u += t.c[i] * (v - t.xinf[i])
	}
	offset := tailSafety * math.Abs(final-t.yinf)
	dev = math.Min(t.beta*emax, t.beta2*math.Sqrt(ee)) + offset
	over = dev
	if !(ee > 0) {
		return dev, over
	}
	lambda := e1e / ee
	if !(lambda >= 0 && lambda < 1) {
		return dev, over
	}
	dmax, dd := 0.0, 0.0
	for i, v := range x {
		d := ((next[i] - t.xinf[i]) - lambda*(v-t.xinf[i])) * t.scale[i]
		dd += d * d
		if a := math.Abs(d); a > dmax || a != a {
			dmax = a
		}
	}
	tail := math.Min(t.beta*dmax, t.beta2*math.Sqrt(dd)) / (1 - lambda)
	dev = math.Min(dev, tailSafety*(math.Abs(u)+tail)+offset)
	over = math.Min(over, tailSafety*(math.Max(math.Copysign(1, final)*u, 0)+tail)+offset)
	return dev, over
}

// solveShifted solves (I − A) x = b by Gaussian elimination with partial
// pivoting; false when a pivot vanishes.
func solveShifted(a, b []float64, n int) ([]float64, bool) {
	m := make([]float64, n*(n+1))
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			m[i*(n+1)+j] = -a[i*n+j]
		}
		m[i*(n+1)+i]++
		m[i*(n+1)+n] = b[i]
	}
	w := n + 1
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(m[r*w+c]) > math.Abs(m[p*w+c]) {
				p = r
			}
		}
		if m[p*w+c] == 0 {
			return nil, false
		}
		for j := 0; j < w; j++ {
			m[c*w+j], m[p*w+j] = m[p*w+j], m[c*w+j]
		}
		for r := c + 1; r < n; r++ {
			f := m[r*w+c] / m[c*w+c]
			for j := c; j < w; j++ {
				m[r*w+j] -= f * m[c*w+j]
			}
		}
	}
	x := make([]float64, n)
	for i := n - 1; i >= 0; i-- {
		v := m[i*w+n]
		for j := i + 1; j < n; j++ {
			v -= m[i*w+j] * x[j]
		}
		x[i] = v / m[i*w+i]
	}
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, false
		}
	}
	return x, true
}

// normOne is the largest absolute column sum of the n×n matrix p.
func normOne(p []float64, n int) float64 {
	worst := 0.0
	for j := 0; j < n; j++ {
		s := 0.0
		for i := 0; i < n; i++ {
			s += math.Abs(p[i*n+j])
		}
		worst = math.Max(worst, s)
	}
	if math.IsNaN(worst) {
		return math.Inf(1)
	}
	return worst
}

// normInf is the largest absolute row sum of the n×n matrix p.
func normInf(p []float64, n int) float64 {
	worst := 0.0
	for i := 0; i < n; i++ {
		s := 0.0
		for _, v := range p[i*n : (i+1)*n] {
			s += math.Abs(v)
		}
		worst = math.Max(worst, s)
	}
	if math.IsNaN(worst) {
		return math.Inf(1)
	}
	return worst
}
