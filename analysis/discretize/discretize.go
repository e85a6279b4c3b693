// Package discretize turns a continuous transfer function H(s) into a
// discrete one H(z) for a sample period T, by zero-order hold, first-order
// (triangle) hold, Tustin's bilinear transform or matched pole-zero mapping.
//
// ZOH and FOH are exact for their hold: the controllable canonical
// realisation (A, B, C, D) of H(s) is balanced, the matrix exponential of an
// augmented matrix gives Φ = e^{AT} and the input matrices, and the result
// goes back to a transfer function as follows.
//
//   - Denominator: by the spectral mapping theorem det(zI − Φ) = ∏(z − e^{p_i T})
//     over the poles p_i of H(s). It is built from the roots of the
//     continuous denominator (package roots) rather than from the computed
//     Φ, because e^{pT} is relatively accurate even for fast poles whose
//     e^{pT} is tiny, where eigenvalues of Φ would only be accurate
//     relative to ‖Φ‖; repeated poles come out as clusters whose symmetric
//     functions, and so the coefficients, stay accurate.
//   - Numerator: from the Markov parameters h_0 = D_d, h_k = C Φ^{k−1} Γ:
//     N(z) = D(z)·H(z) as power series in z^{-1}, truncated at z^0, which is
//     exact algebra (no subtraction of two characteristic polynomials, no
//     interpolation points that could meet a pole). Its rounding error is
//     about eps·Σ|d_j|·max|h_k|, relative to the size of the denominator.
//
// Results have a monic denominator of the same degree as the continuous one.
package discretize

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Method is a discretization method.
type Method int

const (
	// ZOH holds each input sample constant over the period.
	ZOH Method = iota + 1
	// FOH joins input samples by straight lines (triangle hold).
	FOH
	// Tustin substitutes s = (2/T)(z−1)/(z+1).
	Tustin
	// Matched maps poles and zeros by z = e^{sT}.
	Matched
)

var keywords = map[Method]string{ZOH: "zoh", FOH: "foh", Tustin: "tustin", Matched: "matched"}

// ParseMethod returns the method for its keyword: "zoh", "foh", "tustin"
// or "matched".
func ParseMethod(name string) (Method, bool) {
	for m, k := range keywords {
		if k == name {
			return m, true
		}
	}
	return 0, false
}

