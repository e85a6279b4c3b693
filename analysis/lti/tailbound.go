package lti

import "math"

// tailBound certifies the rest of a step response from the simulated state.
// With x∞ = (I − A)⁻¹B the steady state, every later output deviates from
// y∞ = C x∞ + D by y[k+m] − y∞ = C Aᵐ (x[k] − x∞). Take M, a power of two,
// with ‖A^M‖∞ ≤ 1/2 (found by repeated squaring) and
// β = max over r < M of ‖C Aʳ‖₁; writing m = qM + r,
//
//	|C Aᵐ e| ≤ ‖C Aʳ‖₁ ‖A^M‖∞^q ‖e‖∞ ≤ β ‖e‖∞   for every m ≥ 0,
//
// a bound for all later time from one vector norm (a norm bound on the
// state-space model; it needs no eigenvectors, so repeated or clustered
// poles cost nothing). Rounding: squaring P = A^j errs by at most
// n·ε·‖P‖², tiny beside the 1/2 asked of ‖A^M‖ (the 1 the proof needs), and
// the bound is doubled before use.
type tailBound struct {
	xinf []float64
	beta float64
	yinf float64
}

// tailMaxOrder bounds the model order the certificate is built for (its
// cost is n³ per squaring); larger models run the full horizon.
const tailMaxOrder = 40

// newTailBound builds the certificate for s (rows: A's nonzero entries,
// sparseRows), or reports false when it is
// not worth it or not available: order too high, I − A singular, or no
// power of A below the horizon K contracts.
func newTailBound(s System, rows [][]entry, K int) (*tailBound, bool) {
	n := s.N
	if n == 0 || n > tailMaxOrder {
		return nil, false
	}
	xinf, ok := solveShifted(s.A, s.B, n)
	if !ok {
		return nil, false
	}
	M, p, q := 1, append([]float64(nil), s.A...), make([]float64, n*n)
	for normInf(p, n) > 0.5 {
		if M *= 2; M >= K {
			return nil, false
		}
		matSquare(q, p, n)
		p, q = q, p
	}
	t := &tailBound{xinf: xinf, yinf: s.D}
	for i, c := range s.C {
		t.yinf += c * xinf[i]
	}
	v, w := append([]float64(nil), s.C...), make([]float64, n)
	for r := 0; r < M; r++ {
		sum := 0.0
		for _, c := range v {
			sum += math.Abs(c)
		}
		t.beta = math.Max(t.beta, sum)
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
	return t, !math.IsInf(t.beta, 0) && !math.IsNaN(t.beta) && !math.IsNaN(t.yinf)
}

// bound returns twice β‖x − x∞‖∞ plus |final − y∞| (the DC gain the figures
// use, from the factors, against this model's steady state): a bound on
// |y[j] − final| for every sample j from the state x on.
func (t *tailBound) bound(x []float64, final float64) float64 {
	e := 0.0
	for i, v := range x {
		e = math.Max(e, math.Abs(v-t.xinf[i]))
	}
	return 2*t.beta*e + 2*math.Abs(final-t.yinf)
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

// matSquare sets dst = p·p for n×n matrices.
func matSquare(dst, p []float64, n int) {
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s := 0.0
			for k := 0; k < n; k++ {
				s += p[i*n+k] * p[k*n+j]
			}
			dst[i*n+j] = s
		}
	}
}
