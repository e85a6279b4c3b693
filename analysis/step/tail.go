package step

import "math"

// OvershootSlack is how much overshoot (as a fraction of |Final|) a
// response may still gain after an early stop when none has been seen yet:
// an overdamped loop's tail creeps toward Final and would otherwise never
// let the simulation stop. The overshoot figure is then exact to
// 100·OvershootSlack percentage points (1e-4 %), far below what the figure
// is printed or compared with.
const OvershootSlack = 1e-6

// Tail follows the samples of a step response as they are produced and
// says when a bound on every later deviation |y[j] − Final| proves that no
// later sample can change a figure: the settling time (the last exit from
// the band is behind), the overshoot (the peak is behind, to
// OvershootSlack), the rise time (the 90 % level is reached) and, when
// asked, the samples a view shows (StepShown). Stopping there gives the
// figures the full horizon would give.
type Tail struct {
	final, width, peak, maxAbs float64
	k90, view                  bool
	last, n                    int
}

// NewTail starts a tracker for a response with steady-state value final;
// view asks for the samples a view shows as well as the figures.
func NewTail(final float64, view bool) *Tail {
	return &Tail{final: final, width: band * math.Abs(final), last: -1, view: view}
}

// Add takes the next sample.
func (t *Tail) Add(v float64) {
	f := t.final
	if f != 0 {
		s := math.Copysign(1, f)
		t.peak = math.Max(t.peak, s*(v-f))
		if s*v >= 0.9*math.Abs(f) {
			t.k90 = true
		}
	} else {
		t.maxAbs = math.Max(t.maxAbs, math.Abs(v))
		t.width = band * t.maxAbs
	}
	if math.Abs(v-f) > t.width {
		t.last = t.n
	}
	t.n++
}

// Done reports whether the samples so far fix every figure, given that
// |y[j] − Final| ≤ bound for every sample j not yet taken.
func (t *Tail) Done(bound float64) bool {
	if !(bound >= 0) || math.IsInf(bound, 0) || t.view && t.n <= StepShown(t.last+1) || t.last >= t.n-1 {
		return false
	}
	if t.final == 0 {
		return bound <= t.width // later |y| ≤ bound cannot widen the band
	}
	af := math.Abs(t.final)
	return t.k90 && bound <= t.width && bound <= math.Max(t.peak, OvershootSlack*af)
}

// StepShown is how many samples views keep of a response that settles
// after settle samples: one and a half settling times, at least
// MinSamples, at most ShownMax.
func StepShown(settle int) int {
	return min(max(int(math.Ceil(1.5*float64(settle))), MinSamples), ShownMax)
}

// ShownMax is the most samples a view shows.
const ShownMax = 2000
