package freq

import (
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
)

// GainMargin is the gain margin alone, as Compute reports it (GainMarginDB;
// nil when L never crosses −180°), without the gain crossings and the peak
// sensitivity: the figure a search over a gain's values needs at every
// step, at about half the cost of Compute.
func GainMargin(L poly.Rational, T float64) (*float64, error) {
	lp, err := prepare(L, T)
	if err != nil {
		return nil, err
	}
	grid := lp.grid()
	var phaseTh []float64
	if lp.realOnCircle() {
		if th, ok := lp.bestOnGrid(grid, func(th float64) (float64, bool) {
			l, ok := lp.value(th)
			if !ok || real(l) >= 0 {
				return 0, false
			}
			return math.Abs(math.Log(cmplx.Abs(l))), true
		}); ok {
			phaseTh = []float64{th}
		}
	} else {
		g, gs := make([]float64, len(grid)), make([]float64, len(grid))
		for i, th := range grid {
			N, D := lp.eval(th)
			g[i], gs[i] = imag(N*cmplx.Conj(D)), cmplx.Abs(N)*cmplx.Abs(D)
		}
		phaseTh = roots(lp.g, lp.gScale, grid, g, gs)
	}
	var gm *float64
	for _, th := range phaseTh {
		N, D := lp.eval(th)
		if lp.singular(N, D) || real(N*cmplx.Conj(D)) >= 0 {
			continue
		}
		v := -20 * math.Log10(cmplx.Abs(N/D))
		if gm == nil || math.Abs(v) < math.Abs(*gm) {
			gm = ptr(v)
		}
	}
	return gm, nil
}
