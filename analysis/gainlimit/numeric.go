package gainlimit

import (
	"fmt"
	"math"

	"ringside/analysis/poly"
)

const (
	// NumericFirstStep is the first march step as a fraction of
	// max(1, |k0|); steps then grow by NumericGrowth. A stable or unstable
	// window narrower than the step at its distance from k0 (10 % of that
	// distance) can be missed; that is the price of bounded work.
	NumericFirstStep = 1e-6
	// NumericGrowth is the ratio between successive march steps.
	NumericGrowth = 1.1
	// NumericRange bounds the march: |k − k0| ≤ NumericRange·max(1, |k0|).
	// With the step rule above that is at most ~290 stability tests per
	// direction; beyond the range the side is reported unbounded (nil).
	NumericRange = 1e6
	// BisectRelTol ends a bisection when the bracket is narrower than
	// BisectRelTol·max(|lo|, |hi|) (or than BisectRelTol·1e-12·scale when
	// the boundary sits at zero, where a relative width cannot be reached).
	BisectRelTol = 1e-9
	// maxBisect caps any bisection; 200 halvings exceed float64 resolution.
	maxBisect = 200
)

// Numeric returns the stable interval around k0 of the characteristic
// polynomial c(k), for gains that enter nonlinearly. It marches outwards
// from k0 in both directions (k0 ± h, h = NumericFirstStep·s·NumericGrowthⁱ,
// s = max(1, |k0|), across zero as needed, up to |k − k0| = NumericRange·s),
// tests each point with SchurStable, and bisects each change of stability to
// BisectRelTol. If k0 is unstable, the nearer first stable point found on
// either side starts the nearest stable interval, whose ends are found the
// same way. Work is bounded: at most ~600 march tests and 2·200 bisection
// tests, each one call of c and one Schur recursion. Exact is false.
// Errors from c are returned. A c(k) of lower degree than the largest of
// c(k0) and c(k0 ± first step) counts as unstable: a root went to infinity.
func Numeric(c func(k float64) (poly.Poly, error), k0 float64) (Interval, error) {
	if math.IsNaN(k0) || math.IsInf(k0, 0) {
		return Interval{}, fmt.Errorf("gainlimit: current gain %v is not finite", k0)
	}
	scale := math.Max(1, math.Abs(k0))
	deg := -1
	for _, k := range []float64{k0, k0 - NumericFirstStep*scale, k0 + NumericFirstStep*scale} {
		p, err := c(k)
		if err != nil {
			return Interval{}, err
		}
		deg = max(deg, p.Degree())
	}
	return NumericFunc(func(k float64) (bool, error) {
		p, err := c(k)
		if err != nil {
			return false, err
		}
		if p.Finite() && p.Degree() < deg {
			return false, nil // a root went to infinity (or every z is a root)
		}
		return SchurStable(p)
	}, k0)
}

// NumericFunc is Numeric for any stability test of the gain (an eigenvalue
// check of a loop model, say): the same march and bisection.
func NumericFunc(stable func(k float64) (bool, error), k0 float64) (Interval, error) {
	if math.IsNaN(k0) || math.IsInf(k0, 0) {
		return Interval{}, fmt.Errorf("gainlimit: current gain %v is not finite", k0)
	}
	scale := math.Max(1, math.Abs(k0))
	s0, err := stable(k0)
	if err != nil {
		return Interval{}, err
	}
	if s0 {
		lo, err := boundary(stable, k0, -1, scale, true)
		if err != nil {
			return Interval{}, err
		}
		hi, err := boundary(stable, k0, +1, scale, true)
		if err != nil {
			return Interval{}, err
		}
		return Interval{Lo: lo, Hi: hi, ContainsCurrent: true, Found: true}, nil
	}
	// k0 unstable: first stable point on each side.
	left, err := boundary(stable, k0, -1, scale, false)
	if err != nil {
		return Interval{}, err
	}
	right, err := boundary(stable, k0, +1, scale, false)
	if err != nil {
		return Interval{}, err
	}
	var start float64
	dir := 0.0
	switch {
	case left == nil && right == nil:
		return Interval{}, nil
	case right == nil || (left != nil && k0-*left < *right-k0):
		start, dir = *left, -1
	default:
		start, dir = *right, +1
	}
	// start is the bisected boundary (on the unstable side's edge); the
	// stable interval continues beyond it in direction dir.
	far, err := boundaryFrom(stable, start, dir, scale, k0)
	if err != nil {
		return Interval{}, err
	}
	iv := Interval{Found: true}
	if dir < 0 {
		iv.Hi, iv.Lo = ptr(start), far
	} else {
		iv.Lo, iv.Hi = ptr(start), far
	}
	return iv, nil
}

