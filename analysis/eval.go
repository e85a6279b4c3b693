package analysis

import (
	"errors"
	"fmt"
	"sort"

	"ringside/analysis/discretize"
	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/syntax"
)

// MaxBlockDegree bounds the degree of any block polynomial (a loop's
// order is bounded by MaxLoopDegree). The root
// finder is validated to degree 64 (roots.MaxDegree); a controller or plant
// beyond that is not a hand-written model, and powers nested without limit
// would otherwise grow polynomials without bound.
const MaxBlockDegree = 64

// evaluator turns block expressions into rational functions for one set of
// gain values. It memoises per block; a gain sweep uses a fresh one.
type evaluator struct {
	scope map[string]*Decl
	gains map[string]float64
	t     float64 // sample period, 0 when unknown
	memo  map[string]*blockValue
	diags *diagList // nil: do not report (sweeps)
	// A sweep sets one gain to another value. Blocks that do not depend
	// on it are taken from base, already evaluated.
	sweepGain string
	sweepK    float64
	base      *evaluator
	// numbers keeps discretizations between checks (nil: none).
	numbers *memoRun
	// assigned sets several gains at once (a point of a box of varying
	// gains); like a sweep, blocks that depend on none are taken from base.
	assigned map[string]float64
}

// assign returns an evaluator that sets every gain of values and reuses
// every block of ev that depends on none of them.
func (ev *evaluator) assign(values map[string]float64) *evaluator {
	return &evaluator{scope: ev.scope, gains: ev.gains, t: ev.t, memo: map[string]*blockValue{}, assigned: values, base: ev}
}

// changes reports whether bv depends on a gain this evaluator sets.
func (ev *evaluator) changes(bv *blockValue) bool {
	if bv.gains[ev.sweepGain] {
		return true
	}
	for g := range ev.assigned {
		if bv.gains[g] {
			return true
		}
	}
	return false
}

// sweep returns an evaluator that sets gain name to k and reuses every
// block of ev that does not depend on it.
func (ev *evaluator) sweep(name string, k float64) *evaluator {
	return &evaluator{scope: ev.scope, gains: ev.gains, t: ev.t, memo: map[string]*blockValue{}, sweepGain: name, sweepK: k, base: ev}
}

// gain is the value of a gain in this evaluation.
func (ev *evaluator) gain(name string) float64 {
	if ev.base != nil && name == ev.sweepGain {
		return ev.sweepK
	}
	if v, ok := ev.assigned[name]; ok {
		return v
	}
	return ev.gains[name]
}

type blockValue struct {
	v    byte // 's', 'z' or 0
	cont poly.Rational
	tf   poly.Rational
	// fac is tf in factored form (valid with ok unless facErr is set).
	fac    lti.Factored
	facErr error
	ok     bool // tf valid
	contOK bool // cont valid (s and constant blocks)
	gains  map[string]bool
	busy   bool
	// key is the block's memo key (blockMemoKey), "" when not memoised.
	key string
	// gainNames is gains sorted, set by the block stage before the value
	// is shared (nil: sort when needed).
	gainNames []string
	// sums holds, while the block is evaluated, the value of each sum in
	// its expression, for its factored form to read rather than evaluate
	// again (a ratio of two polynomials is a quotient of two sums).
	sums map[*syntax.Binary]poly.Rational
}

type evalError struct {
	span syntax.Span
	code string
	msg  string
}

func (e *evalError) Error() string { return e.msg }

func (ev *evaluator) report(path string, span syntax.Span, sev Severity, code, msg string) {
	if ev.diags != nil {
		ev.diags.add(path, span, sev, code, msg)
	}
}

