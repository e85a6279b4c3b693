package lti

import "math"

// maxBalanceSweeps bounds the balancing sweeps; each sweep costs O(n²).
// A cascade of n lags closed by a tiny gain needs its scaling propagated
// along the whole chain, a few sweeps per section.
const maxBalanceSweeps = 400

// balance scales the row-major n×n matrix a in place by D⁻¹AD with D
// diagonal of powers of two (exact: no rounding, eigenvalues unchanged),
// so that each row and column have equal off-diagonal 1-norms within a
// factor of two (Osborne's iteration, as in Parlett & Reinsch 1969,
// "Balancing a matrix for calculation of eigenvalues and eigenvectors",
// with each step taken directly to the power of two nearest √(r/c) rather
// than one factor of two at a time). LAPACK's Dgebal stops early on a
// chain of lags closed by a small gain (its row and column norms already
// look equal link by link), where the balanced matrix is nearly normal and
// the unbalanced one has eigenvalue condition numbers near 1e15.
//
// It returns the exponents of D: D = diag(2^exps[i]).
func balance(a []float64, n int) (exps []int) {
	exps = make([]int, n)
	for sweep := 0; sweep < maxBalanceSweeps; sweep++ {
		changed := false
		for i := 0; i < n; i++ {
			var c, r float64
			for j := 0; j < n; j++ {
				if j != i {
					c += math.Abs(a[j*n+i])
					r += math.Abs(a[i*n+j])
				}
			}
			if c == 0 || r == 0 {
				continue
			}
			e := int(math.Round(0.5 * math.Log2(r/c)))
			if e == 0 {
				continue
			}
			// Scale column i by 2^e and row i by 2^−e if that lowers c + r
			// clearly (the 0.95 of Parlett & Reinsch keeps it finite).
			cf, rf := math.Ldexp(c, e), math.Ldexp(r, -e)
			if cf+rf >= 0.95*(c+r) {
				continue
			}
			for j := 0; j < n; j++ {
				a[j*n+i] = math.Ldexp(a[j*n+i], e)
				a[i*n+j] = math.Ldexp(a[i*n+j], -e)
			}
			exps[i] += e
			changed = true
		}
		if !changed {
			return exps
		}
	}
	return exps
}
