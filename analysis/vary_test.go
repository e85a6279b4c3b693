package analysis

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"ringside/analysis/internal/scipyref"
)

// robustCase is a loop with varying gains and, for the numpy reference, its
// characteristic polynomial written independently as a Python expression
// (highest power first) in the varying gains.
type robustCase struct {
	name   string
	src    string
	loop   string
	names  []string
	lo, hi []float64
	char   string
	// cornersStable: every corner is stable though the box is not (the
	// case the edge theorem exists for).
	cornersStable bool
}

var robustCases = []robustCase{
	{
		// One gain: a pump whose plant gain drifts; PI-like controller kc·z/(z − 1),
		// one sample of measurement delay. char = (z − 1)(z − 0.95)z + kc·kp·0.001·z.
		name: "one gain, unstable at the top of the range",
		src: "sample 1 ms\ngain kp = 40 vary 30 to 50\ngain kc = 1.1\nblock plant = kp * 0.001 / (z - 0.95)\nblock ctrl = kc * z / (z - 1)\nblock meas = z^-1\n" +
			"loop pump {\n  forward ctrl plant\n  feedback meas\n}\n",
		loop: "pump", names: []string{"kp"}, lo: []float64{30}, hi: []float64{50},
		char: "np.polyadd(np.polymul(np.polymul([1, -1], [1, -0.95]), [1, 0]), [1.1 * kp * 0.001, 0])",
	},
	{
		name: "one gain, stable over the range",
		src: "sample 1 ms\ngain kp = 40 vary 30 to 50\ngain kc = 0.5\nblock plant = kp * 0.001 / (z - 0.95)\nblock ctrl = kc * z / (z - 1)\nblock meas = z^-1\n" +
			"loop pump {\n  forward ctrl plant\n  feedback meas\n}\n",
		loop: "pump", names: []string{"kp"}, lo: []float64{30}, hi: []float64{50},
		char: "np.polyadd(np.polymul(np.polymul([1, -1], [1, -0.95]), [1, 0]), [0.5 * kp * 0.001, 0])",
	},
	{
		// A plant pole that moves: 0.002/(z − a), a from 0.9 to 0.99, with an
		// integrating controller 0.8/(z − 1) and a delay:
		// char = (z − 1)(z − a)z + 0.0016.
		name: "plant pole varying",
		src: "sample 1 ms\ngain a = 0.95 vary 0.9 to 0.99\nblock plant = 0.002 / (z - a)\nblock ctrl = 0.8 / (z - 1)\nblock meas = z^-1\n" +
			"loop heat {\n  forward ctrl plant\n  feedback meas\n}\n",
		loop: "heat", names: []string{"a"}, lo: []float64{0.9}, hi: []float64{0.99},
		char: "np.polyadd(np.polymul(np.polymul([1, -1], [1, -a]), [1, 0]), [0.0016])",
	},
	{
		// Two gains, stable everywhere: gain and pole of the plant both vary.
		// char = (z − 1)(z − a)z + 0.02·k·z... with ctrl 0.5z/(z − 1):
		// (z − 1)(z − a)z + 0.5·k·0.001·z.
		name: "two gains, stable over the box",
		src: "sample 1 ms\ngain k = 40 vary 30 to 50\ngain a = 0.95 vary 0.93 to 0.97\ngain kc = 0.5\nblock plant = k * 0.001 / (z - a)\nblock ctrl = kc * z / (z - 1)\nblock meas = z^-1\n" +
			"loop pump {\n  forward ctrl plant\n  feedback meas\n}\n",
		loop: "pump", names: []string{"a", "k"}, lo: []float64{0.93, 30}, hi: []float64{0.97, 50},
		char: "np.polyadd(np.polymul(np.polymul([1, -1], [1, -a]), [1, 0]), [0.5 * k * 0.001, 0])",
	},
	{
		// Two gains, stable at all four corners, unstable along two edges:
		// char = P + a·(Q − P) + b·0.05·z² with P = z³ − 1.91z² + 1.02z − 0.08
		// and Q = z³ + 1.47z² + 1.25z + 0.33, both stable, whose midpoint is not
		// (degree-3 Schur polynomials do not form a convex set). P is the
		// plant's denominator, the numerator a(Q − P) + 0.05·b·z².
		name: "two gains, corners stable, an edge unstable",
		src: "sample 1 ms\ngain a = 0 vary 0 to 1\ngain b = 0 vary 0 to 1\n" +
			"block g = (a * (3.38z^2 + 0.23z + 0.41) + b * 0.05z^2) / (z^3 - 1.91z^2 + 1.02z - 0.08)\n" +
			"loop odd {\n  forward g\n}\n",
		loop: "odd", names: []string{"a", "b"}, lo: []float64{0, 0}, hi: []float64{1, 1},
		char:          "np.polyadd(np.polyadd([1, -1.91, 1.02, -0.08], np.multiply(a, [3.38, 0.23, 0.41])), [0.05 * b, 0, 0])",
		cornersStable: true,
	},
}

