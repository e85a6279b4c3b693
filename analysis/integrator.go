package analysis

import (
	"fmt"
	"strings"

	"ringside/syntax"
)

// quietIntegrators applies the policy for block poles on the unit circle
// (integrators, oscillators): a PI controller's integrator inside a loop
// that the analysis shows stable is intended, so its block-pole-on-circle
// finding becomes one info line naming the loops that stabilise it. It
// stays a warning where it matters: a block used by no loop of the file,
// or by a loop that is not shown stable (unstable, on the circle,
// undecided, not over its varying gains' range, or not analysed). In the quick analysis (no loop verdicts yet) a block used by
// some loop gets the info, so the editor does not flash a warning that the
// full analysis withdraws; the loop's own verdict reports any instability.
func (c *checker) quietIntegrators() {
	for _, b := range c.res.Blocks {
		x := c.findDiag(b.Path, exprSpan(b.Stmt.Expr), CodeBlockOnCircle)
		if x == nil {
			continue
		}
		var stable, other []string
		for _, l := range c.res.Loops {
			if !c.loopContains(l, b.Name) {
				continue
			}
			if l.ShownStable() || c.env.Options.Quick {
				stable = append(stable, l.Name)
			} else {
				other = append(other, l.Name)
			}
		}
		switch {
		case len(stable)+len(other) == 0:
			x.Message += "; no loop of this file uses it"
		case len(other) > 0:
			x.Message += fmt.Sprintf("; %s not stabilise it", loopsVerb(other, "does", "do"))
		case c.env.Options.Quick:
			x.Severity = Info
			x.Message = fmt.Sprintf("block %s has a pole on the unit circle at z = %s (an integrator or oscillator), used in %s; the full analysis checks that it is stabilised",
				b.Name, fmtComplex(b.Poles[0].Z), loopsVerb(stable, "", ""))
		default:
			x.Severity = Info
			x.Message = fmt.Sprintf("block %s has a pole on the unit circle at z = %s (an integrator or oscillator); %s it",
				b.Name, fmtComplex(b.Poles[0].Z), loopsVerb(stable, "stabilises", "stabilise"))
		}
	}
}

// loopsVerb writes "loop a does" or "loops a, b do" (no verb when both
// forms are empty).
func loopsVerb(names []string, one, many string) string {
	if len(names) == 1 {
		return strings.TrimSpace("loop " + names[0] + " " + one)
	}
	return strings.TrimSpace("loops " + strings.Join(names, ", ") + " " + many)
}

// findDiag returns the diagnostic of code at exactly this place, or nil.
func (c *checker) findDiag(path string, span syntax.Span, code string) *Diagnostic {
	for i := range c.diags.list {
		d := &c.diags.list[i]
		if d.Code == code && d.Path == path && d.Span == span {
			return d
		}
	}
	return nil
}

// loopContains reports whether block name is on a path of loop l, directly
// or inside a block that is.
func (c *checker) loopContains(l *Loop, name string) bool {
	seen := map[string]bool{}
	for _, n := range append(append([]string{}, l.Forward...), l.Feedback...) {
		if c.blockReaches(n, name, seen) {
			return true
		}
	}
	return false
}

// blockReaches reports whether block from is block name or refers to it
// in its expression (transitively).
func (c *checker) blockReaches(from, name string, seen map[string]bool) bool {
	if from == name {
		return true
	}
	if seen[from] {
		return false
	}
	seen[from] = true
	d := c.res.Scope[from]
	if d == nil || d.Block == nil || d.Block.Stmt == nil || d.Block.Stmt.Expr == nil {
		return false
	}
	found := false
	syntax.Walk(d.Block.Stmt.Expr, func(n syntax.Node) bool {
		if id, ok := n.(*syntax.NameRef); ok && !found && c.blockReaches(id.Name, name, seen) {
			found = true
		}
		return !found
	})
	return found
}
