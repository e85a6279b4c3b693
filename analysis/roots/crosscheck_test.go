package roots

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"ringside/analysis/internal/scipyref"
	"testing"

	"ringside/analysis/poly"
)

// The cross-check runs testdata/crosscheck/roots_discretize_ref.py (numpy
// and scipy from Debian's python3-scipy) and compares Find with
// numpy.roots on its 220 random polynomials of degree 1…20, a third of them
// with repeated roots.

type refData struct {
	Numpy, Scipy string
	Roots        []struct {
		Kind   string
		Coeffs []float64
		Roots  [][2]float64
	}
}

func loadRef(t *testing.T) refData {
	t.Helper()
	py := scipyref.Python(t)
	out := filepath.Join(t.TempDir(), "ref.json")
	script := filepath.Join("..", "..", "testdata", "crosscheck", "roots_discretize_ref.py")
	if b, err := exec.Command(py, script, out).CombinedOutput(); err != nil {
		t.Fatalf("%s %s: %v\n%s", py, script, err, b)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var d refData
	if err := json.Unmarshal(b, &d); err != nil {
		t.Fatal(err)
	}
	return d
}

// rootTolerance is how far two backward-stable root finders may disagree
// about a root near c of multiplicity m: the first-order perturbation
// radius (eta·Σ|p_i||c|^i / |p^(m)(c)/m!|)^(1/m) for a relative coefficient
// perturbation eta, doubled (both sides err), with eta = 1e3·n·eps, which
// covers numpy's unpolished companion eigenvalues (backward error up to
// about 1e-12 here). It is computed here from derivatives, independently
// of the package's Taylor shift.
func rootTolerance(p poly.Poly, c complex128, m int) float64 {
	eta := 1e3 * float64(len(p)) * eps
	d := p
	fact := 1.0
	for k := 1; k <= m; k++ {
		d = d.Deriv()
		fact *= float64(k)
	}
	am := cmplx.Abs(d.EvalC(c)) / fact
	var s float64
	for i, v := range p {
		s += math.Abs(v) * math.Pow(cmplx.Abs(c), float64(i))
	}
	return 2 * math.Pow(eta*s/am, 1/float64(m))
}

func TestCrossCheckNumpyRoots(t *testing.T) {
	d := loadRef(t)
	if len(d.Roots) < 200 {
		t.Fatalf("only %d reference polynomials", len(d.Roots))
	}
	var worstBE, worstRatio float64
	for ci, c := range d.Roots {
		p := poly.New(c.Coeffs...)
		r := mustFind(t, p)
		worstBE = max(worstBE, r.BackwardError)
		if r.BackwardError > 1e-12 {
			t.Errorf("case %d (%s): backward error %g above 1e-12", ci, c.Kind, r.BackwardError)
		}
		// Each Go root carries the tolerance of its cluster.
		type goRoot struct {
			z   complex128
			tol float64
		}
		var gos []goRoot
		for _, z := range r.Roots {
			best := 0
			for k, cl := range r.Clusters {
				if cmplx.Abs(cl.Value-z) < cmplx.Abs(r.Clusters[best].Value-z) {
					best = k
				}
			}
			cl := r.Clusters[best]
			gos = append(gos, goRoot{z, rootTolerance(p, cl.Value, cl.Multiplicity)})
		}
		if len(c.Roots) != len(gos) {
			t.Errorf("case %d: %d roots, numpy %d", ci, len(gos), len(c.Roots))
			continue
		}
		used := make([]bool, len(gos))
		for _, nr := range c.Roots {
			z := complex(nr[0], nr[1])
			bi := -1
			for k, g := range gos {
				if !used[k] && (bi < 0 || cmplx.Abs(g.z-z) < cmplx.Abs(gos[bi].z-z)) {
					bi = k
				}
			}
			used[bi] = true
			dist := cmplx.Abs(gos[bi].z - z)
			worstRatio = max(worstRatio, dist/gos[bi].tol)
			if dist > gos[bi].tol {
				t.Errorf("case %d (%s, degree %d): numpy root %v vs %v, distance %g above %g",
					ci, c.Kind, p.Degree(), z, gos[bi].z, dist, gos[bi].tol)
			}
		}
	}
	t.Logf("numpy %s: %d polynomials, worst backward error %.2g, worst distance/tolerance %.2g",
		d.Numpy, len(d.Roots), worstBE, worstRatio)
}
