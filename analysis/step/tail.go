package step

import (
	"fmt"
	"math"
)

// OvershootSlack is how much overshoot (as a fraction of |Final|) a
// response may still gain after an early stop when none has been seen yet:
// an overdamped loop's tail creeps toward Final and would otherwise never
// let the simulation stop. The overshoot figure is then exact to
// 100·OvershootSlack percentage points (1e-4 %), far below what the figure
// is printed or compared with.
const OvershootSlack = 1e-6

// Tail reads the step figures off the samples of a response as they are
// produced, without keeping them, and says when a bound on every later
// deviation |y[j] − Final| proves that no later sample can change a figure:
// the settling time (the last exit from the band is behind), the overshoot
// (the peak is behind, to OvershootSlack), the rise time (the 90 % level is
// reached) and, when asked, the samples a view shows (StepShown). Stopping
// there gives the figures the full horizon would give. Tail is the one
// definition of the figures (FromSamples feeds it every sample); a
// response with Final = 0, whose band depends on the largest sample of
// all, keeps its samples and is read by FromSamples instead.
type Tail struct {
	final, width, peak, maxAbs float64
	sigma, at10, at90          float64 // sign of Final; 10 % and 90 % of |Final|
	k10, k90                   int     // first samples at 10 % and 90 % of Final; −1 before
	lateFrom                   int     // the clamped horizon's second half starts here
	quietUntil                 int     // before it, a sample below the peak moves only the band exit
	lateDev                    float64
	view                       bool
	last, n                    int
}

// NewTail starts a tracker for a response with steady-state value final
// simulated for at most horizon samples; view asks for the samples a view
// shows as well as the figures.
func NewTail(final float64, view bool, horizon int) *Tail {
	af := math.Abs(final)
	return &Tail{final: final, width: band * af, sigma: math.Copysign(1, final), at10: 0.1 * af, at90: 0.9 * af,
		last: -1, k10: -1, k90: -1, lateFrom: horizon / 2, view: view}
}

// Add takes the next sample. Most samples of a long response only move the
// last exit from the band: that path is kept small enough to inline.
func (t *Tail) Add(v float64) {
	if d := v - t.final; t.n < t.quietUntil && t.sigma*d <= t.peak && math.Abs(d) <= t.width {
		t.n++ // inside the band, below the peak: no figure moves
		return
	}
	t.add(v)
}

// add is Add for a sample that may move any figure.
func (t *Tail) add(v float64) {
	f := t.final
	if f != 0 {
		if o := t.sigma * (v - f); o > t.peak {
			t.peak = o
		}
		if t.k90 < 0 {
			if t.k10 < 0 && t.sigma*v >= t.at10 {
				t.k10 = t.n
			}
			if t.sigma*v >= t.at90 {
				t.k90 = t.n
			}
		}
	} else {
		t.maxAbs = math.Max(t.maxAbs, math.Abs(v))
		t.width = band * t.maxAbs
	}
	d := math.Abs(v - f)
	if d > t.width { // Outside
		t.last = t.n
	}
	if t.n >= t.lateFrom && d > t.lateDev {
		t.lateDev = d
	}
	t.n++
	if f != 0 && t.k90 >= 0 {
		t.quietUntil = t.lateFrom
	}
}

// Samples is how many samples were taken.
func (t *Tail) Samples() int { return t.n }

// Pending reports that no bound on the later samples can fix the figures
// yet: the last sample is outside the band, the 90 % level is not reached,
// or a view's samples are still to come.
func (t *Tail) Pending() bool {
	return t.view && t.n <= StepShown(t.last+1) || t.last >= t.n-1 || t.final != 0 && t.k90 < 0
}

// Done reports whether the samples so far fix every figure, given that
// every sample j not yet taken has |y[j] − Final| ≤ dev and
// σ·(y[j] − Final) ≤ over (σ the sign of Final; over ≤ dev always holds
// for the same proof, but a one-sided bound can be far smaller).
func (t *Tail) Done(dev, over float64) bool {
	if !(dev >= 0) || math.IsInf(dev, 0) || t.Pending() {
		return false
	}
	if t.final == 0 {
		return t.Within(dev) // later |y| ≤ dev cannot widen the band
	}
	return t.Within(dev) && t.peakFixed(dev, over)
}

// peakFixed reports whether later samples bounded by dev and over (as in
// Done) leave the overshoot as it is, to OvershootSlack.
func (t *Tail) peakFixed(dev, over float64) bool {
	return math.Min(over, dev) <= math.Max(t.peak, OvershootSlack*math.Abs(t.final))
}

// OnlyExitOpen reports whether, with later samples bounded by dev and over
// (as in Done), only the last exit from the band is still open: the rise
// time is fixed, the overshoot is fixed, and no view waits for samples.
// The last exit may then be searched for without taking every sample
// (Outside, Settle).
func (t *Tail) OnlyExitOpen(dev, over float64) bool {
	return t.final != 0 && !t.view && t.k90 >= 0 && dev >= 0 && t.peakFixed(dev, over)
}

// Outside reports whether the sample v lies outside the settling band
// (Final ≠ 0): the one definition of an exit, for Add and for searches.
func (t *Tail) Outside(v float64) bool { return math.Abs(v-t.final) > t.width }

// Within reports whether a bound dev on |y − Final| keeps a sample in the
// band.
func (t *Tail) Within(dev float64) bool { return dev <= t.width }

// Settle closes a search for the last exit (see OnlyExitOpen): last is
// the last sample found Outside from the current one on (−1 for none), and
// every sample from upTo on is proven Within the band. The figures are
// then fixed, as after Done.
func (t *Tail) Settle(last, upTo int) {
	if last >= 0 {
		t.last = last
	}
	t.n = max(upTo, t.last+2, t.n)
}

// Result returns the figures of the samples taken (Final ≠ 0), with
// samples the kept first samples for a view (nil for none); clamped says
// the horizon was cut at MaxSamples and run to its end (see Horizon).
// Errors as FromSamples.
func (t *Tail) Result(T float64, samples []float64, clamped bool) (Result, error) {
	if t.final == 0 {
		return Result{}, fmt.Errorf("step: a response with steady state 0 is read from its samples")
	}
	f := t.final
	af := math.Abs(f)
	r := Result{Samples: samples, T: T, Final: f, SteadyStateError: 1 - f, OvershootPct: 100 * t.peak / af}
	if t.k10 >= 0 && t.k90 >= 0 {
		r.RiseTimeS = float64(t.k90-t.k10) * T
	}
	r.SettlingS = float64(t.last+1) * T
	if clamped {
		r.Settled = t.last+1 <= t.n/2 && t.lateDev <= t.width/2
	} else {
		r.Settled = t.last < t.n-1
	}
	return r, checkFinite(r)
}

// StepShown is how many samples views keep of a response that settles
// after settle samples: one and a half settling times, at least
// MinSamples, at most ShownMax.
func StepShown(settle int) int {
	return min(max(int(math.Ceil(1.5*float64(settle))), MinSamples), ShownMax)
}

// ShownMax is the most samples a view shows.
const ShownMax = 2000
