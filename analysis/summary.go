package analysis

import (
	"fmt"
	"strings"

	"ringside/internal/par"
)

// Verdict is a loop's one-line verdict in plain words, e.g.
// "stable, GM 8.1 dB, PM 47°".
func (l *Loop) Verdict() string {
	if !l.OK {
		return l.VerdictWord()
	}
	var b strings.Builder
	b.WriteString(l.VerdictWord())
	m := l.Margins
	if m.GainMarginDB != nil {
		fmt.Fprintf(&b, ", GM %.3g dB", Shown(*m.GainMarginDB))
	} else {
		b.WriteString(", GM ∞")
	}
	if m.PhaseMarginDeg != nil {
		fmt.Fprintf(&b, ", PM %.3g°", Shown(*m.PhaseMarginDeg))
	} else {
		b.WriteString(", PM ∞")
	}
	if l.Robust != nil {
		b.WriteString("; " + l.Robust.Verdict())
	}
	return b.String()
}

// Summary is a loop's figures in one line: verdict, radius, margins with
// crossovers, sensitivity and step figures.
func (l *Loop) Summary() string {
	if !l.OK {
		return fmt.Sprintf("loop %s: %s", l.Name, l.Verdict())
	}
	parts := []string{l.VerdictWord(), "largest pole radius " + FormatRadius(l.MaxRadius)}
	m := l.Margins
	if m.GainMarginDB != nil {
		parts = append(parts, fmt.Sprintf("gain margin %s at %s", fmtMetric("gain_margin", *m.GainMarginDB), FormatHz(*m.PhaseCrossoverHz)))
	} else {
		parts = append(parts, "gain margin ∞ (no phase crossing)")
	}
	if m.PhaseMarginDeg != nil {
		parts = append(parts, fmt.Sprintf("phase margin %s at %s", fmtMetric("phase_margin", *m.PhaseMarginDeg), FormatHz(*m.GainCrossoverHz)))
	} else {
		parts = append(parts, "phase margin ∞ (no gain crossing)")
	}
	if m.DelayMarginS != nil {
		parts = append(parts, fmt.Sprintf("delay margin %s (%.3g samples)", fmtMetric("delay_margin", *m.DelayMarginS), Shown(*m.DelayMarginSamples)))
	}
	if m.PeakSensitivityDB != nil {
		parts = append(parts, "peak sensitivity "+fmtMetric("peak_sensitivity", *m.PeakSensitivityDB))
	}
	if l.Step != nil {
		st := "step overshoot " + fmtMetric("overshoot", l.Step.OvershootPct)
		if l.Step.Settled {
			st += ", settling " + fmtTime(l.Step.SettlingS)
		}
		parts = append(parts, st)
	}
	return fmt.Sprintf("loop %s: %s", l.Name, strings.Join(parts, "; "))
}

// LimitsText describes a gain's limits in one line.
func (g *Gain) LimitsText() string {
	lim := g.Limits
	if lim == nil {
		return fmt.Sprintf("gain %s = %s: used by no loop of this file", g.Name, fmtNum(g.Value))
	}
	method := "numeric search"
	if lim.Exact {
		method = "exact"
	}
	var s string
	switch {
	case lim.CurrentStable:
		s = fmt.Sprintf("gain %s = %s: loops %s stable for %s (%s)", g.Name, fmtNum(g.Value), strings.Join(lim.Loops, ", "), intervalText(g.Name, lim), method)
	case lim.Found:
		s = fmt.Sprintf("gain %s = %s is UNSTABLE for loops %s; the nearest stable range is %s (%s)", g.Name, fmtNum(g.Value), strings.Join(lim.Loops, ", "), intervalText(g.Name, lim), method)
	default:
		s = fmt.Sprintf("gain %s = %s: no value found that makes loops %s stable", g.Name, fmtNum(g.Value), strings.Join(lim.Loops, ", "))
	}
	switch {
	case g.Vary != nil: // uncertain: nobody sets it, so no safe value
		s += fmt.Sprintf("; varies %s to %s (see the loops' verdicts over the range)", fmtNum(g.Vary.Lo), fmtNum(g.Vary.Hi))
	case lim.SafeMax != nil:
		s += fmt.Sprintf("; keeps the required gain margin up to %s = %s", g.Name, fmtNum(roundDown(*lim.SafeMax)))
	case lim.SafeMaxNote != "":
		s += "; " + lim.SafeMaxNote
	}
	return s
}

// intervalText writes the stable interval as "lo < name < hi", leaving out
// an unbounded side.
func intervalText(name string, lim *GainLimits) string {
	switch {
	case lim.StableMin != nil && lim.StableMax != nil:
		return fmt.Sprintf("%s < %s < %s", fmtNum(*lim.StableMin), name, fmtNum(*lim.StableMax))
	case lim.StableMin != nil:
		return fmt.Sprintf("%s > %s", name, fmtNum(*lim.StableMin))
	case lim.StableMax != nil:
		return fmt.Sprintf("%s < %s", name, fmtNum(*lim.StableMax))
	}
	return "every value"
}

// summaries adds one info diagnostic per loop and per gain with its
// figures. The texts are worded side by side (each reads only its own
// result), then added in source order.
func (c *checker) summaries() {
	loops := make([]string, len(c.res.Loops))
	par.Each(len(c.res.Loops), func(i int) {
		if l := c.res.Loops[i]; l.OK {
			loops[i] = c.memo.text(loopTextsOf, c.memo.loopKeyOf(l), l.Summary)
		}
	})
	for i, l := range c.res.Loops {
		if l.OK {
			c.diags.add(c.res.Path, l.Stmt.Name.Span, Info, CodeLoopVerdict, loops[i])
		}
	}
	gains := make([]string, len(c.res.Gains))
	par.Each(len(c.res.Gains), func(i int) {
		if g := c.res.Gains[i]; g.Limits != nil && g.Stmt.Name != nil {
			key := c.memo.gainKeyOf(g)
			if g.Vary != nil { // not part of the limits' key
				key = ""
			}
			gains[i] = c.memo.text(gainTextsOf, key, g.LimitsText)
		}
	})
	for i, g := range c.res.Gains {
		if g.Limits != nil && g.Stmt.Name != nil {
			c.diags.add(c.res.Path, g.Stmt.Name.Span, Info, CodeGainLimits, gains[i])
		}
	}
}

// SafeValue is the value offered for the gain: SafeMax rounded down to
// three significant figures (the side that keeps the margin), as the
// quick-fix writes it.
func (lim *GainLimits) SafeValue() (float64, bool) {
	if lim == nil || lim.SafeMax == nil {
		return 0, false
	}
	return roundDown(*lim.SafeMax), true
}
