package lti

import (
	"math"
	"math/cmplx"
)

// System is a single-input single-output state-space model
//
//	x[k+1] = A x[k] + B u[k],  y[k] = C x[k] + D u[k]
//
// with A stored row-major (N×N).
type System struct {
	N    int
	A    []float64
	B, C []float64
	D    float64
}

// section is one real first- or second-order factor: num/den with den monic
// of degree 1 or 2 and num of degree ≤ deg den (lowest power first), and the
// poles it was built from.
type section struct {
	num, den []float64
	poles    []complex128
}

// Realize returns a state-space model of f as a cascade of first-order
// sections (real poles) and second-order sections (a complex pair in modal
// form [[σ, ω], [−ω, σ]], or two real poles in series), with the zeros
// distributed over the sections and the gain in the last one. No expanded
// polynomial of high degree is formed, so the model's eigenvalues are the
// poles to within the rounding of each section. f must be proper (no more
// zeros than poles).
func Realize(f Factored) System {
	secs := sections(f)
	if len(secs) == 0 {
		return System{D: f.Gain}
	}
	// Each section is normalised to a unit-size output map and the gain,
	// with those sizes folded in, is spread evenly as |k|^(1/m) over the m
	// sections (its sign on the last): a chain of lags closed by a tiny gain
	// is then already balanced (every link of size |k|^(1/m)), which the
	// balancing's local steps would reach only after very many sweeps.
	parts := make([]System, len(secs))
	logK := math.Log(math.Abs(f.Gain))
	for i, s := range secs {
		parts[i] = s.realize()
		if sz := parts[i].size(); sz > 0 && !math.IsInf(sz, 0) {
			parts[i].scale(1 / sz)
			logK += math.Log(sz)
		}
	}
	each := math.Exp(logK / float64(len(parts)))
	var sys System
	for i, p := range parts {
		p.scale(each)
		if i == len(parts)-1 && f.Gain < 0 {
			p.scale(-1)
		}
		if i == 0 {
			sys = p
			continue
		}
		sys = Series(sys, p)
	}
	if f.Gain == 0 {
		sys.scale(0)
	}
	return sys
}

// size is the largest of |C| and |D|, the section's output scale.
func (s System) size() float64 {
	m := math.Abs(s.D)
	for _, c := range s.C {
		m = math.Max(m, math.Abs(c))
	}
	return m
}

func (s *System) scale(k float64) {
	for i := range s.C {
		s.C[i] *= k
	}
	s.D *= k
}

// sections groups poles into real sections and zeros onto them: complex
// zero pairs go to second-order sections (merging two real poles when no
// complex pair is left), real zeros to any section with room.
func sections(f Factored) []section {
	rp, cp := split(f.Poles)
	rz, cz := split(f.Zeros)
	var secs []section
	for _, p := range cp {
		secs = append(secs, section{den: quad(p), poles: []complex128{p, cmplx.Conj(p)}})
	}
	// Complex zero pairs need second-order sections.
	next := 0
	for _, z := range cz {
		if next < len(secs) {
			secs[next].num = quad(z)
			next++
			continue
		}
		p1, p2 := rp[len(rp)-1], rp[len(rp)-2]
		rp = rp[:len(rp)-2]
		secs = append(secs, section{num: quad(z), den: mulLin(p1, p2), poles: []complex128{complex(p1, 0), complex(p2, 0)}})
		next = len(secs)
	}
	for _, p := range rp {
		secs = append(secs, section{den: []float64{-p, 1}, poles: []complex128{complex(p, 0)}})
	}
	for _, z := range rz {
		for i := range secs {
			s := &secs[i]
			if len(s.num) < len(s.den) {
				s.num = mulPoly(s.num, []float64{-z, 1})
				break
			}
		}
	}
	for i := range secs {
		if secs[i].num == nil {
			secs[i].num = []float64{1}
		}
	}
	return secs
}

// split returns the real roots and the upper members of the complex pairs.
func split(zs []complex128) (re []float64, up []complex128) {
	for _, z := range zs {
		switch {
		case imag(z) == 0:
			re = append(re, real(z))
		case imag(z) > 0:
			up = append(up, z)
		}
	}
	return re, up
}

// quad is (z − p)(z − conj p) = z² − 2 Re p · z + |p|².
func quad(p complex128) []float64 {
	return []float64{real(p)*real(p) + imag(p)*imag(p), -2 * real(p), 1}
}

func mulLin(a, b float64) []float64 { return []float64{a * b, -(a + b), 1} }

