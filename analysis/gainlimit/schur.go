package gainlimit

import (
	"errors"
	"fmt"
	"math"

	"ringside/analysis/poly"
)

// SchurTolerance is the margin by which every reflection coefficient of the
// Schur–Cohn recursion must stay below one. In exact arithmetic a root on
// the unit circle makes some reflection coefficient exactly one; the
// recursion, with its coefficients rescaled at every step, loses a few ulps
// per step, so 1e-10 leaves a thousandfold safety factor over rounding for
// degrees up to a few dozen while still calling a root at radius 1 − 1e-8
// stable. Roots closer to the circle than that are treated as on it, which
// is what the format asks ("within the numerical tolerance of the circle").
const SchurTolerance = 1e-10

// ErrZeroPoly reports a polynomial with no nonzero coefficient.
var ErrZeroPoly = errors.New("gainlimit: zero polynomial")

// checkPoly rejects polynomials no stability question can be asked of.
func checkPoly(p poly.Poly) (poly.Poly, error) {
	if !p.Finite() {
		return nil, fmt.Errorf("gainlimit: polynomial has a non-finite coefficient: %v", []float64(p))
	}
	q := p.Trim()
	if len(q) == 0 {
		return nil, ErrZeroPoly
	}
	return q, nil
}

// SchurStable reports whether every root of p lies strictly inside the unit
// circle, by the Schur–Cohn recursion (the Jury test in its polynomial form).
//
// With p(z) = Σ aᵢ zⁱ of degree n and its reciprocal p*(z) = zⁿ p(1/z), the
// roots of p are inside the circle iff |a₀| < |aₙ| and the roots of
//
//	q(z) = (aₙ p(z) − a₀ p*(z)) / z
//
// (degree n−1, leading coefficient aₙ² − a₀²) are inside too. The ratio
// a₀/aₙ is the step's reflection coefficient; it must satisfy
// |a₀| ≤ (1 − SchurTolerance)|aₙ|. Coefficients are rescaled to unit
// maximum at every step, so huge or tiny values neither overflow nor
// underflow. A nonzero constant has no roots and is stable. Errors: the zero
// polynomial and non-finite coefficients.
func SchurStable(p poly.Poly) (bool, error) {
	q, err := checkPoly(p)
	if err != nil {
		return false, err
	}
	buf := make([]float64, 2*len(q))
	a, next := buf[:len(q)], buf[len(q):]
	copy(a, q)
	for n := len(a) - 1; n >= 1; n-- {
		rescale(a[:n+1])
		lead, low := a[n], a[0]
		if math.Abs(low) > (1-SchurTolerance)*math.Abs(lead) {
			return false, nil
		}
		for j := 0; j < n; j++ {
			next[j] = lead*a[j+1] - low*a[n-1-j]
		}
		a, next = next[:n], a
	}
	return true, nil
}

// rescale divides a by its largest magnitude (in place); roots are unchanged.
func rescale(a []float64) {
	m := 0.0
	for _, v := range a {
		m = math.Max(m, math.Abs(v))
	}
	if m == 0 || m == 1 {
		return
	}
	for i := range a {
		a[i] /= m
	}
}