// block evaluates the named block (memoised).
func (ev *evaluator) block(d *Decl) *blockValue {
	if bv, ok := ev.memo[d.Name]; ok {
		if bv.busy {
			return &blockValue{}
		}
		return bv
	}
	if ev.base != nil {
		if bv, ok := ev.base.memo[d.Name]; ok && !bv.busy && !ev.changes(bv) {
			return bv
		}
	}
	bv := &blockValue{busy: true, gains: map[string]bool{}}
	ev.memo[d.Name] = bv
	defer func() { bv.busy = false }()
	st := d.Block.Stmt
	if st.Expr == nil {
		return bv
	}
	v, ok := ev.baseVar(d)
	if !ok {
		return bv
	}
	bv.v = v
	evalVar := v
	if v == 0 {
		evalVar = 'z'
	}
	bv.sums = map[*syntax.Binary]poly.Rational{}
	defer func() { bv.sums = nil }()
	r, err := ev.expr(d, st.Expr, evalVar, bv)
	if err != nil {
		ev.report(d.Path, err.span, Error, err.code, err.msg)
		return bv
	}
	if r.Num.Degree() > MaxBlockDegree || r.Den.Degree() > MaxBlockDegree {
		ev.report(d.Path, syntax.Span{From: st.Expr.Pos(), To: st.Expr.End()}, Error, CodeTooComplex,
			fmt.Sprintf("block %s has degree %d, above the limit of %d", d.Name, max(r.Num.Degree(), r.Den.Degree()), MaxBlockDegree))
		return bv
	}
	switch v {
	case 0:
		bv.cont, bv.tf, bv.ok, bv.contOK = r, r, true, true
		bv.fac, bv.facErr = ev.factoredTop(d, st.Expr, r, bv)
		if st.Via != nil {
			ev.report(d.Path, st.Via.Span, Warning, CodeViaOnDiscrete,
				fmt.Sprintf("block %s is a constant: `via` has no effect; remove it", d.Name))
		}
	case 'z':
		if st.Via != nil {
			ev.report(d.Path, st.Via.Span, Error, CodeViaOnDiscrete,
				fmt.Sprintf("block %s is already discrete (in z): remove `via`; only s blocks are discretized", d.Name))
		}
		if r.Num.Degree() > r.Den.Degree() {
			ev.report(d.Path, exprSpan(st.Expr), Error, CodeNonCausal,
				fmt.Sprintf("block %s is non-causal: numerator degree %d exceeds denominator degree %d in z, so its output would need future inputs; add delay (multiply by z^-%d)",
					d.Name, r.Num.Degree(), r.Den.Degree(), r.Num.Degree()-r.Den.Degree()))
			return bv
		}
		bv.tf, bv.ok = r, true
		bv.fac, bv.facErr = ev.factoredTop(d, st.Expr, r, bv)
	case 's':
		bv.cont, bv.contOK = r, true
		if r.Num.Degree() > r.Den.Degree() {
			ev.report(d.Path, exprSpan(st.Expr), Error, CodeNonCausal,
				fmt.Sprintf("block %s is improper: numerator degree %d exceeds denominator degree %d in s, and no discretization can make it causal; add a roll-off pole, e.g. divide by (s/100 + 1)",
					d.Name, r.Num.Degree(), r.Den.Degree()))
			return bv
		}
		if st.Via == nil || st.Via.Method == nil {
			return bv // reported by the loop that needs it
		}
		m, ok := discretize.ParseMethod(st.Via.Method.Name)
		if !ok {
			ev.report(d.Path, st.Via.Method.Span, Error, CodeUnknownVia,
				fmt.Sprintf("unknown discretization method %q: use zoh, foh, tustin or matched", st.Via.Method.Name))
			return bv
		}
		if ev.t <= 0 {
			return bv // no sample line: reported once for the file
		}
		opt := discretize.Options{Method: m, T: ev.t}
		if p := st.Via.Prewarp; p != nil {
			hz, err := prewarpHz(p)
			if err != nil {
				ev.report(d.Path, p.Span, Error, CodeBadUnit, err.Error())
				return bv
			}
			opt.PrewarpHz = hz
		}
		tf, err := ev.numbers.discretize(r, opt)
		if err != nil {
			ev.report(d.Path, st.Via.Span, Error, CodeDiscretize, fmt.Sprintf("cannot discretize block %s by %s: %v", d.Name, m.Title(), err))
			return bv
		}
		bv.tf, bv.ok = tf, true
		bv.fac, bv.facErr = lti.FromRational(tf)
	}
	return bv
}

// factoredTop is factored for a block's whole expression e, whose
// transfer function r is already known: a sum at the top (a PI
// controller's kp + ki·T·z/(z − 1)) is factored from r rather than
// evaluated again.
func (ev *evaluator) factoredTop(d *Decl, e syntax.Expr, r poly.Rational, bv *blockValue) (lti.Factored, error) {
	inner := e
	for {
		p, ok := inner.(*syntax.Paren)
		if !ok {
			break
		}
		inner = p.X
	}
	if x, ok := inner.(*syntax.Binary); ok && !x.Juxtaposed && x.Op != "*" && x.Op != "/" {
		return lti.FromRational(r)
	}
	return ev.factored(d, e, bv)
}

