package analysis

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"ringside/analysis/lti"
	"ringside/analysis/pole"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
	"ringside/syntax"
)

// MaxLoopDegree bounds a loop's order (the number of its closed-loop
// poles). Nothing is solved as one polynomial of that degree: the limit
// bounds the work of the eigenvalue problem (O(n³)), the frequency grid and
// the step simulation, and leaves room for long delays (z^-50) around a
// plant of order 30 or more.
const MaxLoopDegree = 160

// CancelTolerance: a block pole and a zero in the same loop closer than this
// (relative to max(1, |pole|)) cancel in L. The mode is then a closed-loop
// pole whose weight in the output is of the order of the distance: hidden
// in practice, not only when the two are typed identically.
const CancelTolerance = 1e-4

// element is one block or gain on a loop path, resolved.
type element struct {
	name   string
	ident  *syntax.Ident
	tf     poly.Rational
	fac    lti.Factored
	facErr error
	block  *Block // nil for a gain
	decl   *Decl
}

// loopShape is the structure of a loop statement, independent of values.
type loopShape struct {
	fwd, fb  []*syntax.Ident
	positive bool
	reqs     []*syntax.RequireItem
}

func shapeOf(ls *syntax.LoopStmt) loopShape {
	var sh loopShape
	for _, it := range ls.Items {
		switch x := it.(type) {
		case *syntax.PathItem:
			if x.Keyword.Name == "forward" {
				sh.fwd = append(sh.fwd, x.Names...)
			} else {
				sh.fb = append(sh.fb, x.Names...)
			}
		case *syntax.SignItem:
			if x.Value != nil && x.Value.Name == "positive" {
				sh.positive = true
			}
		case *syntax.RequireItem:
			sh.reqs = append(sh.reqs, x)
		}
	}
	return sh
}

// polys forms a loop's open loop, characteristic polynomial and closed loop
// from the elements' transfer functions, without cancelling anything.
func polys(fwd, fb []poly.Rational, positive bool) (open poly.Rational, char poly.Poly, closed poly.Rational) {
	g, h := poly.RConst(1), poly.RConst(1)
	for _, e := range fwd {
		g = g.Mul(e)
	}
	for _, e := range fb {
		h = h.Mul(e)
	}
	sign := 1.0
	if positive {
		sign = -1
	}
	open = g.Mul(h).Scale(sign)
	char = g.Den.Mul(h.Den).Add(g.Num.Mul(h.Num).Scale(sign))
	closed = poly.R(g.Num.Mul(h.Den), char)
	return
}

// elements resolves the names of a path; ok is false when one failed (and
// was reported when diags is set).
func (c *checker) elements(ev *evaluator, names []*syntax.Ident, report bool) ([]element, bool) {
	out := make([]element, 0, len(names))
	ok := true
	for _, id := range names {
		d, found := c.res.Scope[id.Name]
		if !found {
			if report {
				c.diags.add(c.res.Path, id.Span, Error, CodeUnknownName, unknownNameMsg(id.Name, c.res.Scope))
			}
			ok = false
			continue
		}
		if d.Gain != nil {
			out = append(out, element{name: id.Name, ident: id, tf: poly.RConst(ev.gain(id.Name)), fac: lti.Const(ev.gain(id.Name)), decl: d})
			continue
		}
		bv := ev.block(d)
		if !bv.ok {
			if report {
				c.reportUnusable(d, id)
			}
			ok = false
			continue
		}
		out = append(out, element{name: id.Name, ident: id, tf: bv.tf, fac: bv.fac, facErr: bv.facErr, block: d.Block, decl: d})
	}
	return out, ok
}

func (c *checker) reportUnusable(d *Decl, id *syntax.Ident) {
	st := d.Block.Stmt
	bv := c.evaluator(c.gains, nil).block(d)
	if bv.v == 's' && bv.contOK && (st.Via == nil || st.Via.Method == nil) {
		x := c.diags.add(c.res.Path, id.Span, Error, CodeNoVia,
			fmt.Sprintf("block %s is continuous (in s) and has no `via`: the loop needs it in z; add a discretization method such as `via zoh` (a plant behind a DAC and sample-and-hold)", id.Name))
		x.Fixes = append(x.Fixes, Fix{Title: fmt.Sprintf("Add `via zoh` to block %s", id.Name),
			Edits: []Edit{{Path: d.Path, Span: syntax.Span{From: st.Expr.End(), To: st.Expr.End()}, NewText: " via zoh"}}})
		x.Related = append(x.Related, Related{Path: d.Path, Span: st.Name.Span, Message: "block declared here"})
		return
	}
	if bv.v == 's' && c.res.SampleT == 0 {
		return // the missing sample line is reported once
	}
	x := c.diags.add(c.res.Path, id.Span, Error, CodeBadExpression, fmt.Sprintf("block %s has errors, so this loop cannot be analysed", id.Name))
	x.Related = append(x.Related, Related{Path: d.Path, Span: st.Name.Span, Message: "block declared here"})
}

