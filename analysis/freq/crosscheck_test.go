package freq

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"ringside/analysis/internal/scipyref"
	"strconv"
	"testing"

	"ringside/analysis/gainlimit"
	"ringside/analysis/poly"
	polyroots "ringside/analysis/roots"
)

// Tolerances of the scipy cross-check. Both sides locate crossings to
// ~1e-12 rad (bisection here, brentq there), so agreement is limited by the
// conditioning of each crossing, not by the methods. The worst deviations
// seen over the 240 reference loops were 1.4e-10 relative in Hz, 3e-11 dB
// and 5e-10 deg (logged by the test); the tolerances leave a factor ~100 for
// other platforms' libm and LAPACK.
const (
	// xHzRel: crossing frequencies, relative (plus xHzAbs·Nyquist absolute
	// for crossings near 0 Hz).
	xHzRel = 1e-8
	xHzAbs = 1e-9
	// xDB: gain margins and peak sensitivity, dB (1e-8 dB ≈ 1e-9 in |L|).
	xDB = 1e-8
	// xDeg: phase margins, degrees.
	xDeg = 1e-8
	// xRadius: largest closed-loop pole radius, numpy.roots against gonum
	// companion eigenvalues (both QR iterations; random roots are simple,
	// multiple roots would be far worse).
	xRadius = 1e-8
)

type refLoop struct {
	T              float64     `json:"T"`
	Num            []float64   `json:"num"`
	Den            []float64   `json:"den"`
	Stable         bool        `json:"stable"`
	MaxPoleRadius  float64     `json:"max_pole_radius"`
	PhaseCrossings [][]float64 `json:"phase_crossings"`
	GainCrossings  [][]float64 `json:"gain_crossings"`
	GMDB           *float64    `json:"gm_db"`
	PCHz           *float64    `json:"pc_hz"`
	PMDeg          *float64    `json:"pm_deg"`
	GCHz           *float64    `json:"gc_hz"`
	DMS            *float64    `json:"dm_s"`
	PeakSDB        float64     `json:"peak_s_db"`
	PeakSHz        float64     `json:"peak_s_hz"`
	AmbPhase       bool        `json:"ambiguous_phase"`
	AmbGain        bool        `json:"ambiguous_gain"`
	AmbPeak        bool        `json:"ambiguous_peak"`
}