// factored returns a z (or constant) block's factored form: exact where the
// expression multiplies, divides or raises factors as written (z − 1)^3 or
// (z − 0.75), from the roots of the block's own polynomials where it sums
// terms (a sum has no factors until its polynomial is solved). The
// expression has already evaluated without error.
func (ev *evaluator) factored(d *Decl, e syntax.Expr, bv *blockValue) (lti.Factored, error) {
	switch x := e.(type) {
	case *syntax.NumberLit:
		return lti.Const(x.Value), nil
	case *syntax.VarRef:
		return lti.Factored{Gain: 1, Zeros: []complex128{0}}, nil
	case *syntax.Paren:
		return ev.factored(d, x.X, bv)
	case *syntax.Unary:
		f, err := ev.factored(d, x.X, bv)
		if x.Op == "-" {
			f = f.Scale(-1)
		}
		return f, err
	case *syntax.Power:
		f, err := ev.factored(d, x.X, bv)
		if err != nil || (x.Exp < 0 && f.IsZero()) {
			return f, err
		}
		return f.Pow(x.Exp), nil
	case *syntax.Binary:
		if x.Juxtaposed || x.Op == "*" || x.Op == "/" {
			a, err := ev.factored(d, x.X, bv)
			if err != nil {
				return a, err
			}
			b, err := ev.factored(d, x.Y, bv)
			if err != nil {
				return a, err
			}
			if x.Op == "/" {
				if b.IsZero() {
					return lti.Factored{}, errors.New("division by zero")
				}
				b = b.Inv()
			}
			return a.Mul(b), nil
		}
		if r, ok := bv.sums[x]; ok {
			return lti.FromRational(r)
		}
		r, err := ev.expr(d, x, 'z', &blockValue{gains: map[string]bool{}})
		if err != nil {
			return lti.Factored{}, err
		}
		return lti.FromRational(r)
	case *syntax.NameRef:
		ref := ev.scope[x.Name]
		if ref == nil {
			return lti.Factored{}, errors.New("unknown name")
		}
		if ref.Gain != nil {
			return lti.Const(ev.gain(x.Name)), nil
		}
		sub := ev.block(ref)
		if sub.v == 0 && sub.contOK && !sub.ok {
			return lti.FromRational(sub.cont)
		}
		return sub.fac, sub.facErr
	}
	return lti.Factored{}, errors.New("this expression could not be read")
}

func prewarpHz(n *syntax.Number) (float64, error) {
	q, f, ok := unitKind(n.UnitCanon())
	if !ok || q != qFreq {
		return 0, fmt.Errorf("prewarp needs a frequency (Hz, kHz or rad/s), e.g. `prewarp 3 Hz`")
	}
	return n.Value * f, nil
}

func exprSpan(e syntax.Expr) syntax.Span { return syntax.Span{From: e.Pos(), To: e.End()} }

// baseVar is blockVar, read from the base evaluation when this one is a
// sweep or an assignment (gain values do not change a block's variable).
func (ev *evaluator) baseVar(d *Decl) (byte, bool) {
	if ev.base != nil {
		if bv, ok := ev.base.memo[d.Name]; ok && !bv.busy && bv.v != 0 {
			return bv.v, true
		}
	}
	return ev.blockVar(d)
}

// blockVar decides whether a block is in s, in z, or a constant: the
// variables written in it, and the blocks it names. Mixed use is reported.
func (ev *evaluator) blockVar(d *Decl) (byte, bool) {
	var sAt, zAt *syntax.VarRef
	var sBlock *syntax.NameRef
	bad := false
	syntax.Walk(d.Block.Stmt.Expr, func(n syntax.Node) bool {
		switch x := n.(type) {
		case *syntax.VarRef:
			if x.Name == "s" && sAt == nil {
				sAt = x
			}
			if x.Name == "z" && zAt == nil {
				zAt = x
			}
		case *syntax.NameRef:
			if ref, ok := ev.scope[x.Name]; ok && ref.Block != nil && ref != d {
				if ev.block(ref).v == 's' && sBlock == nil {
					sBlock = x
				}
			}
		}
		return true
	})
	switch {
	case sAt != nil && zAt != nil:
		ev.report(d.Path, zAt.Span, Error, CodeMixedVariables,
			fmt.Sprintf("block %s mixes s and z: write it wholly in s (with via) or wholly in z", d.Name))
		bad = true
	case sAt != nil:
		return 's', true
	case zAt != nil:
		return 'z', true
	case sBlock != nil && d.Block.Stmt.Via != nil:
		return 's', true
	case sBlock != nil:
		return 'z', true
	}
	return 0, !bad
}