// model builds the loop's factored and state-space model; ok is false when
// some block has no factored form (its roots could not be found).
func model(fwd, fb []element, positive bool) (*lti.Loop, error) {
	facs := func(es []element) ([]lti.Factored, error) {
		out := make([]lti.Factored, len(es))
		for i, e := range es {
			if e.facErr != nil {
				return nil, fmt.Errorf("block %s: %v", e.name, e.facErr)
			}
			out[i] = e.fac
		}
		return out, nil
	}
	f, err := facs(fwd)
	if err != nil {
		return nil, err
	}
	b, err := facs(fb)
	if err != nil {
		return nil, err
	}
	return lti.NewLoop(f, b, positive), nil
}

func tfs(es []element) []poly.Rational {
	out := make([]poly.Rational, len(es))
	for i, e := range es {
		out[i] = e.tf
	}
	return out
}

// loop analyses one loop statement.
func (c *checker) loop(ev *evaluator, ls *syntax.LoopStmt) *Loop {
	sh := shapeOf(ls)
	l := &Loop{Name: ls.Name.Name, Stmt: ls, Positive: sh.positive}
	for _, id := range sh.fwd {
		l.Forward = append(l.Forward, id.Name)
	}
	for _, id := range sh.fb {
		l.Feedback = append(l.Feedback, id.Name)
	}
	for _, it := range ls.Items {
		if s, ok := it.(*syntax.SignItem); ok && s.Value != nil && s.Value.Name != "negative" && s.Value.Name != "positive" {
			c.badSign(s)
		}
	}
	c.checkMetrics(sh.reqs)
	if len(sh.fwd) == 0 {
		c.diags.add(c.res.Path, ls.Name.Span, Error, CodeEmptyPath, fmt.Sprintf("loop %s has no `forward` line: name the blocks from error to output, e.g. `forward ctrl plant`", l.Name))
		return l
	}
	fwd, ok1 := c.elements(ev, sh.fwd, true)
	fb, ok2 := c.elements(ev, sh.fb, true)
	if !ok1 || !ok2 {
		return l
	}
	if c.res.SampleT == 0 {
		return l
	}
	gains := map[string]bool{}
	for _, e := range append(append([]element{}, fwd...), fb...) {
		if e.block == nil {
			gains[e.name] = true
		} else {
			for g := range ev.block(e.decl).gains {
				gains[g] = true
			}
		}
	}
	l.Gains = sortedKeys(gains)
	c.analyse(l, sh, fwd, fb)
	c.realizedLoop(l, sh, fwd, fb)
	return l
}

// analyse computes a loop's figures from its resolved elements and reports
// on them: the ideal loop, and the loop with realized blocks swapped in.
func (c *checker) analyse(l *Loop, sh loopShape, fwd, fb []element) {
	l.Open, l.Char, l.Closed = polys(tfs(fwd), tfs(fb), sh.positive)
	if msg := degenerate(l, append(append([]element{}, fwd...), fb...)); msg != "" {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeNumeric,
			fmt.Sprintf("loop %s cannot be analysed: %s; no verdict is given. Rescale the blocks (write the gain separately from the poles)", l.Name, msg))
		return
	}
	if deg := l.Char.Degree(); deg > MaxLoopDegree {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeTooComplex, fmt.Sprintf("loop %s has a characteristic polynomial of degree %d, above the limit of %d", l.Name, deg, MaxLoopDegree))
		return
	}
	if c.env.Options.Quick {
		return
	}
	if !c.algebraic(l, fwd, fb) {
		return
	}
	mod, err := model(fwd, fb, sh.positive)
	if err != nil {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeNumeric, fmt.Sprintf("loop %s: closed-loop poles could not be computed (%v); no verdict", l.Name, err))
		return
	}
	l.Model = mod
	poles, ok := c.closedPoles(l)
	if !ok {
		return
	}
	l.OK = true
	c.hiddenModes(l, append(append([]element{}, fwd...), fb...))
	resp, respErr := mod.Response(c.res.SampleT, poles)
	err = respErr
	if err == nil {
		l.Margins, err = resp.Margins(c.res.SampleT)
	}
	if err != nil {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeNumeric, fmt.Sprintf("loop %s: margins could not be computed: %v", l.Name, err))
	}
	if l.Stable && c.wants(sh.reqs, "overshoot", "settling") {
		stepOf := mod.Step
		if c.env.Options.NoStepSamples {
			stepOf = mod.StepFigures // the samples are dropped: no view to fill
		}
		st, err := stepOf(c.res.SampleT, l.MaxRadius)
		if err != nil {
			c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeNumeric, fmt.Sprintf("loop %s: step response could not be simulated: %v", l.Name, err))
		} else {
			l.Step = &st
		}
	}
	if c.wants(sh.reqs, "disk_margin") {
		c.diskMargin(l, resp, respErr)
	}
	resp.Release() // the margins and the disk margin are read
	c.verdictDiagnostics(l, fwd, fb)
	c.requirements(l, sh.reqs)
}

