// Package fuzzin turns fuzz input bytes into the numbers, polynomials and
// rational functions the numeric packages' fuzz targets feed their code:
// ordinary values most of the time, degenerate ones (zero, NaN, ±Inf, huge,
// tiny, repeated roots on the unit circle, cancellations) often enough to
// be reached. Every byte string is valid input.
package fuzzin

import (
	"math"
	"math/cmplx"

	"ringside/analysis/poly"
)

// New reads from data; when it runs out, zeros follow.
func New(data []byte) *Bytes { return &Bytes{b: data} }

// SamplePeriod maps a byte to a sample period, including invalid ones.
func SamplePeriod(b byte) float64 {
	switch b % 8 {
	case 0:
		return 0
	case 1:
		return 1e-3
	case 2:
		return math.NaN()
	case 3:
		return 1
	case 4:
		return -1e-3
	case 5:
		return 1e-9
	case 6:
		return math.Inf(1)
	default:
		return 1e6 * float64(b)
	}
}

// Rational decodes num/den with an optional common factor (a pole-zero
// cancellation, often on the unit circle).
func (f *Bytes) Rational(maxDeg int) poly.Rational {
	num := f.Poly(maxDeg)
	den := f.Poly(maxDeg)
	if f.Byte()%2 == 1 {
		c := f.Poly(maxDeg / 2)
		num, den = num.Mul(c), den.Mul(c)
	}
	return poly.R(num, den)
}

// Bytes decodes fuzz input into numbers and polynomials. Every byte
// string is valid input; when it runs out, zeros follow, so short inputs
// give low-degree (often degenerate) cases.
type Bytes struct {
	b []byte
	i int
}

func (f *Bytes) Byte() byte {
	if f.i >= len(f.b) {
		return 0
	}
	c := f.b[f.i]
	f.i++
	return c
}

// Coef decodes one coefficient: ordinary values most of the time, and the
// degenerate ones (0, NaN, ±Inf, huge, tiny, raw bit patterns) often enough
// to be reached.
func (f *Bytes) Coef() float64 {
	sel := f.Byte()
	sign := 1.0
	if sel&0x80 != 0 {
		sign = -1
	}
	switch sel & 0x0f {
	case 0:
		return 0
	case 1:
		return math.NaN()
	case 2:
		return sign * math.Inf(1)
	case 3:
		return sign * 1e300 * (1 + float64(f.Byte())/256)
	case 4:
		return sign * 1e-300 * (1 + float64(f.Byte())/256)
	case 5:
		var u uint64
		for k := 0; k < 8; k++ {
			u = u<<8 | uint64(f.Byte())
		}
		return math.Float64frombits(u)
	case 6:
		return sign
	default:
		m := float64(int8(f.Byte())) / 16
		e := int(f.Byte()%9) - 4
		return sign * m * math.Pow(10, float64(e))
	}
}

// Root decodes one root: on the unit circle (at an angle that is often 0
// or π), inside or outside it, or zero.
func (f *Bytes) Root() complex128 {
	sel := f.Byte()
	ang := math.Pi * float64(f.Byte()) / 128
	switch sel % 6 {
	case 0:
		return cmplx.Rect(1, ang)
	case 1:
		return 1
	case 2:
		return -1
	case 3:
		return 0
	default:
		r := float64(f.Byte())/64 + 1e-3
		return cmplx.Rect(r, ang)
	}
}

// Poly decodes a polynomial of degree below maxDeg+1: either coefficient by
// coefficient, or from roots (with repeats and conjugates) times a scale.
func (f *Bytes) Poly(maxDeg int) poly.Poly {
	mode := f.Byte()
	n := int(f.Byte()) % (maxDeg + 1)
	if mode%2 == 0 {
		p := make(poly.Poly, n+1)
		for k := range p {
			p[k] = f.Coef()
		}
		return p
	}
	scale := f.Coef()
	var rs []complex128
	for len(rs) < n {
		z := f.Root()
		rep := 1 + int(f.Byte()%4)
		for j := 0; j < rep && len(rs) < n; j++ {
			rs = append(rs, z)
			if imag(z) != 0 {
				rs = append(rs, cmplx.Conj(z))
			}
		}
	}
	return poly.FromRoots(rs).Scale(scale)
}
