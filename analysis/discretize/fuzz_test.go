package discretize

import (
	"math"
	"math/cmplx"
	"ringside/analysis/internal/fuzzin"
	"testing"
	"time"

	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// fuzzMaxDegree bounds the continuous degrees (plants in .loop files are of
// low order; the matrix exponential is O(n³)).
const fuzzMaxDegree = 12

// fuzzTimeLimit bounds one Discretize call.
const fuzzTimeLimit = 10 * time.Second

// fuzzDCTol is the relative DC-gain agreement FuzzDiscretize asks for on
// well-scaled inputs: every method here keeps H(z=1) = H(s=0) exactly in
// exact arithmetic (ZOH/FOH hold a constant input exactly, Tustin maps s = 0
// to z = 1, matched scales its gain to it: common practice), and the
// package's own accuracy is 1e-13 against scipy; 1e-6 leaves room for the
// conditioning of fuzzed poles near s = 0.
const fuzzDCTol = 1e-6

// fuzzNumRound is the relative rounding allowed in the discrete numerator's
// and denominator's values at z = 1, as a share of Σ|cᵢ|. The package states
// eps·Σ|d_j|·max|h_k| for its numerator, up to a constant factor; seed
// 67a363e550628c73 (FOH of s/(1 − 0.00030625s), e^{pT} = 26) reached
// 3e-14 of Σ|nᵢ|, ten times that product. 1e-12 (~4500 eps) allows for the
// constant and still flags any real error (those are of order one). Seeds
// 67565e19f170aa07 and a7cb7b557b89d4c8 showed the amplification by a
// small D(1).
const fuzzNumRound = 1e-12

// fuzzDResolved: the DC check needs |D(1)| ≥ fuzzDResolved·Σ|dᵢ|, so that
// the coefficients' rounding (~eps·Σ|dᵢ|) moves D(1) by under 1e-8 of itself.
const fuzzDResolved = 1e-8

// FuzzDiscretize checks that Discretize never panics or hangs for any
// continuous rational function, method, sample period and prewarp; refuses
// bad input with an error; and on success returns finite coefficients, a
// monic denominator of the continuous degree, a proper result, and (on
// well-scaled inputs without a pole near s = 0) the continuous DC gain.
func FuzzDiscretize(f *testing.F) {
	f.Add([]byte{}, byte(1), byte(1), byte(0))
	f.Add([]byte{0, 0, 7, 32, 5, 0, 2, 7, 32, 5, 7, 48, 5, 6, 0}, byte(1), byte(1), byte(0)) // 20/(s^2+30s+20)
	f.Add([]byte{0, 0, 6, 1, 2, 6, 3, 0, 1}, byte(2), byte(1), byte(0))                      // 1/s^2: double integrator
	f.Add([]byte{0, 0, 6, 1, 2, 6, 0, 64, 1}, byte(3), byte(1), byte(7))                     // 1/(s^2+1), prewarped Tustin
	f.Add([]byte{0, 1, 6, 6, 1, 1, 6, 4, 0, 10, 0, 0}, byte(4), byte(1), byte(0))            // (s+1)/(s-0.157), matched
	f.Add([]byte{0, 2, 6, 6, 6, 0, 0, 6}, byte(1), byte(1), byte(0))                         // improper
	f.Add([]byte{0, 0, 3, 0, 0, 1, 4, 0, 6, 0}, byte(1), byte(3), byte(0))                   // 1e300/(s+1e-300), T = 1 s
	f.Add([]byte{0, 0, 6, 0, 1, 1, 0, 6}, byte(9), byte(2), byte(5))                         // NaN denominator, bad method, NaN T
	f.Fuzz(func(t *testing.T, data []byte, msel, tsel, wsel byte) {
		fb := fuzzin.New(data)
		c := fb.Rational(fuzzMaxDegree)
		o := Options{Method: Method(msel % 6), T: fuzzin.SamplePeriod(tsel), PrewarpHz: fuzzPrewarp(wsel)}
		var h poly.Rational
		var err error
		done := make(chan struct{})
		go func() {
			defer close(done)
			h, err = Discretize(c, o)
		}()
		select {
		case <-done:
		case <-time.After(fuzzTimeLimit):
			t.Fatalf("Discretize(%v, %+v) did not return within %v", c, o, fuzzTimeLimit)
		}
		if err != nil {
			return
		}
		cn, cd := c.Num.Trim(), c.Den.Trim()
		bad := !(o.T > 0) || math.IsInf(o.T, 0) || !cn.Finite() || !cd.Finite() || len(cd) == 0 ||
			len(cn) > len(cd) || o.Method < ZOH || o.Method > Matched ||
			(o.PrewarpHz != 0 && (o.Method != Tustin || o.PrewarpHz < 0 || o.PrewarpHz >= 1/(2*o.T)))
		if bad {
			t.Fatalf("Discretize(%v, %+v) = %v, want an error", c, o, h)
		}
		if !h.Num.Finite() || !h.Den.Finite() {
			t.Fatalf("Discretize(%v, %+v) = %v: non-finite coefficient", c, o, h)
		}
		hd := h.Den.Trim()
		if hd.Degree() != cd.Degree() || hd.Lead() != 1 {
			t.Fatalf("Discretize(%v, %+v): denominator %v, want monic of degree %d", c, o, hd, cd.Degree())
		}
		if h.Num.Trim().Degree() > hd.Degree() {
			t.Fatalf("Discretize(%v, %+v): improper result %v", c, o, h)
		}
		// D(1) must be resolved by the coefficients: with m poles within
		// δ of s = 0 (or of each other near z = 1) it is ~(δT)^m, and
		// below ~1e-8·Σ|dᵢ| the rounding of the coefficients decides it
		// (seed ec35c671ef95fc5f: (s − 1)⁶ at 1 ms gives D(1) ≈ 1e-18
		// from terms of size 20). Such a DC gain is no test of the method.
		resolved := math.Abs(hd.Eval(1)) >= fuzzDResolved*absSum(hd)
		if resolved && wellScaled(cn, cd) && o.T == 1e-3 && math.Abs(cd[0]) >= 1e-3*maxAbs(cd) && slowPoles(cd, o.T) {
			want := cn.Eval(0) / cd[0]
			got := h.Num.Eval(1) / hd.Eval(1)
			// N(1) and D(1) carry the coefficients' rounding (~eps·Σ|nᵢ|,
			// eps·Σ|dᵢ|), which D(1) ≈ Π(1 − e^{pT}) amplifies when poles
			// sit near s = 0: δ(N/D) ≈ (δN + |N/D|·δD)/|D(1)|.
			allowed := fuzzDCTol*math.Abs(want) + fuzzNumRound*(absSum(h.Num)+math.Abs(got)*absSum(hd))/math.Abs(hd.Eval(1))
			if math.Abs(got-want) > allowed {
				t.Fatalf("Discretize(%v, %+v) = %v: DC gain %v, want %v", c, o, h, got, want)
			}
		}
	})
}

// slowPoles reports every continuous pole within |p|·T ≤ 1: below the
// Nyquist frequency, where the hold equivalents' numerators keep their
// stated accuracy. Faster unstable poles (seed 15d144fc9c83d392: FOH of
// s/(1 − 0.00015625s), e^{pT} = 602) lose digits in N(1) with the growth of
// the Markov parameters, which is no DC-gain error of the method.
func slowPoles(den poly.Poly, T float64) bool {
	res, err := roots.Find(den)
	if err != nil {
		return false
	}
	for _, p := range res.Roots {
		if cmplx.Abs(p)*T > 1 {
			return false
		}
	}
	return true
}

func maxAbs(p poly.Poly) float64 {
	m := 0.0
	for _, v := range p {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// wellScaled: every nonzero coefficient within 1e-4..1e4 in magnitude and
// no more than degree 6 (so fuzzed poles stay within a few hundred rad/s
// of the origin, far below 1/T for T = 1 ms).
func wellScaled(ps ...poly.Poly) bool {
	for _, p := range ps {
		if p.Degree() > 6 {
			return false
		}
		for _, v := range p {
			if v != 0 && (math.Abs(v) < 1e-4 || math.Abs(v) > 1e4) {
				return false
			}
		}
	}
	return true
}

// fuzzPrewarp maps a byte to a prewarp frequency, valid or not.
func fuzzPrewarp(b byte) float64 {
	switch b % 8 {
	case 0, 1, 2:
		return 0
	case 3:
		return -1
	case 4:
		return math.NaN()
	case 5:
		return 500 // Nyquist at T = 1 ms
	case 6:
		return math.Inf(1)
	default:
		return float64(b)
	}
}
