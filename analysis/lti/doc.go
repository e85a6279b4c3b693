// Package lti keeps a loop the way the engineer wrote it — blocks in
// series, each a transfer function in z kept as gain, poles and zeros — and
// answers every numeric question from that structure, never from one
// expanded characteristic polynomial (whose roots at order 30 or 40 are
// conditioned near 1e15: no root finder gets them back).
//
// API, for anyone holding blocks (the checker, substituted or rounded
// blocks, varied gains):
//
//	f, err := lti.FromRational(r)           // a block from its num/den (roots of its own low-order polynomials)
//	f := lti.Factored{Gain, Zeros, Poles}   // or straight from factors, exact
//	l := lti.NewLoop(fwd, fb, positive)     // common pole/zero factors taken out exactly
//	l.At(z)                                 // L(z), block by block (cancelled pairs cancel exactly)
//	poles, err := l.Poles()                 // closed-loop poles, each with an error Bound
//	v, i := lti.Decide(poles, tol)          // Stable, Marginal, Unstable or Undecided (and the deciding pole)
//	m, err := l.Margins(T, poles)           // gain/phase/delay margins, peak sensitivity (freq on the factors)
//	st, err := l.Step(T, maxRadius)         // unit step on the state-space model of the loop as written
//	lti.Realize(f), lti.Series, lti.Feedback, lti.Eigen  // the state-space pieces
//
// Method. Each block is realized as a cascade of first- and second-order
// real sections (complex pairs in modal form), its gain spread evenly over
// them; the loop is the series connection of its blocks closed by
// u = −y. Closed-loop poles are the eigenvalues of that model after
// balancing, with a bound from each eigenvalue's condition number and the
// backward error of the eigenvalue solver (see Eigen). Poles of one block
// matched by zeros of any block of the loop (a cancelled mode, an
// integrator cancelled by a differentiator) are common factors of the
// characteristic polynomial: they are exact closed-loop poles, taken out
// before the eigenvalue computation, and cancelled in L for the margins.
// Unseparable eigenvalues form a cluster decided on the circle by its
// centroid; a pole whose bound straddles the circle leaves the verdict
// Undecided rather than guessed.
package lti