// expr evaluates e in variable v ('s' or 'z').
func (ev *evaluator) expr(d *Decl, e syntax.Expr, v byte, bv *blockValue) (poly.Rational, *evalError) {
	switch x := e.(type) {
	case *syntax.NumberLit:
		return poly.RConst(x.Value), nil
	case *syntax.VarRef:
		return poly.R(poly.X(), poly.Const(1)), nil
	case *syntax.Paren:
		return ev.expr(d, x.X, v, bv)
	case *syntax.Unary:
		r, err := ev.expr(d, x.X, v, bv)
		if err != nil {
			return r, err
		}
		if x.Op == "-" {
			r = r.Scale(-1)
		}
		return r, nil
	case *syntax.Power:
		r, err := ev.expr(d, x.X, v, bv)
		if err != nil {
			return r, err
		}
		if x.Exp < 0 && r.Num.IsZero() {
			return r, &evalError{exprSpan(x), CodeBadExpression, "negative power of zero"}
		}
		if deg := max(r.Num.Degree(), r.Den.Degree()) * abs(x.Exp); deg > MaxBlockDegree {
			return r, &evalError{exprSpan(x), CodeTooComplex, fmt.Sprintf("this power has degree %d, above the limit of %d", deg, MaxBlockDegree)}
		}
		return checkFinite(r.Pow(x.Exp), x)
	case *syntax.Binary:
		a, err := ev.expr(d, x.X, v, bv)
		if err != nil {
			return a, err
		}
		b, err := ev.expr(d, x.Y, v, bv)
		if err != nil {
			return b, err
		}
		var r poly.Rational
		switch {
		case x.Juxtaposed || x.Op == "*":
			r = a.Mul(b)
		case x.Op == "/":
			if b.Num.IsZero() {
				return b, &evalError{exprSpan(x.Y), CodeBadExpression, "division by zero"}
			}
			r = a.Div(b)
		case x.Op == "+":
			r = a.Add(b)
		case x.Op == "-":
			r = a.Sub(b)
		}
		if deg := max(r.Num.Degree(), r.Den.Degree()); deg > MaxBlockDegree {
			return r, &evalError{exprSpan(x), CodeTooComplex, fmt.Sprintf("this expression has degree %d, above the limit of %d", deg, MaxBlockDegree)}
		}
		r, err = checkFinite(r, x)
		if err == nil && bv.sums != nil && v == 'z' && (x.Op == "+" || x.Op == "-") && !x.Juxtaposed {
			bv.sums[x] = r
		}
		return r, err
	case *syntax.NameRef:
		return ev.name(d, x, v, bv)
	}
	return poly.Rational{}, &evalError{exprSpan(e), CodeSyntax, "this expression could not be read"}
}

func (ev *evaluator) name(d *Decl, x *syntax.NameRef, v byte, bv *blockValue) (poly.Rational, *evalError) {
	ref, ok := ev.scope[x.Name]
	if !ok {
		return poly.Rational{}, &evalError{x.Span, CodeUnknownName, unknownNameMsg(x.Name, ev.scope)}
	}
	if ref.Gain != nil {
		bv.gains[x.Name] = true
		return poly.RConst(ev.gain(x.Name)), nil
	}
	if ref == d {
		return poly.Rational{}, &evalError{x.Span, CodeUnknownName, fmt.Sprintf("block %s cannot use itself", x.Name)}
	}
	if ref.Path == d.Path && ref.Ident.From > d.Ident.From {
		return poly.Rational{}, &evalError{x.Span, CodeLaterBlock, fmt.Sprintf("block %s is declared further down; a block may use only blocks declared above it", x.Name)}
	}
	sub := ev.block(ref)
	for g := range sub.gains {
		bv.gains[g] = true
	}
	switch {
	case v == 's' && sub.v == 'z':
		return poly.Rational{}, &evalError{x.Span, CodeMixedVariables, fmt.Sprintf("block %s is in z and cannot appear in an s expression; only s blocks can", x.Name)}
	case v == 's' || sub.v == 0:
		if !sub.contOK {
			return poly.Rational{}, &evalError{x.Span, CodeBadExpression, fmt.Sprintf("block %s has errors of its own", x.Name)}
		}
		return sub.cont, nil
	}
	if !sub.ok {
		msg := fmt.Sprintf("block %s has errors of its own", x.Name)
		if sub.v == 's' && (ref.Block.Stmt.Via == nil) {
			msg = fmt.Sprintf("block %s is in s and has no `via`: it cannot be used in z until it is discretized (add `via zoh` to it)", x.Name)
		}
		return poly.Rational{}, &evalError{x.Span, CodeNoVia, msg}
	}
	return sub.tf, nil
}

func checkFinite(r poly.Rational, n syntax.Node) (poly.Rational, *evalError) {
	if !r.Num.Finite() || !r.Den.Finite() {
		return r, &evalError{syntax.Span{From: n.Pos(), To: n.End()}, CodeBadExpression, "a coefficient overflows (is not a finite number); rescale the expression"}
	}
	return r, nil
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// unknownNameMsg explains an unknown name, suggesting the closest one.
func unknownNameMsg(name string, scope map[string]*Decl) string {
	best, bestD := "", 3
	names := make([]string, 0, len(scope))
	for n := range scope {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		if d := editDistance(name, n); d < bestD {
			best, bestD = n, d
		}
	}
	msg := fmt.Sprintf("unknown name %q: declare it with `gain %s = ...` or `block %s = ...`", name, name, name)
	if best != "" {
		msg += fmt.Sprintf(", or did you mean %s?", best)
	}
	return msg
}

// editDistance is the Levenshtein distance between a and b.
func editDistance(a, b string) int { return syntax.EditDistance(a, b) }
