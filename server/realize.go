package server

import (
	"fmt"
	"math/cmplx"
	"strings"

	"ringside/analysis"
	"ringside/analysis/realize"
	"ringside/syntax"
)

// realizeAt returns the realize line of the checked file that contains pos.
func realizeAt(res *analysis.Result, pos syntax.Pos) *syntax.RealizeStmt {
	if res.File == nil {
		return nil
	}
	for _, st := range res.File.Stmts {
		if rs, ok := st.(*syntax.RealizeStmt); ok && rs.Pos() <= pos && pos <= rs.End() {
			return rs
		}
	}
	return nil
}

// realizeHover: the rounded coefficients, the pole shift and the headroom
// of the realized block (analysis.Realization; nothing is recomputed).
func realizeHover(res *analysis.Result, rs *syntax.RealizeStmt) string {
	d := res.Scope[rs.Block.Name]
	if d == nil || d.Block == nil || d.Block.Realization == nil || d.Block.Realization.Realization == nil {
		return fmt.Sprintf("**realize %s**: not realized (see the diagnostics on this line)", rs.Block.Name)
	}
	r := d.Block.Realization
	var b strings.Builder
	fmt.Fprintf(&b, "**realize %s** as %s\n\n", d.Name, r.Label())
	if r.Delta() != 0 {
		fmt.Fprintf(&b, "delta operator δ = (z − 1)/Δ, Δ = 2^%d\n\n", r.DeltaExp)
	}
	b.WriteString("| section | b (rounded) | a (rounded) |\n|---|---|---|\n")
	for i, s := range r.Sections {
		fmt.Fprintf(&b, "| %d | %s | %s |\n", i+1, nums(s.B), nums(s.A))
	}
	fmt.Fprintf(&b, "\nmax pole shift %s; rounded poles ", analysis.FormatNumber(r.MaxPoleShift))
	var ps []string
	for _, p := range r.Poles {
		if imag(p) >= 0 {
			ps = append(ps, fmt.Sprintf("%s (r %s)", analysis.FormatComplex(p), analysis.FormatRadius(cmplx.Abs(p))))
		}
	}
	b.WriteString(strings.Join(ps, ", "))
	if r.Stable {
		b.WriteString(": all inside the unit circle\n")
	} else {
		b.WriteString(": **not all inside the unit circle**\n")
	}
	if r.Headroom != nil {
		b.WriteString(headroomText(r.Headroom))
	}
	return b.String()
}

func nums(v []float64) string {
	out := make([]string, len(v))
	for i, x := range v {
		out[i] = analysis.FormatNumber(x)
	}
	return strings.Join(out, ", ")
}

// realizedLoopText is the loop hover's part on the loop as it runs with its
// realized blocks (empty when none is realized).
func realizedLoopText(l *analysis.Loop) string {
	rl := l.Realized
	if rl == nil {
		return ""
	}
	var names []string
	for i, n := range rl.Blocks {
		names = append(names, fmt.Sprintf("%s as %s in %s", n, rl.Elements[i].Structure, rl.Elements[i].Format))
	}
	f := rl.Figures
	head := "\n\n**realized** (" + strings.Join(names, ", ") + "): "
	if !f.OK {
		return head + "not analysed\n"
	}
	verdict := "stable"
	if !f.Stable {
		verdict = "**UNSTABLE**"
	}
	return head + fmt.Sprintf("%s, largest pole radius %s, gain margin %s, phase margin %s\n",
		verdict, analysis.FormatRadius(f.MaxRadius), marginText(f.Margins.GainMarginDB, " dB"), marginText(f.Margins.PhaseMarginDeg, "°"))
}

func marginText(p *float64, unit string) string {
	if p == nil {
		return "unlimited (no crossing)"
	}
	return analysis.FormatNumber(*p) + unit
}

// realizeKinds classifies a realize line for semantic tokens: the block as
// a block, as and in as keywords, the structure as an enum member and the
// format (q1.14 is two lexer tokens) as one type token.
func realizeKinds(n *syntax.RealizeStmt, res *analysis.Result, kinds map[syntax.Pos]int, units map[syntax.Pos]syntax.Span) {
	if n.Block == nil || n.Structure == nil || n.Format == nil {
		return
	}
	if k, ok := declKind(res.Scope[n.Block.Name]); ok {
		kinds[n.Block.From] = k
	}
	kinds[n.AsKw.From], kinds[n.InKw.From] = tokKeyword, tokKeyword
	kinds[n.Structure.From] = tokEnumMember
	units[n.Format.From] = n.Format.Span
}

// headroomText is the hover's headroom table and safe input size.
func headroomText(h *realize.Headroom) string {
	if !h.Bounded {
		return "\nheadroom: a pole on or outside the circle, so no l1 norm is finite: a sustained input overflows\n"
	}
	var b strings.Builder
	b.WriteString("\n| signal | l1 norm | integer bits needed | has |\n|---|---|---|---|\n")
	for _, n := range h.Nodes {
		fmt.Fprintf(&b, "| %s | %s | %d | %d |\n", n.Name, analysis.FormatNumber(n.L1), n.IntBits, n.Have)
	}
	if h.Truncated {
		b.WriteString("\nthe impulse responses were cut before they decayed: the norms are lower bounds and no safe input size is claimed\n")
	} else {
		fmt.Fprintf(&b, "\nno overflow for inputs up to |x| = %s (l1-norm bound, output rounding included)\n", analysis.FormatNumber(h.MaxInput))
	}
	return b.String()
}

// realizedBlockText is the block hover's line on its realization: the pole
// shift, whether the rounded poles stay inside, and the safe input size.
func realizedBlockText(blk *analysis.Block) string {
	r := blk.Realization
	if r == nil || r.Realization == nil {
		return ""
	}
	s := fmt.Sprintf("\n\n**realized** as %s: max pole shift %s, rounded poles ", r.Label(), analysis.FormatNumber(r.MaxPoleShift))
	if r.Stable {
		s += "inside the unit circle"
	} else {
		s += "**not all inside the unit circle**"
	}
	if h := r.Headroom; h != nil && h.Bounded && !h.Truncated {
		s += fmt.Sprintf("; no overflow for inputs up to |x| = %s", analysis.FormatNumber(h.MaxInput))
	}
	return s + "\n"
}
