// Package baseline compares a check run with an earlier one (the JSON of
// `ringside check --format json`, for example of the main branch) for
// review in CI: per loop, a verdict that changed, a margin, radius or step
// figure that got worse beyond a threshold, a requirement newly missed, a
// new or removed loop; and per diagnostic, the SARIF baselineState.
package baseline

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"ringside/analysis/columns"
	"ringside/analysis/report"
)

// Thresholds are how much a figure may get worse before it counts as a
// regression. Smaller changes are rounding or harmless retuning.
type Thresholds struct {
	DB     float64 // gain margin lower, peak sensitivity higher, in dB
	Deg    float64 // phase margin lower, in degrees
	Radius float64 // largest closed-loop pole radius higher
	Pct    float64 // overshoot higher in percentage points; delay margin lower and settling longer in % of the old value
}

// DefaultThresholds: 1 dB, 5°, 0.005 in radius, 10 % — about the
// resolution an engineer reads off a Bode plot and a step response
// (common practice, no single source).
func DefaultThresholds() Thresholds { return Thresholds{DB: 1, Deg: 5, Radius: 0.005, Pct: 10} }

// Doc is the part of the JSON document a comparison reads; stable is a
// pointer so that an undecided verdict (null) reads as such.
type Doc struct {
	Files []File `json:"files"`
}

// File is one file of a Doc.
type File struct {
	Path        string              `json:"path"`
	Diagnostics []report.Diagnostic `json:"diagnostics"`
	Loops       []Loop              `json:"loops"`
}

// Loop holds the figures compared.
type Loop struct {
	Name              string   `json:"name"`
	Stable            *bool    `json:"stable"`
	Marginal          bool     `json:"marginal"`
	Analysed          *bool    `json:"analysed"`
	MaxRadius         *float64 `json:"max_radius"`
	GainMarginDB      *float64 `json:"gain_margin_db"`
	PhaseMarginDeg    *float64 `json:"phase_margin_deg"`
	DelayMarginS      *float64 `json:"delay_margin_s"`
	PeakSensitivityDB *float64 `json:"peak_sensitivity_db"`
	OvershootPct      *float64 `json:"overshoot_pct"`
	SettlingS         *float64 `json:"settling_s"`
	Robust            *struct {
		Stable *bool `json:"stable"`
	} `json:"robust"`
	Requirements []struct {
		Metric  string `json:"metric"`
		Op      string `json:"op"`
		Met     bool   `json:"met"`
		Default bool   `json:"default"`
	} `json:"requirements"`
}

// Read decodes a JSON document written by `check --format json`.
func Read(r io.Reader) (*Doc, error) {
	var d Doc
	dec := json.NewDecoder(r)
	if err := dec.Decode(&d); err != nil {
		return nil, fmt.Errorf("not a check --format json document: %v", err)
	}
	return &d, nil
}

// Add appends one file of this run's document (read through its JSON, so
// both sides of a comparison are read by the same code). A run adds its
// files as it checks them; the figures kept per file are few.
func (d *Doc) Add(f report.File) error {
	b, err := json.Marshal(f)
	if err != nil {
		return err
	}
	var one File
	if err := json.Unmarshal(b, &one); err != nil {
		return err
	}
	d.Files = append(d.Files, one)
	return nil
}

// LoopChange is one loop's comparison.
type LoopChange struct {
	File, Loop string
	Old, New   string   // status words; "" when the loop is absent on that side
	Changes    []string // what changed, in a few words each
	Regression bool
}

// Comparison is the result of Compare.
type Comparison struct {
	Loops       []LoopChange // every loop of either run, this run's order first
	Regressions int
	// NotChecked lists the baseline's files this run did not check: their
	// loops are not compared (nor reported removed).
	NotChecked []string
}

// Status words of a loop in the JSON document.
func status(l *Loop) string {
	switch {
	case l.Analysed != nil && !*l.Analysed:
		return "not analysed"
	case l.Stable == nil:
		return "undecided"
	case *l.Stable && l.Robust != nil && l.Robust.Stable == nil:
		return "undecided over range"
	case *l.Stable && l.Robust != nil && !*l.Robust.Stable:
		return "UNSTABLE over range"
	case *l.Stable:
		return "stable"
	case l.Marginal:
		return "NOT STABLE"
	}
	return "UNSTABLE"
}

type key struct{ file, loop string }

// Compare compares this run (cur) with the baseline (old).
func Compare(old, cur *Doc, th Thresholds) *Comparison {
	c := &Comparison{}
	oldLoops := map[key]*Loop{}
	var oldOrder []key
	for i := range old.Files {
		f := &old.Files[i]
		for j := range f.Loops {
			k := key{f.Path, f.Loops[j].Name}
			oldLoops[k] = &f.Loops[j]
			oldOrder = append(oldOrder, k)
		}
	}
	seen := map[key]bool{}
	for i := range cur.Files {
		f := &cur.Files[i]
		for j := range f.Loops {
			l := &f.Loops[j]
			k := key{f.Path, l.Name}
			seen[k] = true
			ch := LoopChange{File: f.Path, Loop: l.Name, New: status(l)}
			if o := oldLoops[k]; o != nil {
				ch.Old = o.status()
				ch.Changes, ch.Regression = compareLoop(o, l, th)
			} else {
				ch.Changes = []string{"new loop"}
				ch.Regression = ch.New != "stable"
			}
			c.add(ch)
		}
	}
	checked := map[string]bool{}
	for _, f := range cur.Files {
		checked[f.Path] = true
	}
	for _, f := range old.Files {
		if !checked[f.Path] {
			c.NotChecked = append(c.NotChecked, f.Path)
		}
	}
	for _, k := range oldOrder {
		if !seen[k] && checked[k.file] {
			c.add(LoopChange{File: k.file, Loop: k.loop, Old: oldLoops[k].status(), Changes: []string{"loop removed"}})
		}
	}
	return c
}

