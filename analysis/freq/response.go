package freq

import (
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
)

// Response returns 20·log10|L(e^{jωT})| and arg L in degrees at the given
// frequencies (Hz, ω = 2π·hz), for Bode plots. The phase starts in
// (−180°, 180°] at the first point and is unwrapped continuously: each
// point differs from the previous by less than 180°, so the grid must be
// fine enough that the true phase moves less than that between points
// (LogGrid with a few hundred points is, for ordinary loops).
// At a pole on the circle the magnitude is +Inf and the phase carries on
// from the previous point. Invalid input (T not finite and positive, zero or
// non-finite polynomials) gives NaN in every entry; a non-finite frequency
// gives NaN at that entry.
func Response(L poly.Rational, T float64, hz []float64) (magDB, phaseDeg []float64) {
	lp, err := prepare(L, T)
	return lp.response(err, T, hz)
}

// ResponseFactors is Response for a loop given by its factors.
func ResponseFactors(f Factors, T float64, hz []float64) (magDB, phaseDeg []float64) {
	err := f.check()
	lp, terr := prepareT(T)
	if err == nil {
		err = terr
	}
	lp.fac = &f
	return lp.response(err, T, hz)
}

func (lp loop) response(err error, T float64, hz []float64) (magDB, phaseDeg []float64) {
	magDB = make([]float64, len(hz))
	phaseDeg = make([]float64, len(hz))
	if err != nil {
		for i := range hz {
			magDB[i], phaseDeg[i] = math.NaN(), math.NaN()
		}
		return magDB, phaseDeg
	}
	prev := math.NaN()
	for i, f := range hz {
		if math.IsNaN(f) || math.IsInf(f, 0) {
			magDB[i], phaseDeg[i] = math.NaN(), math.NaN()
			continue
		}
		N, D := lp.eval(2 * math.Pi * f * T)
		if D == 0 {
			magDB[i], phaseDeg[i] = math.Inf(1), prev
			continue
		}
		l := N / D
		magDB[i] = 20 * math.Log10(cmplx.Abs(l))
		p := cmplx.Phase(l) * 180 / math.Pi
		if p == -180 {
			p = 180
		}
		if !math.IsNaN(prev) {
			p -= 360 * math.Round((p-prev)/360)
		}
		phaseDeg[i], prev = p, p
	}
	return magDB, phaseDeg
}

// LogGrid returns n frequencies in Hz, logarithmically spaced from 1e-4 of
// the Nyquist frequency 1/(2T) up to the Nyquist frequency itself (the last
// point is exactly 1/(2T)). n < 1 or T not finite and positive gives nil;
// n = 1 gives just the Nyquist frequency.
func LogGrid(T float64, n int) []float64 {
	if n < 1 || !(T > 0) || math.IsInf(T, 0) {
		return nil
	}
	ny := 1 / (2 * T)
	if n == 1 {
		return []float64{ny}
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = ny * math.Pow(10, -4*float64(n-1-i)/float64(n-1))
	}
	out[n-1] = ny
	return out
}