// degenerate explains why the products of a loop's polynomials cannot be
// trusted: a coefficient that overflowed, a degree lost to underflow (the
// product of the denominators must have the sum of their degrees), which
// would silently drop closed-loop poles, or a direct feedthrough beyond
// the float64 range.
func degenerate(l *Loop, es []element) string {
	if !l.Open.Num.Finite() || !l.Open.Den.Finite() || !l.Char.Finite() {
		return "a coefficient of the loop's polynomials overflows the float64 range"
	}
	want := 0
	for _, e := range es {
		want += e.tf.Den.Degree()
	}
	if l.Open.Den.Degree() != want {
		return "the product of the denominators underflows (its leading coefficient rounds to zero), so poles would be lost"
	}
	if l.Open.RelativeDegree() == 0 {
		if d := l.Open.Num.Lead() / l.Open.Den.Lead(); math.IsInf(d, 0) || math.IsNaN(d) {
			return "the loop's direct feedthrough L(∞) overflows the float64 range"
		}
	}
	return ""
}

func (c *checker) badSign(s *syntax.SignItem) {
	want := "negative"
	if editDistance(s.Value.Name, "positive") < editDistance(s.Value.Name, "negative") {
		want = "positive"
	}
	x := c.diags.add(c.res.Path, s.Value.Span, Error, CodeBadSign,
		fmt.Sprintf("sign must be `negative` (the usual feedback, the default) or `positive`, not %q; did you mean %s?", s.Value.Name, want))
	x.Fixes = append(x.Fixes, Fix{Title: "Change to `sign " + want + "`", Edits: []Edit{{Path: c.res.Path, Span: s.Value.Span, NewText: want}}})
}

// algebraic reports a loop with no delay around it. A well-posed one is
// solvable but needs the current output to compute the current input; an
// ill-posed one (1 + L(∞) = 0) has no solution at all.
func (c *checker) algebraic(l *Loop, fwd, fb []element) bool {
	if l.Open.RelativeDegree() > 0 {
		return true
	}
	var names []string
	for _, e := range append(append([]element{}, fwd...), fb...) {
		names = append(names, e.name)
	}
	direct := l.Open.Num.Lead() / l.Open.Den.Lead()
	if l.Char.Degree() < l.Open.Den.Degree() || math.Abs(1+direct) <= 1e-12 {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeAlgebraicLoop,
			fmt.Sprintf("loop %s is an ill-posed algebraic loop: no element delays the signal and 1 + L(∞) = 0, so the loop equations have no solution; add a delay (z^-1) to the feedback path", l.Name))
		return false
	}
	c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeAlgebraicLoop,
		fmt.Sprintf("loop %s is an algebraic loop: none of %s delays the signal (direct feedthrough %.4g around the loop), so the controller would need this sample's output to compute this sample's input; real loops have at least one sample of delay (e.g. feedback z^-1)", l.Name, strings.Join(names, ", "), direct))
	return true
}