func (l *Loop) status() string { return status(l) }

func (c *Comparison) add(ch LoopChange) {
	if ch.Regression {
		c.Regressions++
	}
	c.Loops = append(c.Loops, ch)
}

// compareLoop lists what changed between two runs of one loop and whether
// any of it is a regression.
func compareLoop(o, n *Loop, th Thresholds) ([]string, bool) {
	var out []string
	worse := false
	so, sn := status(o), status(n)
	if so != sn {
		out = append(out, fmt.Sprintf("verdict %s → %s", so, sn))
		worse = so == "stable"
		return out, worse // figures of a loop that changed verdict compare nothing alike
	}
	if sn != "stable" {
		return out, false
	}
	add := func(name, unit string, ov, nv *float64, higherWorse bool, limit func(o float64) float64) {
		a, b := orInf(ov), orInf(nv)
		d := b - a
		if higherWorse {
			d = -d
		}
		// d < 0: worse by |d|.
		if d < 0 && (math.IsInf(a, 0) || -d > limit(a)) {
			out = append(out, fmt.Sprintf("%s %s → %s%s", name, show(ov), show(nv), unit))
			worse = true
		}
	}
	abs := func(v float64) func(float64) float64 { return func(float64) float64 { return v } }
	rel := func(o float64) float64 { return math.Abs(o) * th.Pct / 100 }
	add("radius", "", o.MaxRadius, n.MaxRadius, true, abs(th.Radius))
	add("GM", " dB", o.GainMarginDB, n.GainMarginDB, false, abs(th.DB))
	add("PM", "°", o.PhaseMarginDeg, n.PhaseMarginDeg, false, abs(th.Deg))
	add("delay margin", " s", o.DelayMarginS, n.DelayMarginS, false, rel)
	add("peak sensitivity", " dB", o.PeakSensitivityDB, n.PeakSensitivityDB, true, abs(th.DB))
	add("overshoot", " %", o.OvershootPct, n.OvershootPct, true, abs(th.Pct))
	add("settling", " s", o.SettlingS, n.SettlingS, true, rel)
	met := map[string]bool{}
	for _, q := range o.Requirements {
		met[q.Metric+q.Op] = q.Met
	}
	for _, q := range n.Requirements {
		if was, ok := met[q.Metric+q.Op]; ok && was && !q.Met {
			out = append(out, "now misses "+q.Metric)
			worse = true
		}
	}
	return out, worse
}

// orInf reads a missing figure (no crossing) as unlimited. A missing step
// figure of a stable loop (not settled) is then infinitely slow, which is
// the right side too.
func orInf(p *float64) float64 {
	if p == nil {
		return math.Inf(1)
	}
	return *p
}

func show(p *float64) string {
	if p == nil {
		return "∞"
	}
	return fmt.Sprintf("%.3g", *p)
}

// Rows is the comparison as a table (header first) of the loops that
// changed; an unchanged loop is left out.
func (c *Comparison) Rows() [][]string {
	rows := [][]string{{"file", "loop", "before", "now", "change", "regression"}}
	for _, ch := range c.Loops {
		if len(ch.Changes) == 0 {
			continue
		}
		reg := "no"
		if ch.Regression {
			reg = "YES"
		}
		rows = append(rows, []string{ch.File, ch.Loop, dash(ch.Old), dash(ch.New), strings.Join(ch.Changes, "; "), reg})
	}
	return rows
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// Summary is one line: how many loops were compared and what regressed.
func (c *Comparison) Summary() string {
	changed := len(c.Rows()) - 1
	s := fmt.Sprintf("Against the baseline: %d loop(s) compared, %d changed", len(c.Loops), changed)
	if n := len(c.NotChecked); n > 0 {
		s += fmt.Sprintf(", %d file(s) of the baseline not checked in this run", n)
	}
	if c.Regressions == 0 {
		return s + ", no regression."
	}
	var names []string
	for _, ch := range c.Loops {
		if ch.Regression {
			names = append(names, ch.Loop)
		}
	}
	return fmt.Sprintf("%s, %d REGRESSED: %s.", s, c.Regressions, strings.Join(names, ", "))
}

// WriteText writes the table of changed loops as aligned columns and the
// summary line.
func (c *Comparison) WriteText(w io.Writer) {
	fmt.Fprintln(w)
	if rows := c.Rows(); len(rows) > 1 {
		for _, line := range columns.Text(rows) {
			fmt.Fprintln(w, line)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w, c.Summary())
}

// WriteMarkdown writes the summary and the table as Markdown, for a
// review comment.
func (c *Comparison) WriteMarkdown(w io.Writer) {
	fmt.Fprintf(w, "### Loops against the baseline\n\n%s\n\n", c.Summary())
	if rows := c.Rows(); len(rows) > 1 {
		fmt.Fprint(w, columns.Markdown(rows))
	}
}
