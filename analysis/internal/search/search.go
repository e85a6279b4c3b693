// Package search holds the one-dimensional searches the numeric packages
// share.
package search

// GoldenMax returns the maximiser of f on [a, b] by golden-section search,
// narrowed to width tol (at most 200 steps). f is taken as unimodal on
// [a, b], which a sampled maximum between two lower neighbours gives on a
// fine enough sampling; otherwise the result is a local maximum.
func GoldenMax(f func(float64) float64, a, b, tol float64) float64 {
	const g = 0.6180339887498949
	c, d := b-g*(b-a), a+g*(b-a)
	fc, fd := f(c), f(d)
	for i := 0; i < 200 && b-a > tol; i++ {
		if fc > fd {
			b, d, fd = d, c, fc
			c = b - g*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + g*(b-a)
			fd = f(d)
		}
	}
	return a + (b-a)/2
}
