package freq

import (
	"gonum.org/v1/gonum/mat"

	"ringside/analysis/poly"
)

// companionRoots returns the roots of p (with multiplicity) as the
// eigenvalues of its companion matrix (gonum's mat.Eigen). Exactly-zero low
// coefficients give exact roots at zero. ok is false when p is constant or
// the eigenvalue iteration fails.
func companionRoots(p poly.Poly) ([]complex128, bool) {
	q := p.Trim()
	var roots []complex128
	for len(q) > 1 && q[0] == 0 {
		roots = append(roots, 0)
		q = q[1:]
	}
	n := len(q) - 1
	if n < 0 {
		return nil, false
	}
	if n == 0 {
		return roots, true
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
	return append(roots, e.Values(nil)...), true
}
