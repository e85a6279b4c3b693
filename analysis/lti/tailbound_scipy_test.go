package lti

import (
	"bytes"
	"encoding/json"
	"math"
	"math/cmplx"
	"math/rand"
	"os/exec"
	"testing"

	"ringside/analysis/internal/scipyref"
	"ringside/analysis/step"
)

// stepFiguresPy simulates each model with scipy.signal.dlsim over the full
// horizon K and reads the same figures: the index after the last sample
// outside the 2 % band, the overshoot in % and the 10–90 % rise in samples.
const stepFiguresPy = `
import json, sys
import numpy as np
from scipy.signal import dlsim
out = []
for c in json.load(sys.stdin):
    n = c["n"]
    A = np.array(c["A"]).reshape(n, n)
    B = np.array(c["B"]).reshape(n, 1)
    C = np.array(c["C"]).reshape(1, n)
    D = np.array([[c["D"]]])
    _, y, _ = dlsim((A, B, C, D, 1.0), np.ones(c["K"]))
    y = y[:, 0]
    f = c["final"]
    af, s = abs(f), np.sign(f)
    out_idx = np.nonzero(np.abs(y - f) > 0.02 * af)[0]
    settle = int(out_idx[-1]) + 1 if len(out_idx) else 0
    over = 100 * max(0.0, float(np.max(s * (y - f)))) / af
    k10 = int(np.argmax(s * y >= 0.1 * af)); k90 = int(np.argmax(s * y >= 0.9 * af))
    out.append({"settle": settle, "over": over, "rise": k90 - k10})
json.dump(out, sys.stdout)
`

// The early-stopped step figures against scipy.signal.dlsim run over the
// whole horizon (to a 1e-6 decay of the slowest mode) on random stable
// models: settling to the sample, rise time exactly, overshoot to
// 1e-4 percentage points (step.OvershootSlack) plus rounding.
func TestEarlyStopAgainstScipy(t *testing.T) {
	py := scipyref.Python(t)
	type tcase struct {
		N        int       `json:"n"`
		A        []float64 `json:"A"`
		B        []float64 `json:"B"`
		C        []float64 `json:"C"`
		D        float64   `json:"D"`
		K        int       `json:"K"`
		Final    float64   `json:"final"`
		settle   int
		over     float64
		rise     int
		nSamples int
	}
	rng := rand.New(rand.NewSource(90))
	var cases []tcase
	for len(cases) < 60 {
		f := randomStable(rng)
		s := Realize(f)
		final := real(f.At(1))
		if math.Abs(final) < 1e-3 {
			continue // the band is 2 % of a tiny value: rounding decides samples
		}
		r := 0.0
		for _, p := range f.Poles {
			r = math.Max(r, cmplx.Abs(p))
		}
		K, _ := step.Horizon(s.N, r)
		sim, err := simulate(s, K, final, false)
		if err != nil {
			t.Fatal(err)
		}
		res, err := sim.result(1, final, false)
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, tcase{N: s.N, A: s.A, B: s.B, C: s.C, D: s.D, K: K, Final: final,
			settle: int(math.Round(res.SettlingS)), over: res.OvershootPct, rise: int(math.Round(res.RiseTimeS)), nSamples: sim.watch.Samples()})
	}
	in, _ := json.Marshal(cases)
	cmd := exec.Command(py, "-c", stepFiguresPy)
	cmd.Stdin = bytes.NewReader(in)
	raw, err := cmd.Output()
	if err != nil {
		t.Fatalf("scipy: %v", err)
	}
	var ref []struct {
		Settle int     `json:"settle"`
		Over   float64 `json:"over"`
		Rise   int     `json:"rise"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil || len(ref) != len(cases) {
		t.Fatalf("scipy output: %v (%d results)", err, len(ref))
	}
	short := 0
	for i, c := range cases {
		if c.nSamples < c.K {
			short++
		}
		if ref[i].Settle != c.settle || ref[i].Rise != c.rise || math.Abs(ref[i].Over-c.over) > 100*step.OvershootSlack+1e-9*ref[i].Over {
			t.Errorf("case %d (%d of %d samples): settle %d rise %d overshoot %.9g; scipy %d %d %.9g",
				i, c.nSamples, c.K, c.settle, c.rise, c.over, ref[i].Settle, ref[i].Rise, ref[i].Over)
		}
	}
	if short < len(cases)/2 {
		t.Errorf("only %d of %d simulations stopped early", short, len(cases))
	}
}
