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
	return lp.gainMargin(T), nil
}

func (lp loop) gainMargin(T float64) *float64 {
	sc := getScratch()
	defer scratchPool.Put(sc)
	grid := lp.grid(sc)
	vals := sc.floats(2 * len(grid))
	g, gs := vals[:len(grid)], vals[len(grid):]
	for i, th := range grid {
		N, D := lp.eval(th)
		g[i], gs[i] = imag(N*cmplx.Conj(D)), fastAbs(N, sq(N))*fastAbs(D, sq(D))
	}
	var gm *float64
	for _, c := range lp.phaseCrossings(grid, g, gs, T) {
		if gm == nil || math.Abs(c.Value) < math.Abs(*gm) {
			gm = ptr(c.Value)
		}
	}
	return gm
}