// closedPoles finds the closed-loop poles, their bounds and the verdict.
func (c *checker) closedPoles(l *Loop) ([]lti.Pole, bool) {
	ps, err := l.Model.Poles()
	if err != nil {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeNumeric, fmt.Sprintf("loop %s: closed-loop poles could not be computed (%v); no verdict", l.Name, err))
		return nil, false
	}
	tol := c.env.Options.Tolerance
	for _, p := range ps {
		l.Poles = append(l.Poles, pole.Describe(p.Z, c.res.SampleT, tol))
		l.PoleBounds = append(l.PoleBounds, p.Bound)
	}
	l.MaxRadius, l.MinDamping = 0, math.Inf(1)
	if len(l.Poles) > 0 {
		l.MaxRadius = l.Poles[0].Radius
	}
	for _, p := range l.Poles {
		if p.Shape != pole.Impulse && p.Damping < l.MinDamping {
			l.MinDamping = p.Damping
		}
	}
	if math.IsInf(l.MinDamping, 1) {
		l.MinDamping = 1
	}
	v, i := lti.Decide(ps, tol)
	switch v {
	case lti.Stable:
		l.Stable = true
	case lti.Marginal:
		l.Marginal = true
	case lti.Undecided:
		l.Undecided = true
		c.undecided(l, ps[i])
	}
	return ps, true
}

// undecided reports a loop whose verdict the numbers cannot support.
func (c *checker) undecided(l *Loop, p lti.Pole) {
	what := "a closed-loop pole"
	if p.Multiplicity > 1 {
		what = fmt.Sprintf("a cluster of %d closed-loop poles that the computation cannot separate, centred", p.Multiplicity)
	}
	c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodeNumeric,
		fmt.Sprintf("loop %s: stability cannot be decided numerically: %s at z = %s (radius %s) carries %s, which reaches across the unit circle (tolerance %g); no verdict is given. To resolve it, move the loop's poles clear of the circle by more than the bound, write repeated or cancelling roots as factors such as (z - 1)^2 so they are exact, or split the loop into lower-order blocks",
			l.Name, what, fmtComplex(p.Z), FormatRadius(cmplx.Abs(p.Z)), boundText(p.Bound), c.env.Options.Tolerance))
}

// boundText states a pole's error bound; a bound that overflowed (or was
// lost to NaN) is stated as too large to compute, never as a non-number.
func boundText(b float64) string {
	if math.IsInf(b, 0) || math.IsNaN(b) {
		return "an error bound too large to compute (it overflows float64)"
	}
	return fmt.Sprintf("an error bound of %.2g", b)
}

// hiddenModes finds block poles cancelled by zeros in the same loop.
func (c *checker) hiddenModes(l *Loop, es []element) {
	type rootOf struct {
		z    complex128
		elem int
	}
	var ps, zs []rootOf
	for i, e := range es {
		if e.block == nil || e.facErr != nil {
			continue
		}
		for _, cl := range clustersOf(e.fac.Poles) {
			ps = append(ps, rootOf{cl.Value, i})
		}
		if e.fac.IsZero() {
			continue
		}
		for _, cl := range clustersOf(e.fac.Zeros) {
			zs = append(zs, rootOf{cl.Value, i})
		}
	}
	seen := map[complex128]bool{}
	for _, p := range ps {
		if imag(p.z) < 0 || seen[p.z] {
			continue
		}
		for _, q := range zs {
			if cmplx.Abs(p.z-q.z) > CancelTolerance*math.Max(1, cmplx.Abs(p.z)) {
				continue
			}
			seen[p.z] = true
			h := HiddenMode{Pole: p.z, PoleBlock: es[p.elem].name, ZeroBlock: es[q.elem].name}
			l.Hidden = append(l.Hidden, h)
			c.hiddenDiagnostic(l, h, es[p.elem], es[q.elem])
			break
		}
	}
}

func (c *checker) hiddenDiagnostic(l *Loop, h HiddenMode, pe, ze element) {
	r := cmplx.Abs(h.Pole)
	tol := c.env.Options.Tolerance
	sev, what := Warning, "a stable mode that L does not show: it still moves the plant's internal state"
	switch {
	case r > 1+tol:
		sev, what = Error, "an UNSTABLE mode that L does not show: the loop is internally unstable (a signal inside grows without bound) even if the output looks fine"
	case r >= 1-tol:
		sev, what = Error, "a mode on the unit circle that L does not show: the loop is not internally stable (a disturbance there never dies out)"
	}
	by := "a zero of block " + h.ZeroBlock
	if h.ZeroBlock == h.PoleBlock {
		by = "a zero of the same block"
	}
	x := c.diags.add(c.res.Path, l.Stmt.Name.Span, sev, CodeHiddenMode,
		fmt.Sprintf("loop %s hides a mode: the pole of block %s at z = %s (radius %s) is cancelled by %s; it is %s. Do not cancel plant poles outside or near the circle; change the zero of %s instead",
			l.Name, h.PoleBlock, fmtComplex(h.Pole), FormatRadius(r), by, what, h.ZeroBlock))
	x.Related = append(x.Related,
		Related{Path: pe.decl.Path, Span: pe.decl.Ident.Span, Message: fmt.Sprintf("block %s: pole at z = %s", h.PoleBlock, fmtComplex(h.Pole))},
		Related{Path: ze.decl.Path, Span: ze.decl.Ident.Span, Message: fmt.Sprintf("block %s: the cancelling zero", h.ZeroBlock)})
}

