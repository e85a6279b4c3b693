package step

import (
	"fmt"
	"math"

	"ringside/analysis/poly"
)

// First returns the first n samples of the unit step response of h = B/A,
// stable or not: for an unstable loop, what the engineer must see is how
// the output runs away. The difference equation, with A made monic, is
//
//	y[k] = Σᵢ bᵢ u[k−n+i] − Σ_{i<n} aᵢ y[k−n+i],  u[k] = 1 for k ≥ 0.
//
// It stops early, returning the samples so far, at the first
// sample whose magnitude exceeds limit (a growing response need not be
// followed to overflow). Errors: zero or non-finite polynomials, improper
// h.
func First(h poly.Rational, n int, limit float64) ([]float64, error) {
	if !h.Num.Finite() || !h.Den.Finite() {
		return nil, fmt.Errorf("step: non-finite coefficient")
	}
	b, a := h.Num.Trim(), h.Den.Trim()
	if len(a) == 0 || len(b) == 0 {
		return nil, fmt.Errorf("step: zero numerator or denominator")
	}
	if len(b) > len(a) {
		return nil, fmt.Errorf("step: improper transfer function: not causal")
	}
	deg := len(a) - 1
	lead := a[deg]
	a, b = a.Scale(1/lead), b.Scale(1/lead)
	bs := make([]float64, deg+1)
	copy(bs, b)
	return run(bs, a, n, limit), nil
}

// run is the difference equation of a unit step through B/A (A monic,
// bs = B zero-padded to deg A + 1 coefficients) for n samples, stopping
// after the first sample whose magnitude is not within limit (or is NaN).
func run(bs, a poly.Poly, n int, limit float64) []float64 {
	deg := len(a) - 1
	y := make([]float64, 0, n)
	for k := 0; k < n; k++ {
		var acc float64
		for i := 0; i <= deg; i++ {
			if k-deg+i >= 0 {
				acc += bs[i] // u = 1
			}
		}
		for i := 0; i < deg; i++ {
			if j := k - deg + i; j >= 0 {
				acc -= a[i] * y[j]
			}
		}
		y = append(y, acc)
		if !(math.Abs(acc) <= limit) {
			break
		}
	}
	return y
}
