package analysis

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"path/filepath"
	"strings"

	"ringside/analysis/realize"
	"ringside/syntax"
)

// Realization is a block's `realize` line and the rounded structure it
// gives (nil when it could not be built; a diagnostic says why).
type Realization struct {
	Stmt *syntax.RealizeStmt
	*realize.Realization
}

// Label is "sections in q1.14", as written after `as`.
func (r *Realization) Label() string {
	return r.Structure.String() + " in " + r.Format.String()
}

// RealizedLoop is a loop analysed with every realized block in its rounded
// form and the rest ideal.
type RealizedLoop struct {
	Blocks []string // the realized blocks on the loop's paths
	// Elements are their realizations, in path order.
	Elements []*realize.Realization
	// Figures is the loop analysed by the same code as the ideal one;
	// Figures.OK is false when that analysis could not run.
	Figures *Loop
}

// realizations reads the `realize` lines of this file and of the files it
// uses (a block runs as its own file says wherever a loop uses it); only
// this file's lines are reported on.
func (c *checker) realizations(ev *evaluator) {
	for _, u := range c.ld.order {
		uc := c
		if u != c.root {
			quiet := *c
			quiet.diags = &diagList{}
			uc = &quiet
		}
		uc.realizeLines(ev, u)
	}
}

func (c *checker) realizeLines(ev *evaluator, u *unit) {
	seen := map[string]*syntax.RealizeStmt{}
	for _, st := range u.file.Stmts {
		rs, ok := st.(*syntax.RealizeStmt)
		if !ok || rs.Block == nil {
			continue
		}
		name := rs.Block.Name
		d, found := c.res.Scope[name]
		switch {
		case !found:
			c.diags.add(c.res.Path, rs.Block.Span, Error, CodeUnknownName, unknownNameMsg(name, c.res.Scope))
			continue
		case d.Block == nil:
			c.diags.add(c.res.Path, rs.Block.Span, Error, CodeBadRealize, fmt.Sprintf("%s is a gain; realize applies to blocks (a gain is realized inside the block that uses it)", name))
			continue
		case d.Path != u.path:
			c.diags.add(c.res.Path, rs.Block.Span, Error, CodeBadRealize, fmt.Sprintf("block %s is declared in %s; write its realize line there, next to the block", name, filepath.Base(d.Path)))
			continue
		case seen[name] != nil:
			line, _ := u.file.Lines.LineCol(seen[name].From)
			c.diags.add(c.res.Path, rs.Span, Error, CodeBadRealize, fmt.Sprintf("block %s already has a realize line (line %d); a block runs in one structure and format", name, line))
			continue
		}
		seen[name] = rs
		if b := c.realizeBlock(ev, d, rs); b != nil {
			d.Block.Realization = b
		}
	}
}

// realizeBlock builds one realization and reports on it.
func (c *checker) realizeBlock(ev *evaluator, d *Decl, rs *syntax.RealizeStmt) *Realization {
	st, err1 := realize.ParseStructure(rs.Structure.Name)
	if err1 != nil {
		c.diags.add(c.res.Path, rs.Structure.Span, Error, CodeBadRealize, err1.Error())
	}
	f, err2 := realize.ParseFormat(rs.Format.Name)
	if err2 != nil {
		c.diags.add(c.res.Path, rs.Format.Span, Error, CodeBadRealize, err2.Error())
	}
	bv := ev.block(d)
	if err1 != nil || err2 != nil || !bv.ok || c.res.SampleT == 0 {
		return nil
	}
	if bv.v == 's' && (d.Block.Stmt.Via == nil || d.Block.Stmt.Via.Method == nil) {
		c.diags.add(c.res.Path, rs.Block.Span, Error, CodeBadRealize, fmt.Sprintf("block %s is continuous (in s); give it a `via` so there is a z transfer function to realize", d.Name))
		return nil
	}
	tol := c.env.Options.Tolerance
	r, err := realize.Realize(bv.tf, st, f, c.res.SampleT, tol)
	if err != nil {
		var re *realize.RangeError
		if errors.As(err, &re) {
			x := c.diags.add(c.res.Path, rs.Format.Span, Error, CodeRealizeRange, fmt.Sprintf("block %s as %s: %v; nothing is scaled silently", d.Name, st, err))
			if re.NeedM >= 0 && 1+re.NeedM+f.N <= realize.MaxWord {
				w := realize.Format{Kind: realize.Fixed, M: re.NeedM, N: f.N}
				x.Fixes = append(x.Fixes, Fix{Title: fmt.Sprintf("Widen to %s (%d-bit word)", w, w.Word()), Edits: []Edit{{Path: c.res.Path, Span: rs.Format.Span, NewText: w.String()}}})
			}
			return nil
		}
		c.diags.add(c.res.Path, rs.Span, Error, CodeBadRealize, fmt.Sprintf("block %s cannot be realized as %s: %v", d.Name, st, err))
		return nil
	}
	out := &Realization{Stmt: rs, Realization: r}
	if sec, silenced := r.Silenced(); silenced {
		x := c.diags.add(c.res.Path, rs.Format.Span, Error, CodeRealizeRange,
			fmt.Sprintf("block %s as %s in %s: every numerator coefficient of section %d rounds to 0 (below half of 2^-%d): the realized block outputs nothing", d.Name, st, f, sec, f.N))
		x.Fixes = c.realizeFixes(d, bv, out, nil)
		return nil
	}
	c.blockRealizationChecks(d, bv, out)
	return out
}