// String returns the method's keyword.
func (m Method) String() string {
	if k, ok := keywords[m]; ok {
		return k
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// Title returns the method's name in words.
func (m Method) Title() string {
	switch m {
	case ZOH:
		return "zero-order hold"
	case FOH:
		return "first-order hold (triangle hold)"
	case Tustin:
		return "Tustin (bilinear)"
	case Matched:
		return "matched pole-zero"
	}
	return m.String()
}

// Options selects the method and sample period T in seconds. PrewarpHz, for
// Tustin only, is the frequency at which the discrete response is made to
// equal the continuous one exactly; 0 means no prewarping.
type Options struct {
	Method    Method
	T         float64
	PrewarpHz float64
}

// Discretize returns H(z) for the continuous H(s) = c. The denominator is
// monic and of the same degree as c's. Errors: T ≤ 0 or non-finite,
// non-finite coefficients, zero denominator, improper c (numerator degree
// above denominator degree), a bad prewarp frequency (negative, at or above
// the Nyquist frequency 1/(2T), or given for a method other than Tustin), an
// unknown method, and results that do not fit in float64.
func Discretize(c poly.Rational, o Options) (poly.Rational, error) {
	num, den := c.Num.Trim(), c.Den.Trim()
	switch {
	case !(o.T > 0) || math.IsInf(o.T, 1):
		return poly.Rational{}, fmt.Errorf("discretize: sample period must be positive and finite, got %g", o.T)
	case !num.Finite() || !den.Finite():
		return poly.Rational{}, errors.New("discretize: transfer function has a non-finite coefficient")
	case den.IsZero():
		return poly.Rational{}, errors.New("discretize: denominator is zero")
	case num.Degree() > den.Degree():
		return poly.Rational{}, fmt.Errorf("discretize: improper transfer function (numerator degree %d above denominator degree %d) has no causal discrete equivalent", num.Degree(), den.Degree())
	case o.Method < ZOH || o.Method > Matched:
		// Checked here, before the static-gain shortcut below skips the method.
		return poly.Rational{}, fmt.Errorf("discretize: unknown method %d", int(o.Method))
	case math.IsNaN(o.PrewarpHz) || o.PrewarpHz < 0 || math.IsInf(o.PrewarpHz, 0):
		return poly.Rational{}, fmt.Errorf("discretize: prewarp frequency must be a finite non-negative number, got %g", o.PrewarpHz)
	case o.PrewarpHz != 0 && o.Method != Tustin:
		return poly.Rational{}, fmt.Errorf("discretize: prewarping applies to Tustin only, not to %s", o.Method.Title())
	case o.PrewarpHz >= 0.5/o.T:
		return poly.Rational{}, fmt.Errorf("discretize: prewarp frequency %g Hz is at or above the Nyquist frequency %g Hz", o.PrewarpHz, 0.5/o.T)
	}
	// Monic continuous denominator; the numerator scaled alike.
	lead := den.Lead()
	den = den.Scale(1 / lead)
	num = num.Scale(1 / lead)
	if !den.Finite() || !num.Finite() {
		return poly.Rational{}, errors.New("discretize: coefficients overflow when the denominator is made monic")
	}
	if den.Degree() == 0 {
		return poly.R(num, poly.Const(1)), nil // a static gain stays itself
	}
	var r poly.Rational
	var err error
	switch o.Method {
	case ZOH, FOH:
		r, err = holdEquivalent(num, den, o.T, o.Method == FOH)
	case Tustin:
		r, err = tustin(num, den, o.T, o.PrewarpHz)
	case Matched:
		r, err = matched(num, den, o.T)
	default:
		return poly.Rational{}, fmt.Errorf("discretize: unknown method %d", int(o.Method))
	}
	if err != nil {
		return poly.Rational{}, err
	}
	if !r.Num.Finite() || !r.Den.Finite() {
		return poly.Rational{}, errors.New("discretize: result coefficients overflow float64")
	}
	return r, nil
}

// realisation is the controllable canonical form of num/den (den monic,
// degree n ≥ 1): A companion with last row −a_0 … −a_{n−1}, B = e_n,
// C = coefficients of num − D·den, D = num_n.
func realisation(num, den poly.Poly) (a *mat.Dense, b, cRow []float64, d float64) {
	n := len(den) - 1
	if len(num) == n+1 {
		d = num[n]
	}
	rest := num.Sub(den.Scale(d))
	a = mat.NewDense(n, n, nil)
	for i := 0; i+1 < n; i++ {
		a.Set(i, i+1, 1)
	}
	for j := 0; j < n; j++ {
		a.Set(n-1, j, -den[j])
	}
	b = make([]float64, n)
	b[n-1] = 1
	cRow = make([]float64, n)
	for j := 0; j < n && j < len(rest); j++ {
		cRow[j] = rest[j]
	}
	balance(a, b, cRow)
	return a, b, cRow, d
}

// balanceSweeps bounds the sweeps of diagonal balancing; it converges in a
// handful, and more than this only happens for pathological input.
const balanceSweeps = 20

// balance applies a diagonal similarity S of powers of two (exact) so that
// the rows and columns of A have similar norms (Parlett & Reinsch 1969):
// A ← S⁻¹AS, B ← S⁻¹B, C ← CS, which leaves C(sI−A)⁻¹B unchanged and makes
// the matrix exponential and the powers of Φ better conditioned for
// companion matrices whose coefficients span many orders of magnitude.
func balance(a *mat.Dense, b, c []float64) {
	n, _ := a.Dims()
	for sweep := 0; sweep < balanceSweeps; sweep++ {
		changed := false
		for i := 0; i < n; i++ {
			var rn, cn float64
			for j := 0; j < n; j++ {
				if j != i {
					cn += math.Abs(a.At(j, i))
					rn += math.Abs(a.At(i, j))
				}
			}
			if rn == 0 || cn == 0 {
				continue
			}
			f := 1.0
			for cn < rn/2 {
				cn *= 2
				rn /= 2
				f *= 2
			}
			for cn >= rn*2 {
				cn /= 2
				rn *= 2
				f /= 2
			}
			if f == 1 {
				continue
			}
			changed = true
			// Column i times f, row i divided by f.
			for j := 0; j < n; j++ {
				a.Set(j, i, a.At(j, i)*f)
			}
			for j := 0; j < n; j++ {
				a.Set(i, j, a.At(i, j)/f)
			}
			b[i] /= f
			c[i] *= f
		}
		if !changed {
			return
		}
	}
}

// holdEquivalent discretizes with a zero-order hold, or with a triangle
// hold when foh is set. With M = [[AT, BT, 0], [0, 0, I], [0, 0, 0]],
// e^M holds Φ = e^{AT}, Γ1 = ∫₀ᵀ e^{Aσ}dσ B and
// Γ2 = Σ_k A^k B T^{k+1}/(k+2)!. ZOH uses (Φ, Γ1, C, D); the triangle hold
// (Franklin, Powell & Workman, Digital Control of Dynamic Systems, the
// triangle-hold equivalent) uses Γ = Γ1 − Γ2 + ΦΓ2 and D_d = D + CΓ2.
func holdEquivalent(num, den poly.Poly, T float64, foh bool) (poly.Rational, error) {
	a, b, c, d := realisation(num, den)
	n := len(b)
	size := n + 1
	if foh {
		size = n + 2
	}
	m := mat.NewDense(size, size, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			m.Set(i, j, a.At(i, j)*T)
		}
		m.Set(i, n, b[i]*T)
	}
	if foh {
		m.Set(n, n+1, 1)
	}
	// gonum's Exp squares log2(‖M‖) times: an overflowed ‖M‖ (a pole far
	// beyond 1/T, or a huge T) would never return.
	if norm := mat.Norm(m, 1); math.IsInf(norm, 0) || math.IsNaN(norm) {
		return poly.Rational{}, errors.New("discretize: A·T overflows float64 (a pole far too fast for the sample period)")
	}
	var e mat.Dense
	e.Exp(m)
	phi := mat.DenseCopyOf(e.Slice(0, n, 0, n))
	gamma := make([]float64, n)
	dd := d
	for i := 0; i < n; i++ {
		gamma[i] = e.At(i, n)
	}
	if foh {
		g2 := make([]float64, n)
		for i := range g2 {
			g2[i] = e.At(i, n+1)
		}
		for i := 0; i < n; i++ {
			var pg float64
			for j := 0; j < n; j++ {
				pg += phi.At(i, j) * g2[j]
			}
			gamma[i] += pg - g2[i]
			dd += c[i] * g2[i]
		}
	}
	for i := range gamma {
		if math.IsNaN(gamma[i]) || math.IsInf(gamma[i], 0) {
			return poly.Rational{}, errors.New("discretize: matrix exponential overflows (poles too fast for this sample period)")
		}
	}
	dz, err := mappedDenominator(den, T)
	if err != nil {
		return poly.Rational{}, err
	}
	// Markov parameters h_0 = D_d, h_k = C Φ^{k−1} Γ.
	h := make([]float64, n+1)
	h[0] = dd
	x := mat.NewVecDense(n, gamma)
	for k := 1; k <= n; k++ {
		var s float64
		for i := 0; i < n; i++ {
			s += c[i] * x.AtVec(i)
		}
		h[k] = s
		var next mat.VecDense
		next.MulVec(phi, x)
		x = &next
	}
	// dz lowest power first: the coefficient of z^{n−j} is dz[n−j].
	numz := make(poly.Poly, n+1)
	for i := 0; i <= n; i++ {
		var s float64
		for j := 0; j <= i; j++ {
			s += dz[n-j] * h[i-j]
		}
		numz[n-i] = s
	}
	return poly.R(numz, dz), nil
}

// monic divides num and den by den's leading coefficient, which becomes
// exactly 1.
func monic(num, den poly.Poly) poly.Rational {
	l := den.Lead()
	n := make(poly.Poly, len(num))
	d := make(poly.Poly, len(den))
	for i, v := range num {
		n[i] = v / l
	}
	for i, v := range den {
		d[i] = v / l
	}
	return poly.R(n, d)
}

// mappedDenominator returns ∏(z − e^{p T}) over the roots p of den.
func mappedDenominator(den poly.Poly, T float64) (poly.Poly, error) {
	res, err := roots.Find(den)
	if err != nil {
		return nil, fmt.Errorf("discretize: poles of the continuous denominator: %w", err)
	}
	return poly.FromRoots(mapRoots(res.Roots, T)), nil
}

// mapRoots maps each root by z = e^{sT}, keeping conjugates exact.
func mapRoots(rs []complex128, T float64) []complex128 {
	out := make([]complex128, len(rs))
	for i, r := range rs {
		if imag(r) == 0 {
			out[i] = complex(math.Exp(real(r)*T), 0)
		} else {
			out[i] = cmplx.Exp(r * complex(T, 0))
		}
	}
	return out
}

// tustin substitutes s = K(z−1)/(z+1), K = 2/T, or K = ω/tan(ωT/2) with
// ω = 2π·prewarpHz, which makes H(e^{iωT}) = H(iω) exactly. Multiplying
// through by (z+1)^n gives Σ c_i K^i (z−1)^i (z+1)^(n−i) for numerator and
// denominator alike.
func tustin(num, den poly.Poly, T, prewarpHz float64) (poly.Rational, error) {
	k := 2 / T
	if prewarpHz > 0 {
		w := 2 * math.Pi * prewarpHz
		k = w / math.Tan(w*T/2)
	}
	n := len(den) - 1
	sub := func(p poly.Poly) poly.Poly {
		var r poly.Poly
		kp := 1.0
		for i := 0; i <= n; i++ {
			if i < len(p) && p[i] != 0 {
				term := poly.Poly{-1, 1}.Pow(i).Mul(poly.Poly{1, 1}.Pow(n - i)).Scale(p[i] * kp)
				r = r.Add(term)
			}
			kp *= k
		}
		return r
	}
	nz, dz := sub(num), sub(den)
	if dz.Degree() < n || dz.Lead() == 0 {
		return poly.Rational{}, fmt.Errorf("discretize: a pole at s = %g maps to z = ∞ under Tustin", k)
	}
	return monic(nz, dz), nil
}

// matched maps poles and finite zeros by z = e^{sT}. Of the r = n − m zeros
// at infinity, r − 1 are placed at z = −1 (the Nyquist frequency) and one is
// left at infinity, so a strictly proper H(s) gives a strictly proper H(z)
// with one sample of delay and a biproper one stays biproper.
//
// Gain: with k the net number of poles at s = 0 (poles minus zeros there),
// the low-frequency asymptotes are matched, lim s^k H(s) as s → 0 equal to
// lim ((z−1)/T)^k H(z) as z → 1; for k = 0 that is the DC gain.
func matched(num, den poly.Poly, T float64) (poly.Rational, error) {
	n := len(den) - 1
	pr, err := roots.Find(den)
	if err != nil {
		return poly.Rational{}, fmt.Errorf("discretize: poles of the continuous denominator: %w", err)
	}
	dz := poly.FromRoots(mapRoots(pr.Roots, T))
	if num.IsZero() {
		return poly.R(nil, dz), nil
	}
	zr, err := roots.Find(num)
	if err != nil {
		return poly.Rational{}, fmt.Errorf("discretize: zeros of the continuous numerator: %w", err)
	}
	m := len(num) - 1
	zmapped := mapRoots(zr.Roots, T)
	r := n - m

	for i := 0; i < r-1; i++ {
		zmapped = append(zmapped, -1)
	}
	nz := poly.FromRoots(zmapped)

	// Continuous asymptote gain: lead(num)·∏(−q)/∏(−p) over nonzero roots.
	// Discrete: N'(1)/D'(1)/T^k with the (z−1) factors of the s = 0 roots
	// taken out.
	gc := complex(num.Lead(), 0)
	gd := complex(1, 0)
	k := 0
	for _, q := range zr.Roots {
		if q == 0 {
			k--
			continue
		}
		gc *= -q
		f, err := oneMinusExp(q, T)
		if err != nil {
			return poly.Rational{}, err
		}
		gd *= f
	}
	for range max(r-1, 0) {
		gd *= 2 // zeros at z = −1
	}
	for _, p := range pr.Roots {
		if p == 0 {
			k++
			continue
		}
		gc /= -p
		f, err := oneMinusExp(p, T)
		if err != nil {
			return poly.Rational{}, err
		}
		gd /= f
	}
	gd /= complex(math.Pow(T, float64(k)), 0)
	if gd == 0 || cmplx.IsInf(gd) || cmplx.IsNaN(gd) || cmplx.IsInf(gc) || gc == 0 {
		return poly.Rational{}, errors.New("discretize: matched gain does not fit in float64")
	}
	g := real(gc / gd)
	return poly.R(nz.Scale(g), dz), nil
}

// aliasTol bounds |1 − e^{pT}| / |pT| from below for a nonzero pole or
// zero p in the matched method. For p near the origin the ratio is about 1;
// it falls below 1e-8 only when e^{pT} lands within that of z = 1, i.e. p
// sits at (or within 1e-8·|p| of) a nonzero multiple of the sampling
// frequency 2πi/T, where the gain matching would divide by noise.
const aliasTol = 1e-8

// oneMinusExp returns 1 − e^{pT} accurately (expm1, and
// cos y − 1 = −2 sin²(y/2)), or an error when p aliases onto z = 1.
func oneMinusExp(p complex128, T float64) (complex128, error) {
	x, y := real(p)*T, imag(p)*T
	var v complex128
	if y == 0 {
		v = complex(-math.Expm1(x), 0)
	} else {
		sh := math.Sin(y / 2)
		re := math.Expm1(x)*math.Cos(y) - 2*sh*sh
		v = complex(-re, -math.Exp(x)*math.Sin(y))
	}
	if cmplx.Abs(v) < aliasTol*cmplx.Abs(p*complex(T, 0)) {
		return 0, fmt.Errorf("discretize: matched: the pole or zero %v maps onto z = 1 (it lies at a multiple of the sampling frequency 2π/T)", p)
	}
	return v, nil
}
