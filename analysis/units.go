package analysis

import (
	"fmt"
	"math"

	"ringside/syntax"
)

// Quantity kinds a number with a unit can stand for.
type quantity int

const (
	qTime quantity = iota
	qFreq
	qDB
	qDeg
	qSamples
	qPercent
	qPlain
)

// unitKind maps a canonical unit to its quantity and its factor to the base
// unit (seconds, Hz, dB, degrees, samples, percent).
func unitKind(u string) (quantity, float64, bool) {
	switch u {
	case "s":
		return qTime, 1, true
	case "ms":
		return qTime, 1e-3, true
	case "us":
		return qTime, 1e-6, true
	case "Hz":
		return qFreq, 1, true
	case "kHz":
		return qFreq, 1e3, true
	case "rad/s":
		return qFreq, 1 / (2 * math.Pi), true
	case "dB":
		return qDB, 1, true
	case "deg":
		return qDeg, 1, true
	case "samples":
		return qSamples, 1, true
	case "%":
		return qPercent, 1, true
	case "":
		return qPlain, 1, true
	}
	return 0, 0, false
}

// samplePeriod reads a `sample` value as seconds: a time is the period, a
// frequency the rate.
func samplePeriod(n *syntax.Number) (float64, error) {
	q, f, ok := unitKind(n.UnitCanon())
	if !ok {
		return 0, fmt.Errorf("unknown unit %q", n.Unit)
	}
	v := n.Value * f
	if !(v > 0) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("the sample period must be a positive, finite time or rate, not %s", n.Text)
	}
	switch q {
	case qTime:
		return v, nil
	case qFreq:
		return 1 / v, nil
	}
	return 0, fmt.Errorf("sample needs a time (s, ms, us) or a rate (Hz, kHz), e.g. `sample 1 ms`")
}
