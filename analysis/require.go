package analysis

import (
	"fmt"
	"math"
	"strings"

	"ringside/syntax"
)

// metricSpec says how a require metric is measured and in which units.
type metricSpec struct {
	units []quantity // accepted quantities
	unit  string     // the unit figures are shown in
	what  string     // plain words
}

var metrics = map[string]metricSpec{
	"gain_margin":      {[]quantity{qDB, qPlain}, "dB", "gain margin"},
	"phase_margin":     {[]quantity{qDeg, qPlain}, "deg", "phase margin"},
	"delay_margin":     {[]quantity{qTime, qSamples}, "s", "delay margin"},
	"radius":           {[]quantity{qPlain}, "", "largest closed-loop pole radius"},
	"damping":          {[]quantity{qPlain}, "", "smallest closed-loop damping ratio"},
	"peak_sensitivity": {[]quantity{qDB, qPlain}, "dB", "peak sensitivity"},
	"overshoot":        {[]quantity{qPercent, qPlain}, "%", "step overshoot"},
	"settling":         {[]quantity{qTime, qSamples}, "s", "2 % settling time"},
	"disk_margin":      {[]quantity{qPlain}, "", "disk margin alpha"},
}

// MetricNames lists the require metrics of the format, for completion.
func MetricNames() []string {
	return []string{"gain_margin", "phase_margin", "delay_margin", "radius", "damping", "peak_sensitivity", "overshoot", "settling", "disk_margin"}
}

// checkMetrics reports unknown metrics and units that do not fit.
func (c *checker) checkMetrics(reqs []*syntax.RequireItem) {
	for _, r := range reqs {
		if r.Metric == nil || r.Value == nil {
			continue
		}
		spec, ok := metrics[r.Metric.Name]
		if !ok {
			best := ""
			for _, m := range MetricNames() {
				if editDistance(m, r.Metric.Name) <= 3 {
					best = m
				}
			}
			msg := fmt.Sprintf("unknown require metric %q; the metrics are %s", r.Metric.Name, strings.Join(MetricNames(), ", "))
			if best != "" {
				msg += "; did you mean " + best + "?"
			}
			x := c.diags.add(c.res.Path, r.Metric.Span, Error, CodeUnknownMetric, msg)
			if best != "" {
				x.Fixes = append(x.Fixes, Fix{Title: "Change to " + best, Edits: []Edit{{Path: c.res.Path, Span: r.Metric.Span, NewText: best}}})
			}
			continue
		}
		if _, ok := requireValue(r, spec); !ok {
			span := r.Value.UnitSpan
			if r.Value.Unit == "" {
				span = r.Value.Span
			}
			c.diags.add(c.res.Path, span, Error, CodeBadUnit, fmt.Sprintf("%s cannot be given in %q; write it in %s", r.Metric.Name, unitOrPlain(r.Value.Unit), unitsText(spec)))
		}
	}
}

func unitOrPlain(u string) string {
	if u == "" {
		return "a plain number"
	}
	return u
}

func unitsText(spec metricSpec) string {
	switch spec.units[0] {
	case qDB:
		if len(spec.units) > 1 && spec.unit == "dB" && spec.what == "peak sensitivity" {
			return "dB or as a plain ratio"
		}
		return "dB"
	case qDeg:
		return "deg"
	case qTime:
		return "a time (s, ms, us) or samples"
	case qPercent:
		return "%"
	}
	return "a plain number"
}

// requireValue converts a require value to the metric's base unit
// (dB, deg, seconds, ratio, %). Delay and settling in samples need the
// period, converted by the caller; here they are marked negative-free by
// returning the raw value with quantity qSamples handled in requirements.
func requireValue(r *syntax.RequireItem, spec metricSpec) (float64, bool) {
	q, f, ok := unitKind(r.Value.UnitCanon())
	if !ok {
		return 0, false
	}
	for _, u := range spec.units {
		if u == q {
			v := r.Value.Value * f
			if r.Metric.Name == "peak_sensitivity" && q == qPlain {
				if v <= 0 {
					return 0, false
				}
				v = 20 * math.Log10(v)
			}
			return v, true
		}
	}
	return 0, false
}