// TestCrossCheckScipy compares Compute (and the closed-loop stability from
// gainlimit.SchurStable and the pole radius from gonum eigenvalues) with
// testdata/crosscheck/margins_ref.py, an independent numpy/scipy
// computation over 240 random loops from a fixed seed.
func TestCrossCheckScipy(t *testing.T) {
	py := scipyref.Python(t)
	script, err := filepath.Abs("../../testdata/crosscheck/margins_ref.py")
	if err != nil {
		t.Fatal(err)
	}
	count := "240"
	if testing.Short() {
		count = "60"
	}
	out := filepath.Join(t.TempDir(), "margins.json")
	if b, err := exec.Command(py, script, out, count).CombinedOutput(); err != nil {
		t.Fatalf("%s %s: %v\n%s", py, script, err, b)
	}
	raw, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Loops []refLoop `json:"loops"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	var compared, crossings, stable int
	var worstHz, worstDB, worstDeg float64 // largest deviations seen, for the log
	for i, r := range ref.Loops {
		L := poly.R(poly.New(r.Num...), poly.New(r.Den...))
		m, err := Compute(L, r.T)
		if err != nil {
			t.Errorf("loop %d: %v", i, err)
			continue
		}
		ny := 1 / (2 * r.T)
		hzOK := func(got, want float64) bool {
			return math.Abs(got-want) <= xHzRel*math.Abs(want)+xHzAbs*ny
		}
		where := func() string { return "loop " + strconv.Itoa(i) + " " + fmtLoop(r) }

		// Closed loop: stability and largest pole radius.
		cl := L.Num.Add(L.Den)
		if math.Abs(r.MaxPoleRadius-1) > 1e-6 {
			st, err := gainlimit.SchurStable(cl)
			if err != nil || st != r.Stable {
				t.Errorf("%s: SchurStable = %v (%v), numpy stable = %v", where(), st, err, r.Stable)
			}
		}
		if rs, ok := polyroots.Companion(cl); ok {
			maxR := 0.0
			for _, z := range rs {
				maxR = math.Max(maxR, cmplx.Abs(z))
			}
			if math.Abs(maxR-r.MaxPoleRadius) > xRadius*math.Max(1, maxR) {
				t.Errorf("%s: max pole radius %.12g, numpy %.12g", where(), maxR, r.MaxPoleRadius)
			}
		}
		if r.Stable {
			stable++
		}

		if !r.AmbPhase {
			if len(m.PhaseCrossings) != len(r.PhaseCrossings) {
				t.Errorf("%s: phase crossings %v, scipy %v", where(), m.PhaseCrossings, r.PhaseCrossings)
			} else {
				for j, c := range m.PhaseCrossings {
					w := r.PhaseCrossings[j]
					worstHz = math.Max(worstHz, math.Abs(c.Hz-w[0])/math.Max(w[0], ny*1e-3))
					worstDB = math.Max(worstDB, math.Abs(c.Value-w[1]))
					if !hzOK(c.Hz, w[0]) || math.Abs(c.Value-w[1]) > xDB {
						t.Errorf("%s: phase crossing %d %+v, scipy %v", where(), j, c, w)
					}
					crossings++
				}
				cmpOpt(t, where, "GM dB", m.GainMarginDB, r.GMDB, xDB, 0)
			}
		}
		if !r.AmbGain {
			if len(m.GainCrossings) != len(r.GainCrossings) {
				t.Errorf("%s: gain crossings %v, scipy %v", where(), m.GainCrossings, r.GainCrossings)
			} else {
				for j, c := range m.GainCrossings {
					w := r.GainCrossings[j]
					worstHz = math.Max(worstHz, math.Abs(c.Hz-w[0])/math.Max(w[0], ny*1e-3))
					worstDeg = math.Max(worstDeg, math.Abs(c.Value-w[1]))
					if !hzOK(c.Hz, w[0]) || math.Abs(c.Value-w[1]) > xDeg {
						t.Errorf("%s: gain crossing %d %+v, scipy %v", where(), j, c, w)
					}
					crossings++
				}
				cmpOpt(t, where, "PM deg", m.PhaseMarginDeg, r.PMDeg, xDeg, 0)
				cmpOpt(t, where, "gain crossover Hz", m.GainCrossoverHz, r.GCHz, xHzRel, xHzAbs*ny)
				cmpOpt(t, where, "delay margin s", m.DelayMarginS, r.DMS, xHzRel, 1e-12)
			}
		}
		if !r.AmbPeak && m.PeakSensitivityDB != nil {
			worstDB = math.Max(worstDB, math.Abs(*m.PeakSensitivityDB-r.PeakSDB))
		}
		if !r.AmbPeak {
			cmpOpt(t, where, "peak S dB", m.PeakSensitivityDB, &r.PeakSDB, xDB, 0)
		}
		compared++
	}
	minLoops := 200
	if testing.Short() {
		minLoops = 50
	}
	if compared < minLoops || crossings < compared || stable < compared/5 {
		t.Errorf("weak reference set: %d loops, %d crossings, %d stable", compared, crossings, stable)
	}
	t.Logf("compared %d loops (%d stable), %d crossings; worst deviation: %.2g relative Hz, %.2g dB, %.2g deg",
		compared, stable, crossings, worstHz, worstDB, worstDeg)
}

func cmpOpt(t *testing.T, where func() string, what string, got, want *float64, rel, abs float64) {
	t.Helper()
	switch {
	case got == nil && want == nil:
	case got == nil || want == nil:
		t.Errorf("%s: %s = %v, scipy %v", where(), what, deref(got), deref(want))
	case math.Abs(*got-*want) > rel*math.Max(1, math.Abs(*want))+abs:
		t.Errorf("%s: %s = %.12g, scipy %.12g", where(), what, *got, *want)
	}
}

func deref(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

func fmtLoop(r refLoop) string {
	b, _ := json.Marshal(struct {
		T        float64
		Num, Den []float64
	}{r.T, r.Num, r.Den})
	return string(b)
}