// outside counts poles not strictly inside the unit circle.
func outside(ps []complex128, tol float64) int {
	n := 0
	for _, p := range ps {
		if cmplx.Abs(p) >= 1-tol {
			n++
		}
	}
	return n
}

func (c *checker) blockRealizationChecks(d *Decl, bv *blockValue, r *Realization) {
	tol := c.env.Options.Tolerance
	if outside(r.Poles, tol) > outside(r.IdealPoles, tol) {
		worst := worstPole(r.Poles)
		x := c.diags.add(c.res.Path, r.Stmt.Span, Error, CodeRealizeUnstable,
			fmt.Sprintf("block %s realized as %s has a pole at z = %s (radius %s): rounding moved it onto or outside the unit circle (the ideal block's poles are inside; pole shift %s); the controller on the target would not be the one analysed",
				d.Name, r.Label(), fmtComplex(worst), FormatRadius(cmplx.Abs(worst)), fmtNum(r.MaxPoleShift)))
		x.Fixes = c.realizeFixes(d, bv, r, nil)
	}
	if r.Headroom != nil {
		c.headroomWarning(d, r)
	}
}

// headroomWarning reports fixed-point signals that can overflow.
func (c *checker) headroomWarning(d *Decl, r *Realization) {
	h, tol := r.Headroom, c.env.Options.Tolerance
	if !h.Bounded {
		if outside(r.IdealPoles, tol) > 0 {
			c.diags.add(c.res.Path, r.Stmt.Span, Warning, CodeRealizeHeadroom,
				fmt.Sprintf("block %s has a pole on or outside the unit circle (an integrator?): in %s a sustained input drives its states to saturation; no input bound keeps it from overflowing. Limit the integrator (anti-windup) in the firmware", d.Name, r.Format))
		}
		return
	}
	var short []string
	for _, n := range h.Nodes {
		if n.Short() {
			short = append(short, fmt.Sprintf("%s needs %d integer bits, has %d", n.Name, n.IntBits, n.Have))
		}
	}
	safe := fmt.Sprintf("Inputs up to |x| = %s are safe (l1-norm bound); beyond, the output saturates", fmtNum(h.MaxInput))
	if h.Truncated {
		safe = "The impulse responses were cut before they decayed, so these are lower bounds and no safe input size is claimed"
	}
	if len(short) > 0 {
		c.diags.add(c.res.Path, r.Stmt.Span, Warning, CodeRealizeHeadroom,
			fmt.Sprintf("block %s in %s can overflow for a full-scale input (|x| up to %s): %s. %s",
				d.Name, r.Format, fmtNum(r.Format.MaxValue()), strings.Join(short, "; "), safe))
	}
}

func worstPole(ps []complex128) complex128 {
	var w complex128
	for _, p := range ps {
		if cmplx.Abs(p) > cmplx.Abs(w) {
			w = p
		}
	}
	return w
}

