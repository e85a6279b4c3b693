package analysis

import (
	"math"
	"path/filepath"
	"testing"

	"ringside/analysis/internal/scipyref"
)

// dCase is a gain whose characteristic polynomial is not affine in it, with
// p(z, k) = Σ_j k^j Q[j](z) written out by hand from the loop text (so the
// reference does not reuse the checker's polynomial products).
type dCase struct {
	Name   string
	Src    string `json:"-"`
	Q      [][]float64
	K0     float64
	Lo, Hi float64
}

type dRef struct {
	Name     string
	Found    bool
	Contains bool
	Lo, Hi   *float64
}

func dCases() []dCase {
	return []dCase{
		// The gain in two blocks: L = k·(z − 0.5)/(z − 1) · k·0.1/(z − 0.9),
		// p = (z − 1)(z − 0.9) + 0.1k²(z − 0.5). Unstable at k = 0 alone
		// (the integrator stays on the circle): the interval is (0, k_max).
		{Name: "two_blocks", K0: 0.5, Lo: -20, Hi: 20,
			Src: "sample 1 ms\ngain k = 0.5\nblock c = k * (z - 0.5) / (z - 1)\nblock p = k * 0.1 / (z - 0.9)\nloop l {\n  forward c p\n}\n",
			Q:   [][]float64{{0.9, -1.9, 1}, {}, {-0.05, 0.1}}},
		// The gain inside a pole: L = 0.3/(z − k) · 1/(z − 0.5),
		// p = (z − k)(z − 0.5) + 0.3 = (0.3 + 0.5k) − (0.5 + k)z + z².
		{Name: "inside_pole", K0: 0.2, Lo: -10, Hi: 10,
			Src: "sample 1 ms\ngain k = 0.2\nblock p = 0.3 / (z - k)\nblock c = 1 / (z - 0.5)\nloop l {\n  forward p c\n}\n",
			Q:   [][]float64{{0.3, -0.5, 1}, {0.5, -1}}},
		// Two disjoint stable intervals: L = k·0.1(z − 0.3)/((z − 1.2)(z − 0.5))
		// · k, p = (z − 1.2)(z − 0.5) + 0.1k²(z − 0.3): the open loop is
		// unstable, and stable for k² in a range away from 0, so for k on
		// each side of 0. The one around k0 = 2.5 is reported, and from
		// k0 = −2.5 the other one.
		{Name: "two_intervals_pos", K0: 2.5, Lo: -20, Hi: 20,
			Src: "sample 1 ms\ngain k = 2.5\nblock p = k * 0.1 * (z - 0.3) / ((z - 1.2) * (z - 0.5))\nloop l {\n  forward p k\n}\n",
			Q:   [][]float64{{0.6, -1.7, 1}, {}, {-0.03, 0.1}}},
		{Name: "two_intervals_neg", K0: -2.5, Lo: -20, Hi: 20,
			Src: "sample 1 ms\ngain k = -2.5\nblock p = k * 0.1 * (z - 0.3) / ((z - 1.2) * (z - 0.5))\nloop l {\n  forward p k\n}\n",
			Q:   [][]float64{{0.6, -1.7, 1}, {}, {-0.03, 0.1}}},
		// The gain both scaling a block and inside its pole (cubic in k
		// overall): L = k·0.2/(z − 0.5k) · k/(z − 0.8).
		// p = (z − 0.5k)(z − 0.8) + 0.2k² = 0.4k + 0.2k² − (0.8 + 0.5k)z + z².
		{Name: "scale_and_pole", K0: 0.3, Lo: -10, Hi: 10,
			Src: "sample 1 ms\ngain k = 0.3\nblock p = k * 0.2 / (z - 0.5 * k)\nblock c = k / (z - 0.8)\nloop l {\n  forward p c\n}\n",
			Q:   [][]float64{{0, -0.8, 1}, {0.4, -0.5}, {0.2}}},
	}
}

func runDRef(t *testing.T, cases []dCase) map[string]dRef {
	t.Helper()
	py := scipyref.Python(t)
	var doc struct{ Cases []dRef }
	scipyref.RunJSONFiles(t, py, filepath.Join("..", "testdata", "crosscheck", "gainlimit_ref.py"), cases, &doc, nil)
	res := map[string]dRef{}
	for _, r := range doc.Cases {
		res[r.Name] = r
	}
	return res
}

// TestDDecompositionCrossCheck: the stable interval of gains whose
// characteristic polynomial is polynomial (not affine) in them, from the
// D-decomposition (polyInterval), against a dense numpy sweep of the
// largest root modulus refined by bisection (testdata/crosscheck/
// gainlimit_ref.py). Ends agree to 1e-6 relative (the checker's ends come
// from ω bisected to rounding; the reference's to 1e-12).
func TestDDecompositionCrossCheck(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the numpy reference")
	}
	cases := dCases()
	ref := runDRef(t, cases)
	for _, dc := range cases {
		r := ref[dc.Name]
		res := checkSrc(t, dc.Src, nil)
		lim := gainNamed(t, res, "k").Limits
		if lim == nil || !r.Found || !lim.Found {
			t.Errorf("%s: limits %+v, reference %+v", dc.Name, lim, r)
			continue
		}
		if !lim.Exact {
			t.Errorf("%s: interval from the march, not the D-decomposition", dc.Name)
		}
		if lim.CurrentStable != r.Contains {
			t.Errorf("%s: current stable %v, reference %v", dc.Name, lim.CurrentStable, r.Contains)
		}
		for _, e := range []struct {
			what      string
			got, want *float64
		}{{"lower", lim.StableMin, r.Lo}, {"upper", lim.StableMax, r.Hi}} {
			switch {
			case (e.got == nil) != (e.want == nil):
				t.Errorf("%s: %s end %v, reference %v", dc.Name, e.what, fmtPtr(e.got), fmtPtr(e.want))
			case e.got != nil && math.Abs(*e.got-*e.want) > 1e-6*math.Max(1, math.Abs(*e.want)):
				t.Errorf("%s: %s end %.12g, reference %.12g", dc.Name, e.what, *e.got, *e.want)
			}
		}
	}
}

func fmtPtr(p *float64) any {
	if p == nil {
		return "none"
	}
	return *p
}

// TestDDecompositionRefusesSBlock: a gain inside a discretized s block
// (ZOH of 1/(s + k): pole e^{−kT}) is not polynomial in the characteristic
// polynomial, so the D-decomposition refuses it and the march decides
// (Exact false). The loop 1/(s + k) via zoh with unity feedback is stable
// at k = 5 (T = 1 ms: pole near 1 − kT − T), which the march must keep.
func TestDDecompositionRefusesSBlock(t *testing.T) {
	res := checkSrc(t, "sample 1 ms\ngain k = 5\nblock p = 1 / (s + k) via zoh\nloop l {\n  forward p\n}\n", nil)
	lim := gainNamed(t, res, "k").Limits
	if lim == nil || !lim.Found || !lim.CurrentStable {
		t.Fatalf("limits %+v", lim)
	}
	if lim.Exact {
		t.Errorf("gain inside a ZOH s block reported as exact")
	}
}
