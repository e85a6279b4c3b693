package analysis

import (
	"fmt"

	"ringside/analysis/pole"
)

// The words of a loop's verdict live here, once, and every view (summary,
// code lens, JSON, loop diagnostics, hover, HTML page, plot titles) reads
// them: the views cannot disagree on what a loop is, or on how many poles
// lie outside the circle.

// nominalVerdict is the loop's verdict at its nominal values with ideal
// blocks, in a word or two for tables (short) and with its reason in
// brackets (long) — capitals where the loop must not run.
func (l *Loop) nominalVerdict() (short, long string) {
	switch {
	case l.NotReached:
		return "not analysed", "not analysed (out of time: no verdict)"
	case !l.OK:
		return "not analysed", "not analysed (see the errors)"
	case l.Stable:
		return "stable", "stable"
	case l.Marginal:
		return "NOT STABLE", "NOT STABLE (pole on the unit circle)"
	case l.Undecided:
		return "UNDECIDED", "UNDECIDED (a pole's error bound straddles the unit circle)"
	}
	return "UNSTABLE", "UNSTABLE"
}

// VerdictWord is the verdict in a few words: "stable", "NOT STABLE (pole
// on the unit circle)", "UNDECIDED (…)", "UNSTABLE" or "not analysed (…)".
func (l *Loop) VerdictWord() string {
	_, long := l.nominalVerdict()
	return long
}

// VerdictReason says why, in one plain clause with the figure behind it.
func (l *Loop) VerdictReason() string {
	switch {
	case l.NotReached:
		return "the analysis ran out of its time budget before this loop, so it has no verdict"
	case !l.OK:
		return "the loop has errors (listed with the diagnostics), so it has no verdict"
	case l.Stable:
		return fmt.Sprintf("every closed-loop pole lies inside the unit circle (largest radius %s)", FormatRadius(l.MaxRadius))
	case l.Marginal:
		return fmt.Sprintf("a closed-loop pole lies on the unit circle (radius %s), so a bounded input can make the output oscillate or drift without end", FormatRadius(l.MaxRadius))
	case l.Undecided:
		return fmt.Sprintf("the error bound of a closed-loop pole near radius %s straddles the unit circle, so the computed poles cannot decide stability; treat the loop as not shown stable", FormatRadius(l.MaxRadius))
	}
	return fmt.Sprintf("%d closed-loop pole(s) lie outside the unit circle (largest radius %s), so the output grows without bound; do not run this loop", l.PolesOutside(), FormatRadius(l.MaxRadius))
}

// PolesOutside counts the closed-loop poles outside the unit circle by the
// tolerance the verdict used (a pole within it is on the circle).
func (l *Loop) PolesOutside() int {
	n := 0
	for _, p := range l.Poles {
		if p.Shape == pole.Growing {
			n++
		}
	}
	return n
}
