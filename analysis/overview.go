package analysis

import "math"

// Status is a loop's verdict in one or two words, for tables: "stable",
// "UNSTABLE", "NOT STABLE" (a pole on the circle), "UNDECIDED", "not
// analysed", or, for a loop stable at the nominal values of its varying
// gains but not over their whole range, "UNSTABLE over range" (or
// "UNDECIDED over range"), or for one stable only with its ideal blocks,
// not with the realized ones, "UNSTABLE realized".
func (l *Loop) Status() string {
	short, _ := l.nominalVerdict()
	switch {
	case short != "stable":
		return short
	case l.Robust != nil && l.Robust.Stable == nil:
		return "UNDECIDED over range"
	case l.Robust != nil && !*l.Robust.Stable:
		return "UNSTABLE over range"
	case l.Realized != nil && l.Realized.Figures != nil && l.Realized.Figures.OK && !l.Realized.Figures.Stable:
		return "UNSTABLE realized"
	}
	return "stable"
}

// ShownStable reports whether the analysis shows the loop stable: every
// closed-loop pole inside the circle, decided, over the whole range of
// its varying gains, and with its realized blocks in place.
func (l *Loop) ShownStable() bool {
	return l.Status() == "stable"
}

// Failing reports whether the loop has an error: not shown stable, not
// analysed, or a written requirement missed (a missed default rule of
// thumb is a warning and does not count).
func (l *Loop) Failing() bool {
	if !l.ShownStable() {
		return true
	}
	for _, q := range l.Requirements {
		if !q.Met && q.Item != nil {
			return true
		}
	}
	return false
}

// WorstMissed returns the missed requirement that matters most: a written
// one before a default, then the largest shortfall relative to the
// requirement (a figure that cannot be had counts as the largest); nil
// when every requirement is met.
func (l *Loop) WorstMissed() *Requirement {
	var worst *Requirement
	worstKey := [2]float64{}
	for i := range l.Requirements {
		q := &l.Requirements[i]
		if q.Met {
			continue
		}
		key := [2]float64{0, shortfall(q)}
		if q.Item != nil {
			key[0] = 1
		}
		if worst == nil || key[0] > worstKey[0] || key[0] == worstKey[0] && key[1] > worstKey[1] {
			worst, worstKey = q, key
		}
	}
	return worst
}

// shortfall is how far a requirement is missed, relative to it; a figure
// that cannot be had (step figures of an unstable loop) ranks last, since
// the verdict already says why.
func shortfall(q *Requirement) float64 {
	if q.Got == nil {
		return -1
	}
	if math.IsInf(*q.Got, 0) {
		return math.Inf(1)
	}
	d := *q.Got - q.Want
	if q.Op == ">=" {
		d = -d
	}
	return d / math.Max(math.Abs(q.Want), 1e-9)
}

// MissedText is a missed requirement in a few words, figure against
// requirement: "overshoot 20.8 % (≤ 15 %)", "gain_margin -0.834 dB
// (≥ 6 dB, default)".
func (q *Requirement) MissedText() string {
	got := "none"
	if q.Got != nil {
		got = fmtMetric(q.Metric, *q.Got)
	}
	op := "≥"
	if q.Op == "<=" {
		op = "≤"
	}
	s := q.Metric + " " + got + " (" + op + " " + fmtMetric(q.Metric, q.Want)
	if q.Item == nil {
		s += ", default"
	}
	return s + ")"
}