func mulPoly(p, q []float64) []float64 {
	if p == nil {
		p = []float64{1}
	}
	r := make([]float64, len(p)+len(q)-1)
	for i, a := range p {
		for j, b := range q {
			r[i+j] += a * b
		}
	}
	return r
}

func coef(p []float64, i int) float64 {
	if i < len(p) {
		return p[i]
	}
	return 0
}

// realize builds the section's own model.
func (s section) realize() System {
	n := len(s.den) - 1
	d := coef(s.num, n) // direct term; the rest is strictly proper
	c0 := coef(s.num, 0) - d*s.den[0]
	if n == 1 {
		p := real(s.poles[0])
		return System{N: 1, A: []float64{p}, B: []float64{1}, C: []float64{c0}, D: d}
	}
	c1 := coef(s.num, 1) - d*s.den[1]
	if imag(s.poles[0]) != 0 {
		sg, w := real(s.poles[0]), math.Abs(imag(s.poles[0]))
		return System{N: 2, A: []float64{sg, w, -w, sg}, B: []float64{0, 1}, C: []float64{(c0 + c1*sg) / w, c1}, D: d}
	}
	p1, p2 := real(s.poles[0]), real(s.poles[1])
	return System{N: 2, A: []float64{p1, 0, 1, p2}, B: []float64{1, 0}, C: []float64{c1, c0 + c1*p2}, D: d}
}

// Series returns the model of g2 after g1 (the output of g1 drives g2):
//
//	A = [[A1, 0], [B2 C1, A2]], B = [B1; B2 D1], C = [D2 C1, C2], D = D2 D1.
func Series(g1, g2 System) System {
	n := g1.N + g2.N
	s := System{N: n, A: make([]float64, n*n), B: make([]float64, n), C: make([]float64, n), D: g2.D * g1.D}
	for i := 0; i < g1.N; i++ {
		copy(s.A[i*n:i*n+g1.N], g1.A[i*g1.N:(i+1)*g1.N])
		s.B[i] = g1.B[i]
		s.C[i] = g2.D * g1.C[i]
	}
	for i := 0; i < g2.N; i++ {
		row := (g1.N + i) * n
		for j := 0; j < g1.N; j++ {
			s.A[row+j] = g2.B[i] * g1.C[j]
		}
		copy(s.A[row+g1.N:row+n], g2.A[i*g2.N:(i+1)*g2.N])
		s.B[g1.N+i] = g2.B[i] * g1.D
		s.C[g1.N+i] = g2.C[i]
	}
	return s
}

// Feedback closes u = r − σ·w around the forward model g (r → y) with the
// measurement h (y → w); σ = +1 for negative feedback, −1 for positive. The
// states are [x_g; x_h]. ok is false for an ill-posed algebraic loop
// (1 + σ·D_h·D_g = 0).
func Feedback(g, h System, sigma float64) (System, bool) {
	den := 1 + sigma*h.D*g.D
	if den == 0 || math.IsNaN(den) || math.IsInf(den, 0) {
		return System{}, false
	}
	q := 1 / den
	n := g.N + h.N
	// u = q·(r − σ D_h C_g x_g − σ C_h x_h): the row ku gives u's state weights.
	ku := make([]float64, n)
	for j := 0; j < g.N; j++ {
		ku[j] = -q * sigma * h.D * g.C[j]
	}
	for j := 0; j < h.N; j++ {
		ku[g.N+j] = -q * sigma * h.C[j]
	}
	s := System{N: n, A: make([]float64, n*n), B: make([]float64, n), C: make([]float64, n), D: g.D * q}
	for i := 0; i < g.N; i++ {
		row := i * n
		copy(s.A[row:row+g.N], g.A[i*g.N:(i+1)*g.N])
		for j := 0; j < n; j++ {
			s.A[row+j] += g.B[i] * ku[j]
		}
		s.B[i] = g.B[i] * q
	}
	for i := 0; i < h.N; i++ {
		row := (g.N + i) * n
		// y = C_g x_g + D_g u drives the measurement.
		for j := 0; j < g.N; j++ {
			s.A[row+j] = h.B[i] * g.C[j]
		}
		copy(s.A[row+g.N:row+n], h.A[i*h.N:(i+1)*h.N])
		for j := 0; j < n; j++ {
			s.A[row+j] += h.B[i] * g.D * ku[j]
		}
		s.B[g.N+i] = h.B[i] * g.D * q
	}
	for j := 0; j < g.N; j++ {
		s.C[j] = g.C[j]
	}
	for j := 0; j < n; j++ {
		s.C[j] += g.D * ku[j]
	}
	return s, true
}