// requirements checks written require lines, or the defaults when there
// are none.
func (c *checker) requirements(l *Loop, reqs []*syntax.RequireItem) {
	if len(reqs) == 0 {
		o := c.env.Options
		l.Requirements = append(l.Requirements,
			c.evalReq(l, nil, "gain_margin", ">=", o.GainMarginDB),
			c.evalReq(l, nil, "phase_margin", ">=", o.PhaseMarginDeg))
	}
	for _, r := range reqs {
		if r.Metric == nil || r.Value == nil {
			continue
		}
		spec, ok := metrics[r.Metric.Name]
		if !ok {
			continue
		}
		v, ok := requireValue(r, spec)
		if !ok {
			continue
		}
		if q, _, _ := unitKind(r.Value.UnitCanon()); q == qSamples {
			v *= c.res.SampleT
		}
		if math.IsInf(v, 0) || math.IsNaN(v) {
			c.diags.add(c.res.Path, r.Value.Span, Error, CodeBadUnit, fmt.Sprintf("require %s %s %s is too large to compare with anything (not a finite number once converted); write a value a loop can meet", r.Metric.Name, r.Op, r.Value))
			continue
		}
		l.Requirements = append(l.Requirements, c.evalReq(l, r, r.Metric.Name, r.Op, v))
	}
	for _, q := range l.Requirements {
		if !q.Met && !l.Undecided { // an undecided loop has its own error
			c.missed(l, q)
		}
	}
}

// metricValue is the loop's figure for a metric; inf true means the figure
// is unbounded (no crossing: nothing limits it), nil-valued means it cannot
// be had (unstable loop for step figures).
func metricValue(l *Loop, metric string) (v float64, have bool) {
	m := l.Margins
	switch metric {
	case "gain_margin":
		if m.GainMarginDB == nil {
			return math.Inf(1), true
		}
		return *m.GainMarginDB, true
	case "phase_margin":
		if m.PhaseMarginDeg == nil {
			return math.Inf(1), true
		}
		return *m.PhaseMarginDeg, true
	case "delay_margin":
		if m.DelayMarginS == nil {
			return math.Inf(1), true
		}
		return *m.DelayMarginS, true
	case "radius":
		return l.MaxRadius, true
	case "damping":
		return l.MinDamping, true
	case "peak_sensitivity":
		if m.PeakSensitivityDB == nil {
			return math.Inf(1), true
		}
		return *m.PeakSensitivityDB, true
	case "overshoot":
		if l.Step == nil {
			return 0, false
		}
		return l.Step.OvershootPct, true
	case "settling":
		if l.Step == nil || !l.Step.Settled {
			return 0, false
		}
		return l.Step.SettlingS, true
	case "disk_margin":
		if l.Disk == nil {
			return 0, false
		}
		return l.Disk.Alpha, true
	}
	return 0, false
}

func (c *checker) evalReq(l *Loop, item *syntax.RequireItem, metric, op string, want float64) Requirement {
	spec := metrics[metric]
	q := Requirement{Item: item, Metric: metric, Op: op, Want: want, Unit: spec.unit}
	v, have := metricValue(l, metric)
	if !have {
		q.GotText = "not available (loop unstable or not settled)"
		return q
	}
	q.Got = &v
	q.GotText = fmtMetric(metric, v)
	// Margins and step figures of an unstable loop describe nothing real.
	if !l.Stable && metric != "radius" && metric != "damping" {
		if l.Undecided {
			q.GotText += " (stability undecided)"
		} else {
			q.GotText += " (loop not stable)"
		}
		return q
	}
	if op == ">=" {
		q.Met = v >= want
	} else {
		q.Met = v <= want
	}
	return q
}

// missed reports a requirement that is not met: an error when written, a
// warning for a default rule of thumb.
func (c *checker) missed(l *Loop, q Requirement) {
	spec := metrics[q.Metric]
	sev := Error
	span := l.Stmt.Name.Span
	src := "required"
	if q.Item == nil {
		sev, src = Warning, "default rule of thumb"
	} else {
		span = q.Item.Span
	}
	msg := fmt.Sprintf("loop %s: %s is %s, %s %s %s", l.Name, spec.what, q.GotText, src, q.Op, fmtMetric(q.Metric, q.Want))
	switch q.Metric {
	case "gain_margin":
		msg += "; the loop is that close to instability if a gain drifts up"
	case "phase_margin", "delay_margin":
		msg += "; extra delay or lag (computation, filtering) can push the loop into oscillation"
	case "radius", "damping":
		msg += "; the slowest or least damped mode rings or lingers"
	case "peak_sensitivity":
		msg += "; disturbances near that frequency are amplified"
	case "disk_margin":
		msg += "; a small gain and phase change together (well inside the gain and phase margins taken one at a time) can destabilise the loop"
	}
	c.diags.add(c.res.Path, span, sev, metricCode[q.Metric], msg)
	c.pending = append(c.pending, pendingFix{diag: len(c.diags.list) - 1, loop: l, metric: q.Metric})
}

// requiredGM is the gain margin a loop must keep: its own require line, or
// the default.
func (c *checker) requiredGM(l *Loop) float64 {
	for _, q := range l.Requirements {
		if q.Metric == "gain_margin" && q.Op == ">=" {
			return q.Want
		}
	}
	return c.env.Options.GainMarginDB
}