// swapRealized returns the elements with every realized block's transfer
// function replaced by its rounded one, and the names swapped.
func swapRealized(es []element, override *Block, with *realize.Realization) ([]element, []string, []*realize.Realization) {
	out := append([]element(nil), es...)
	var names []string
	var used []*realize.Realization
	for i, e := range out {
		r := with
		switch {
		case e.block == nil:
			continue
		case e.block == override:
		case e.block.Realization != nil && e.block.Realization.Realization != nil:
			r = e.block.Realization.Realization
		default:
			continue
		}
		out[i].tf = r.TF
		out[i].fac, out[i].facErr = r.Factored(), nil
		names = append(names, e.name)
		used = append(used, r)
	}
	return out, names, used
}

// analyseRealized runs the loop analysis on the realized elements with its
// diagnostics set aside (they speak of the ideal loop's lines).
func (c *checker) analyseRealized(l *Loop, sh loopShape, fwd, fb []element, override *Block, with *realize.Realization) (*Loop, *RealizedLoop) {
	f2, n1, r1 := swapRealized(fwd, override, with)
	b2, n2, r2 := swapRealized(fb, override, with)
	names := append(n1, n2...)
	if len(names) == 0 {
		return nil, nil
	}
	lc := *c
	lc.diags, lc.pending = &diagList{}, nil
	rl := &Loop{Name: l.Name, Stmt: l.Stmt, Forward: l.Forward, Feedback: l.Feedback, Positive: l.Positive, Gains: l.Gains}
	lc.analyse(rl, sh, f2, b2)
	trimStep(rl, c.env.Options.NoStepSamples)
	return rl, &RealizedLoop{Blocks: names, Elements: append(r1, r2...), Figures: rl}
}

// realizedLoop analyses the loop with its realized blocks in place and
// reports where rounding breaks stability or a requirement the ideal loop
// meets.
func (c *checker) realizedLoop(l *Loop, sh loopShape, fwd, fb []element) {
	if !l.OK || c.env.Options.Quick {
		return
	}
	rl, info := c.analyseRealized(l, sh, fwd, fb, nil, nil)
	if rl == nil {
		return
	}
	l.Realized = info
	if !rl.OK {
		c.diags.add(c.res.Path, l.Stmt.Name.Span, Warning, CodeNumeric, fmt.Sprintf("loop %s with %s realized could not be analysed; no realized verdict", l.Name, strings.Join(info.Blocks, ", ")))
		return
	}
	msg, sev := realizedMiss(l, rl)
	if msg == "" {
		return
	}
	for _, e := range append(append([]element{}, fwd...), fb...) {
		r := realizationOf(e)
		if r == nil || e.decl.Path != c.res.Path {
			continue
		}
		x := c.diags.add(c.res.Path, r.Stmt.Span, sev, CodeRealizeLoop,
			fmt.Sprintf("with %s realized as %s, loop %s %s; the ideal loop does not. Choose a wider format or another structure", e.name, r.Label(), l.Name, msg))
		x.Related = append(x.Related, Related{Path: c.res.Path, Span: l.Stmt.Name.Span, Message: "loop " + l.Name})
		d := e.decl
		bv := &blockValue{tf: e.tf, ok: true}
		x.Fixes = c.realizeFixes(d, bv, r, func(cand *realize.Realization) bool {
			cl, _ := c.analyseRealized(l, sh, fwd, fb, e.block, cand)
			if cl == nil || !cl.OK {
				return false
			}
			miss, _ := realizedMiss(l, cl)
			return miss == ""
		})
	}
}

func realizationOf(e element) *Realization {
	if e.block == nil || e.block.Realization == nil || e.block.Realization.Realization == nil {
		return nil
	}
	return e.block.Realization
}

// realizedMiss says what the realized loop loses against the ideal one:
// stability, or a requirement the ideal loop meets; "" when nothing. Losing
// stability or a written requirement is an error, a default one a warning.
func realizedMiss(ideal, rl *Loop) (string, Severity) {
	if ideal.Stable && rl.Undecided {
		return "cannot be shown stable: a closed-loop pole's error bound straddles the unit circle; no realized verdict is given", Warning
	}
	if ideal.Stable && !rl.Stable {
		return fmt.Sprintf("is UNSTABLE (largest closed-loop pole radius %s, ideal %s)", FormatRadius(rl.MaxRadius), FormatRadius(ideal.MaxRadius)), Error
	}
	for i, q := range rl.Requirements {
		if i < len(ideal.Requirements) && ideal.Requirements[i].Met && !q.Met {
			what, sev := "", Error
			if q.Item == nil {
				what, sev = "the default ", Warning
			}
			return fmt.Sprintf("misses %s%s %s %s (got %s, ideal %s)", what, q.Metric, q.Op, strings.TrimSpace(fmtNum(q.Want)+" "+q.Unit), gotText(q), gotText(ideal.Requirements[i])), sev
		}
	}
	return "", 0
}

