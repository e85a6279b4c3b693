package roots

import (
	"gonum.org/v1/gonum/mat"

	"ringside/analysis/poly"
)

// Companion returns the roots of p (with multiplicity) as the eigenvalues of
// its companion matrix (gonum's mat.Eigen, which balances first), without
// the polishing and clustering of Find: the cheap estimate that grids and
// bracketing searches need. Exactly-zero low coefficients give exact roots
// at zero. ok is false when p is the zero polynomial or the eigenvalue
// iteration fails.
func Companion(p poly.Poly) ([]complex128, bool) {
	q := p.Trim()
	var out []complex128
	for len(q) > 1 && q[0] == 0 {
		out = append(out, 0)
		q = q[1:]
	}
	n := len(q) - 1
	if n < 0 {
		return nil, false
	}
	if n == 0 {
		return out, true
	}
	c := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		c.Set(0, j, -q[n-1-j]/q[n])
	}
	for i := 1; i < n; i++ {
		c.Set(i, i-1, 1)
	}
	var e mat.Eigen
	if !e.Factorize(c, mat.EigenNone) {
		return nil, false
	}
	return append(out, e.Values(nil)...), true
}
