package analysis

import (
	"fmt"
	"strings"

	"ringside/internal/par"
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
	onCircle := map[diagPlace]*Diagnostic{}
	for i := range c.diags.list {
		d := &c.diags.list[i]
		if k := (diagPlace{d.Path, d.Span}); d.Code == CodeBlockOnCircle && onCircle[k] == nil {
			onCircle[k] = d
		}
	}
	type note struct {
		b *Block
		x *Diagnostic
	}
	var notes []note
	for _, b := range c.res.Blocks {
		if x := onCircle[diagPlace{b.Path, exprSpan(b.Stmt.Expr)}]; x != nil {
			notes = append(notes, note{b, x})
		}
	}
	if len(notes) == 0 {
		return
	}
	users := c.blockUsers()
	// Each note rewrites its own diagnostic (blocks stand in different
	// places), so they are worded side by side.
	par.Each(len(notes), func(i int) { c.integratorNote(notes[i].b, notes[i].x, users[notes[i].b.Name]) })
}

// integratorNote words block b's on-circle finding x by the loops that use
// the block.
func (c *checker) integratorNote(b *Block, x *Diagnostic, users []*Loop) {
	var stable, other []string
	for _, l := range users {
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
		x.Message += fmt.Sprintf("; %s not shown stable (see %s), so nothing here shows it stabilised", loopsVerb(other, "is", "are"), pronoun(other))
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

// loopsVerb writes "loop a does" or "loops a, b do" (no verb when both
// forms are empty).
func loopsVerb(names []string, one, many string) string {
	if len(names) == 1 {
		return strings.TrimSpace("loop " + names[0] + " " + one)
	}
	return strings.TrimSpace("loops " + strings.Join(names, ", ") + " " + many)
}

// diagPlace is where a diagnostic stands.
type diagPlace struct {
	path string
	span syntax.Span
}

// blockUsers maps each block name to the loops that use it, directly or
// inside a block that is on a path, in loop order. What each block
// reaches is found once (reachedFrom), from the names each block's
// expression refers to (refs, found by the block stage), so a file of many
// loops and integrators costs loops × blocks reached, not loops × blocks.
func (c *checker) blockUsers() map[string][]*Loop {
	size := len(c.refs)
	users := make(map[string][]*Loop, size)
	reached := make(map[*Decl][]*Decl, size)
	seen := map[*Decl]bool{}            // scratch for reachedFrom
	last := make(map[*Decl]*Loop, size) // the last loop added to each block's users
	for _, l := range c.res.Loops {
		add := func(m *Decl) {
			if last[m] != l {
				last[m] = l
				users[m.Name] = append(users[m.Name], l)
			}
		}
		for _, path := range [2][]string{l.Forward, l.Feedback} {
			for _, n := range path {
				d := c.res.Scope[n]
				switch {
				case d == nil || d.Block == nil:
				case len(c.refs[d]) == 0: // names no block: reaches itself only
					add(d)
				default:
					for _, m := range c.reachedFrom(d, reached, seen) {
						add(m)
					}
				}
			}
		}
	}
	return users
}

// reachedFrom lists block from and every block its expression refers to
// (transitively), computed once per block into memo; seen is scratch.
func (c *checker) reachedFrom(from *Decl, memo map[*Decl][]*Decl, seen map[*Decl]bool) []*Decl {
	if r, ok := memo[from]; ok {
		return r
	}
	clear(seen)
	c.reach(from, seen)
	r := make([]*Decl, 0, len(seen))
	for d := range seen {
		r = append(r, d)
	}
	memo[from] = r
	return r
}

// reach adds block from and every block it refers to (transitively) to
// seen.
func (c *checker) reach(from *Decl, seen map[*Decl]bool) {
	if seen[from] {
		return
	}
	seen[from] = true
	for _, ref := range c.refs[from] {
		c.reach(ref, seen)
	}
}

func pronoun(names []string) string {
	if len(names) == 1 {
		return "its verdict"
	}
	return "their verdicts"
}