// realizeFixes offers, per structure (the written one first), the
// narrowest format no narrower than the written one that keeps the block's
// poles inside the circle and, when keeps is given, the loop's figures;
// each titled with the pole shift it gives.
func (c *checker) realizeFixes(d *Decl, bv *blockValue, cur *Realization, keeps func(*realize.Realization) bool) []Fix {
	tol := c.env.Options.Tolerance
	var fixes []Fix
	order := []realize.Structure{cur.Structure}
	for s := range realize.Structures {
		if realize.Structure(s) != cur.Structure {
			order = append(order, realize.Structure(s))
		}
	}
	for _, st := range order {
		for _, f := range candidateFormats(cur.Format) {
			r := tryFormat(bv, st, f, c.res.SampleT, tol)
			if r == nil || outside(r.Poles, tol) > outside(r.IdealPoles, tol) {
				continue
			}
			if _, silenced := r.Silenced(); silenced || (keeps != nil && !keeps(r)) {
				continue
			}
			label := st.String() + " in " + r.Format.String()
			fixes = append(fixes, Fix{
				Title: fmt.Sprintf("Realize %s as %s (pole shift %s)", d.Name, label, fmtNum(r.MaxPoleShift)),
				Edits: []Edit{{Path: c.res.Path, Span: syntax.Span{From: cur.Stmt.Structure.From, To: cur.Stmt.Format.To}, NewText: st.String() + " in " + r.Format.String()}},
			})
			break
		}
	}
	return fixes
}

// candidateFormats lists formats from the written word upward: for fixed
// point one entry per word size (its integer bits are found by tryFormat),
// for floating point float32 then float64.
func candidateFormats(f realize.Format) []realize.Format {
	if f.Kind != realize.Fixed {
		out := []realize.Format{{Kind: realize.Float64}}
		if f.Kind == realize.Float32 {
			out = append([]realize.Format{{Kind: realize.Float32}}, out...)
		}
		return out
	}
	var out []realize.Format
	for w := f.Word(); w <= realize.MaxWord; w++ {
		out = append(out, realize.Format{Kind: realize.Fixed, N: w - 1})
	}
	return out
}

// tryFormat realizes with the fewest integer bits that hold every
// coefficient in the candidate's word; nil when none does.
func tryFormat(bv *blockValue, st realize.Structure, f realize.Format, T, tol float64) *realize.Realization {
	w := f.Word()
	for {
		r, err := realize.Try(bv.tf, st, f, T, tol)
		if err == nil {
			return r
		}
		var re *realize.RangeError
		if f.Kind != realize.Fixed || !errors.As(err, &re) || re.NeedM <= f.M || re.NeedM >= w-1 {
			return nil
		}
		f = realize.Format{Kind: realize.Fixed, M: re.NeedM, N: w - 1 - re.NeedM}
	}
}

// realizeKey is what a loop's memo key needs of an element's realization:
// its realize line as written ("" when the element is not realized).
func (c *checker) realizeKey(e element) string {
	r := realizationOf(e)
	if r == nil {
		return ""
	}
	f := c.res.Files[e.decl.Path]
	if f == nil {
		return ""
	}
	return stmtText(f.Src, r.Stmt)
}

// realizeStmt is the realize line of d's block in this check (nil when it
// has none that was realized).
func realizeStmt(d *Decl) syntax.Node {
	if d.Block == nil || d.Block.Realization == nil {
		return nil
	}
	return d.Block.Realization.Stmt
}

// gotText is a requirement's figure with six significant digits, so that a
// value just past the limit does not print as the limit itself.
func gotText(q Requirement) string {
	if q.Got == nil || math.IsInf(*q.Got, 0) {
		return q.GotText
	}
	return strings.TrimSpace(fmtNum(*q.Got) + " " + q.Unit)
}