type robustRef struct {
	Corners  []float64 `json:"corners"`
	EdgeMax  float64   `json:"edge_max"`
	Point    []float64 `json:"point"`
	InnerMax float64   `json:"inner_max"`
	Stable   bool      `json:"stable"`
}

// TestRobustAgainstNumpy checks the verdict over the box (exactly) and the
// worst point's radius (to 1e-6) against testdata/crosscheck/robust_ref.py:
// numpy roots on dense grids (2001 points per edge, refined by scipy's
// bounded Brent minimiser; 81^n over the whole box). The inner grid must
// not beat the edges: the largest radius of an affine family lies on an edge
// (the edge theorem for the disk |z| < r).
func TestRobustAgainstNumpy(t *testing.T) {
	if testing.Short() {
		t.Skip("numpy cross-check skipped with -short")
	}
	py := scipyref.Python(t)
	script, err := filepath.Abs("../testdata/crosscheck/robust_ref.py")
	if err != nil {
		t.Fatal(err)
	}
	type in struct {
		Names []string  `json:"names"`
		Lo    []float64 `json:"lo"`
		Hi    []float64 `json:"hi"`
		Char  string    `json:"char"`
	}
	var ins []in
	for _, c := range robustCases {
		ins = append(ins, in{c.names, c.lo, c.hi, c.char})
	}
	var refs []robustRef
	scipyref.RunJSON(t, py, []string{script}, ins, &refs)
	if len(refs) != len(robustCases) {
		t.Fatalf("reference: %d results for %d cases", len(refs), len(robustCases))
	}
	for i, c := range robustCases {
		ref := refs[i]
		t.Run(c.name, func(t *testing.T) {
			r := checkSrc(t, c.src, nil)
			l := loopNamed(t, r, c.loop)
			rb := l.Robust
			if rb == nil || rb.Stable == nil {
				t.Fatalf("no robust verdict: %+v", rb)
			}
			if *rb.Stable != ref.Stable {
				t.Errorf("stable %v, numpy %v (edge max %g, inner max %g)", *rb.Stable, ref.Stable, ref.EdgeMax, ref.InnerMax)
			}
			if !rb.Exact {
				t.Errorf("method %q is not exact for an affine family", rb.Method)
			}
			if math.Abs(rb.WorstRadius-ref.EdgeMax) > 1e-6 {
				t.Errorf("worst radius %.10g at %v, numpy %.10g at %v", rb.WorstRadius, rb.Worst, ref.EdgeMax, ref.Point)
			}
			if ref.InnerMax > ref.EdgeMax+1e-9 {
				t.Errorf("numpy finds %.10g inside the box, above the edges' %.10g", ref.InnerMax, ref.EdgeMax)
			}
			t.Logf("stable %v worst %.12g at %v; numpy edges %.12g at %v, inner %.12g", *rb.Stable, rb.WorstRadius, rb.Worst, ref.EdgeMax, ref.Point, ref.InnerMax)
			if c.cornersStable {
				for j, cr := range ref.Corners {
					if cr >= 1 {
						t.Errorf("corner %d has radius %g: the case must be stable at every corner", j, cr)
					}
				}
			}
			d := findDiag(r, CodeRangeUnstable)
			if ref.Stable != (d == nil) {
				t.Errorf("range-unstable diagnostic %v for numpy verdict %v", d, ref.Stable)
			}
			if d != nil && !strings.Contains(d.Message, rb.WorstText()) {
				t.Errorf("diagnostic does not name the worst point %s: %s", rb.WorstText(), d.Message)
			}
		})
	}
}

// TestRangeFixClearsDiagnostic applies the fix of a range-unstable
// diagnostic and checks the whole range becomes stable, with the user's
// comment kept.
func TestRangeFixClearsDiagnostic(t *testing.T) {
	src := robustCases[0].src
	src = strings.Replace(src, "gain kc = 1.1", "gain kc = 1.1 # tuned on the bench", 1)
	r := checkSrc(t, src, nil)
	d := findDiag(r, CodeRangeUnstable)
	if d == nil || len(d.Fixes) == 0 {
		t.Fatalf("want a range-unstable diagnostic with a fix, got %v", d)
	}
	for _, fx := range d.Fixes {
		out := applyEdits(src, fx.Edits)
		r2 := checkSrc(t, out, nil)
		if d2 := findDiag(r2, CodeRangeUnstable); d2 != nil {
			t.Errorf("fix %q leaves: %s", fx.Title, d2.Message)
		}
		if l := loopNamed(t, r2, "pump"); l.Robust == nil || l.Robust.Stable == nil || !*l.Robust.Stable {
			t.Errorf("fix %q: range not stable: %+v", fx.Title, l.Robust)
		}
		if !strings.Contains(out, "# tuned on the bench") {
			t.Errorf("fix %q lost the comment:\n%s", fx.Title, out)
		}
	}
}

