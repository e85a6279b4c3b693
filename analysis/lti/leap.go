package lti

import "ringside/analysis/poly"

// A slow loop's step response spends most of its samples creeping toward
// its final value: the rise and the peak are long behind, and only the last
// exit from the settling band is still open. The leap finds that exit
// without taking every sample. With e = x − x∞ the deviation from the
// steady state, e[j+m] = Aᵐ e[j] exactly, so the state m samples on is one
// product with Aᵐ (from the powers Ã^(2^i) the tail bound squared, in its
// balanced coordinates). The search:
//
//  1. gallop: jump 256, 512, 1024, … samples on until the tail bound
//     proves every sample from there on inside the band (at b);
//  2. bisect between the last unproven jump and b, to within leapSlack;
//  3. scan back from b in windows of doubling length, stepping the
//     response sample by sample as simulate does, until a window holds an
//     exit: its last exit is the last of the response.
//
// Every sample the figures read is still a simulated sample; only the
// states at jump targets come from Aᵐ rather than m steps. They differ
// from the stepped states by rounding (relative ~log₂m·n·ε in balanced
// coordinates), so a sample within that of the band's edge may count either
// way, as it may between any two correct simulations.

// leapFrom is the first sample at which a leap is tried: shorter responses
// are cheaper to step to the end.
const leapFrom = 256

// leapSlack is the width (samples) at which the bisection stops; the
// backward scan steps at least this many samples.
const leapSlack = 64

// leap searches for the last band exit of sim's response from state x at
// sample k (the next to be taken), over a horizon of K samples. It reports
// false, changing nothing, when no proof comes before the horizon or a
// jumped state is not finite; the caller then steps on.
func (sim *simulation) leap(s System, rows nonzeros, tb *tailBound, x []float64, k, K int, final float64) bool {
	n := s.N
	e0 := tb.toBalanced(x)
	next, xb := make([]float64, n), make([]float64, n)
	proven := func(e []float64) bool {
		tb.fromBalanced(xb, e)
		rows.step(next, xb, s.B)
		dev, _ := tb.bounds(xb, next, final)
		return sim.watch.Within(dev)
	}
	a, ea, b := k, e0, -1
	for jump := 256; ; jump *= 2 {
		if a+jump >= K-1 {
			return false
		}
		ej := tb.advance(ea, jump)
		if !poly.Poly(ej).Finite() {
			return false
		}
		if proven(ej) {
			b = a + jump
			break
		}
		a, ea = a+jump, ej
	}
	for b-a > leapSlack {
		mid := a + (b-a)/2
		em := tb.advance(ea, mid-a)
		if proven(em) {
			b = mid
		} else {
			a, ea = mid, em
		}
	}
	last, ok := sim.lastExit(s, rows, tb, e0, k, b)
	if !ok {
		return false
	}
	sim.watch.Settle(last, b)
	sim.stopped, sim.leapt = true, true
	return true
}

// lastExit scans back from sample b toward k in windows of doubling length
// for the last sample outside the band, stepping each window from its
// first state (jumped to from e0, the state at k); −1 when none.
func (sim *simulation) lastExit(s System, rows nonzeros, tb *tailBound, e0 []float64, k, b int) (int, bool) {
	n := s.N
	x, nx := make([]float64, n), make([]float64, n)
	for hi, w := b, leapSlack; hi > k; w *= 2 {
		lo := max(k, hi-w)
		tb.fromBalanced(x, tb.advance(e0, lo-k))
		last := -1
		for j := lo; j < hi; j++ {
			v := s.output(x)
			if v-v != 0 {
				return 0, false
			}
			if sim.watch.Outside(v) {
				last = j
			}
			rows.step(nx, x, s.B)
			x, nx = nx, x
		}
		if last >= 0 {
			return last, true
		}
		hi = lo
	}
	return -1, true
}

// toBalanced returns ẽ = S⁻¹(x − x∞).
func (t *tailBound) toBalanced(x []float64) []float64 {
	e := make([]float64, len(x))
	for i, v := range x {
		e[i] = (v - t.xinf[i]) * t.scale[i]
	}
	return e
}

// fromBalanced sets x = x∞ + S ẽ.
func (t *tailBound) fromBalanced(x, e []float64) {
	for i, v := range e {
		x[i] = t.xinf[i] + v/t.scale[i]
	}
}

// advance returns Ãᵐ ẽ (a new vector), by the binary digits of m over the
// powers Ã^(2^i), squaring further ones as needed.
func (t *tailBound) advance(e []float64, m int) []float64 {
	n := len(e)
	cur, tmp := append([]float64(nil), e...), make([]float64, n)
	for i := 0; m > 0; i, m = i+1, m>>1 {
		if i == len(t.pows) {
			q := make([]float64, n*n)
			matMul(q, t.pows[i-1], t.pows[i-1], n)
			t.pows = append(t.pows, q)
		}
		if m&1 == 0 {
			continue
		}
		p := t.pows[i]
		for r := 0; r < n; r++ {
			acc := 0.0
			for c, v := range cur {
				acc += p[r*n+c] * v
			}
			tmp[r] = acc
		}
		cur, tmp = tmp, cur
	}
	return cur
}