// boundary marches from k0 in direction dir until stability differs from
// want, then bisects that change. It returns nil when no change is seen
// within the range.
func boundary(stable func(float64) (bool, error), k0, dir, scale float64, want bool) (*float64, error) {
	prev := k0
	for h := NumericFirstStep * scale; h <= NumericRange*scale; h *= NumericGrowth {
		k := k0 + dir*h
		st, err := stable(k)
		if err != nil {
			return nil, err
		}
		if st != want {
			b, err := bisect(stable, prev, k, want, scale)
			if err != nil {
				return nil, err
			}
			return &b, nil
		}
		prev = k
	}
	return nil, nil
}

// boundaryFrom finds the far end of the stable interval that begins just
// beyond start (a boundary) in direction dir. The march restarts from a
// point slightly inside the interval; steps are scaled to k0's range.
func boundaryFrom(stable func(float64) (bool, error), start, dir, scale, k0 float64) (*float64, error) {
	inner := start + dir*BisectRelTol*math.Max(math.Abs(start), 1e-12*scale)
	for i := 0; i < 60; i++ {
		st, err := stable(inner)
		if err != nil {
			return nil, err
		}
		if st {
			break
		}
		inner = start + 2*(inner-start)
	}
	remaining := NumericRange*scale - math.Abs(inner-k0)
	if remaining <= 0 {
		return nil, nil
	}
	return boundary(stable, inner, dir, scale, true)
}

// bisect narrows [in, out] (stable(in) == want != stable(out)) to
// BisectRelTol and returns the end on the 'out' side: the first value that
// no longer has the property, i.e. the open interval's end.
func bisect(stable func(float64) (bool, error), in, out float64, want bool, scale float64) (float64, error) {
	for i := 0; i < maxBisect; i++ {
		if math.Abs(out-in) <= BisectRelTol*math.Max(math.Max(math.Abs(in), math.Abs(out)), 1e-12*scale) {
			break
		}
		mid := in + (out-in)/2
		st, err := stable(mid)
		if err != nil {
			return 0, err
		}
		if st == want {
			in = mid
		} else {
			out = mid
		}
	}
	return in + (out-in)/2, nil
}

// LargestMeeting returns the largest k in [lo, hi] with ok(k), assuming ok
// holds at lo and fails beyond a single switch point; bisection to
// BisectRelTol relative width (at most 200 calls of ok). It returns hi when
// ok(hi) holds, and (lo, false) when ok(lo) fails or the bounds are not
// finite with lo ≤ hi. The returned k satisfies ok(k).
func LargestMeeting(ok func(k float64) bool, lo, hi float64) (float64, bool) {
	if math.IsNaN(lo) || math.IsNaN(hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) || lo > hi {
		return lo, false
	}
	if !ok(lo) {
		return lo, false
	}
	if ok(hi) {
		return hi, true
	}
	good, bad := lo, hi
	for i := 0; i < maxBisect; i++ {
		if bad-good <= BisectRelTol*math.Max(math.Max(math.Abs(good), math.Abs(bad)), 1e-300) {
			break
		}
		mid := good + (bad-good)/2
		if mid == good || mid == bad {
			break
		}
		if ok(mid) {
			good = mid
		} else {
			bad = mid
		}
	}
	return good, true
}