// verdictDiagnostics reports an unstable or marginal loop.
func (c *checker) verdictDiagnostics(l *Loop, fwd, fb []element) {
	if l.Stable || l.Undecided {
		return
	}
	worst := l.Poles[0]
	where := fmt.Sprintf("z = %s (radius %s)", fmtComplex(worst.Z), FormatRadius(worst.Radius))
	if d := CircleDistance(worst.Radius, c.env.Options.Tolerance); d != "" {
		where = fmt.Sprintf("z = %s (radius %s, %s)", fmtComplex(worst.Z), FormatRadius(worst.Radius), d)
	}
	var x *Diagnostic
	if l.Marginal {
		x = c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodePoleOnCircle,
			fmt.Sprintf("loop %s is not BIBO stable: closed-loop pole on the unit circle at %s (tolerance %g); a bounded input can drive an unbounded output (a sustained oscillation or drift)", l.Name, where, c.env.Options.Tolerance))
	} else {
		x = c.diags.add(c.res.Path, l.Stmt.Name.Span, Error, CodePoleOutside,
			fmt.Sprintf("loop %s is UNSTABLE: %d closed-loop pole(s) outside the unit circle, the largest at %s; the output grows without bound and can damage the machine; do not run it", l.Name, l.PolesOutside(), where))
	}
	// Point at the open-loop pole nearest to the worst closed-loop pole.
	best, bestD := -1, math.Inf(1)
	es := append(append([]element{}, fwd...), fb...)
	var bestZ complex128
	for i, e := range es {
		if e.block == nil {
			continue
		}
		for _, p := range e.block.poleValues(e.tf) {
			if d := cmplx.Abs(p - worst.Z); d < bestD {
				best, bestD, bestZ = i, d, p
			}
		}
	}
	if best >= 0 {
		e := es[best]
		x.Related = append(x.Related, Related{Path: e.decl.Path, Span: e.decl.Ident.Span,
			Message: fmt.Sprintf("block %s has the nearest open-loop pole, z = %s", e.name, fmtComplex(bestZ))})
	}
	c.flipSignFix(x, l, fwd, fb)
	c.pending = append(c.pending, pendingFix{diag: len(c.diags.list) - 1, loop: l, stability: true})
}

// flipSignFix offers the other feedback sign when the loop would be stable
// with it: a sign typed the wrong way round is a common slip, and the
// editor user chooses whether it is one.
func (c *checker) flipSignFix(x *Diagnostic, l *Loop, fwd, fb []element) {
	flipped, err := model(fwd, fb, !l.Positive)
	if err != nil || flipped.CannotBeStable(c.env.Options.Tolerance) {
		return
	}
	if ps, err := flipped.Poles(); err != nil {
		return
	} else if v, _ := lti.Decide(ps, c.env.Options.Tolerance); v != lti.Stable {
		return
	}
	want, note := "negative", "negative (the usual feedback)"
	if !l.Positive {
		want, note = "positive", "positive"
	}
	var edit Edit
	found := false
	for _, it := range l.Stmt.Items {
		if s, ok := it.(*syntax.SignItem); ok && s.Value != nil {
			edit, found = Edit{Path: c.res.Path, Span: s.Value.Span, NewText: want}, true
		}
	}
	if !found {
		at := l.Stmt.LBrace + 1
		edit = Edit{Path: c.res.Path, Span: syntax.Span{From: at, To: at}, NewText: syntax.LineBreak(c.res.File.Src) + "  sign " + want} // the file's own line break
	}
	x.Message += fmt.Sprintf("; with sign %s it would be stable: check the sign of the measurement", want)
	x.Fixes = append(x.Fixes, Fix{Title: "Flip the feedback sign to " + note, Edits: []Edit{edit}})
}

// poleValues returns the poles of tf (the block's own when analysed).
func (b *Block) poleValues(tf poly.Rational) []complex128 {
	if b != nil && len(b.Poles) > 0 {
		out := make([]complex128, len(b.Poles))
		for i, p := range b.Poles {
			out[i] = p.Z
		}
		return out
	}
	r, err := roots.Find(tf.Den)
	if err != nil {
		return nil
	}
	return r.Roots
}