// TestRangeGridUndecided: a gain inside a discretized s block enters the
// characteristic polynomial other than affinely; on a stable box the grid
// cannot prove stability (stable null, a warning saying why), on an
// unstable one it refutes it at a point that is really unstable.
func TestRangeGridUndecided(t *testing.T) {
	base := "sample 10 ms\ngain tau = 0.5 vary 0.4 to 0.6\ngain kc = KC\nblock plant = 1 / (tau * s + 1) via zoh\nblock ctrl = kc * 0.01 / (z - 1)\nblock meas = z^-1\nloop oven {\n  forward ctrl plant\n  feedback meas\n}\n"
	r := checkSrc(t, strings.Replace(base, "KC", "2", 1), nil)
	rb := loopNamed(t, r, "oven").Robust
	if rb == nil || rb.Stable != nil || rb.Exact || !strings.HasPrefix(rb.Method, "grid") {
		t.Fatalf("want an undecided grid verdict, got %+v", rb)
	}
	if findDiag(r, CodeRangeUndecided) == nil {
		t.Errorf("no range-undecided warning")
	}
	r = checkSrc(t, strings.Replace(base, "KC", "150", 1), nil)
	rb = loopNamed(t, r, "oven").Robust
	if rb == nil || rb.Stable == nil || *rb.Stable || rb.WorstRadius < 1 {
		t.Fatalf("want an unstable grid verdict with a witness, got %+v", rb)
	}
}

// TestVaryInUsedFile: a varying gain declared in a used file makes the
// loops of the checking file robust-checked; a broken range there leaves
// the gain fixed (and is reported only in its own file).
func TestVaryInUsedFile(t *testing.T) {
	plant := "sample 1 ms\ngain kp = 40 vary 30 to 50\ngain kbad = 1 vary 2 to 0\nblock plant = kp * kbad * 0.001 / (z - 0.95)\n"
	main := "use \"plant.loop\"\ngain kc = 22\nloop hot {\n  forward kc plant\n  feedback d\n}\nblock d = 1 / z\n"
	r := checkSrc(t, main, map[string]string{"plant.loop": plant})
	rb := loopNamed(t, r, "hot").Robust
	if rb == nil || len(rb.Names) != 1 || rb.Names[0] != "kp" || rb.Stable == nil || *rb.Stable {
		t.Fatalf("want kp alone varying and the range unstable, got %+v", rb)
	}
	if d := findDiag(r, CodeGainRangeEmpty); d != nil {
		t.Errorf("the used file's range error is reported in the checking file: %s", d.Message)
	}
}

// TestRangeHighDegreeUsesModel: above MaxAffineDegree the expanded
// polynomial is not trusted, so the grid decides on the loop's model
// (eigenvalues with error bounds) and a stable box stays undecided.
func TestRangeHighDegreeUsesModel(t *testing.T) {
	src := "sample 1 ms\ngain k = 1 vary 0.8 to 1.2\nblock lag = 0.5 / (z - 0.5)\nblock chain = k * 0.1 * lag * lag * lag * lag * lag * lag * lag * lag * lag * lag * lag * lag\nloop long {\n  forward chain\n}\n"
	r := checkSrc(t, src, nil)
	l := loopNamed(t, r, "long")
	if l.Char.Degree() <= MaxAffineDegree {
		t.Fatalf("degree %d: the case must exceed %d", l.Char.Degree(), MaxAffineDegree)
	}
	rb := l.Robust
	if rb == nil || rb.Stable != nil || rb.Exact || !strings.HasPrefix(rb.Method, "grid") || !strings.Contains(rb.Why, "too high a degree") {
		t.Fatalf("want an undecided grid verdict on the model, got %+v", rb)
	}
	// The worst point: 1 + L = 0 is (z − 0.5)^12 = −0.1·k·0.5^12, so the
	// poles are 0.5 + 0.5·(0.1k)^(1/12)·e^{jπ(2m+1)/12}: their largest radius
	// grows with k, and the worst point is the top of the range.
	if rb.Worst[0] != 1.2 {
		t.Errorf("worst point %v, want k = 1.2", rb.Worst)
	}
}
