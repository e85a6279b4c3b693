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

// The sample periods ringside accepts, in seconds: 1 ns (a 1 GHz rate)
// to one day. Faster than 1 GHz no sampled controller runs; slower than a
// day is no feedback loop a controller closes, and at such periods the
// discretization of a continuous block (the matrix exponential of A·T)
// over- or underflows in float64 and silently loses the numerator
// (`sample 1e30 s`). A period outside is refused, never half-analysed.
const (
	MinSamplePeriod = 1e-9
	MaxSamplePeriod = 86400.0
)

// samplePeriod reads a `sample` value as seconds: a time is the period, a
// frequency the rate. Messages quote the value as written.
func samplePeriod(n *syntax.Number) (float64, error) {
	q, f, ok := unitKind(n.UnitCanon())
	if !ok {
		return 0, fmt.Errorf("unknown unit %q", n.Unit)
	}
	v := n.Value * f
	if !(v > 0) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("the sample period must be a positive, finite time or rate, not %s", n)
	}
	switch q {
	case qTime:
	case qFreq:
		v = 1 / v
	default:
		return 0, fmt.Errorf("sample needs a time (s, ms, us) or a rate (Hz, kHz), e.g. `sample 1 ms`")
	}
	if v < MinSamplePeriod || v > MaxSamplePeriod || math.IsInf(v, 0) {
		return 0, fmt.Errorf("sample %s is outside the periods ringside analyses, 1 ns (1 GHz) to 1 day (86400 s): beyond them the discretization loses the model's digits; write the controller's real period", n)
	}
	return v, nil
}
