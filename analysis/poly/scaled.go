package poly

import "math"

// Renorm scales c by a power of two into [2^-64, 2^64) in modulus and adds
// the exponent taken out to e: products of many factors are carried as
// (mantissa, exponent) so that neither overflows nor underflows. Powers of
// two change no bits of the mantissa.
func Renorm(c complex128, e int) (complex128, int) {
	m := math.Max(math.Abs(real(c)), math.Abs(imag(c)))
	if m == 0 || (m > 0x1p-64 && m < 0x1p64) {
		return c, e
	}
	_, k := math.Frexp(m)
	return LdexpC(c, -k), e + k
}

// LdexpC is c·2^k, exact unless the result leaves the float64 range.
func LdexpC(c complex128, k int) complex128 {
	return complex(math.Ldexp(real(c), k), math.Ldexp(imag(c), k))
}
