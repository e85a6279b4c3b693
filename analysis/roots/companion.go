package roots

import (
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/gonum"

	"ringside/analysis/poly"
)

// Companion returns the roots of p (with multiplicity) as the eigenvalues of
// its companion matrix (balanced, then the Hessenberg QR iteration), without
// the polishing and clustering of Find: the cheap estimate that grids and
// bracketing searches need. Exactly-zero low coefficients give exact roots
// at zero. ok is false when p is the zero polynomial or the eigenvalue
// iteration fails.
func Companion(p poly.Poly) (roots []complex128, ok bool) {
	defer func() {
		if recover() != nil { // LAPACK's checks on entries far out of range
			roots, ok = nil, false
		}
	}()
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
	// The companion matrix is upper Hessenberg already: balance it by
	// scaling (which keeps that form; LAPACK's Dgebal) and run the
	// Hessenberg QR iteration (Dhseqr) on it directly.
	h := make([]float64, n*n+4*n)
	c, scale, wr, wi := h[:n*n], h[n*n:n*n+n], h[n*n+n:n*n+2*n], h[n*n+2*n:n*n+3*n]
	for j := 0; j < n; j++ {
		c[j] = -q[n-1-j] / q[n]
	}
	for i := 1; i < n; i++ {
		c[i*n+i-1] = 1
	}
	var impl gonum.Implementation
	ilo, ihi := impl.Dgebal(lapack.Scale, n, c, n, scale)
	work := h[n*n+3*n:]
	if impl.Dhseqr(lapack.EigenvaluesOnly, lapack.SchurNone, n, ilo, ihi, c, n, wr, wi, nil, 1, work, n) != 0 {
		return nil, false
	}
	for i := range wr {
		out = append(out, complex(wr[i], wi[i]))
	}
	return out, true
}
