// Package report prints check results: plain text for people, JSON per the
// format contract for tools, and SARIF 2.1.0 for code-scanning services.
package report

import (
	"math"

	"ringside/analysis"
	"ringside/analysis/pole"
	"ringside/internal/par"
)

// Doc is the JSON document of `ringside check --format json`
// (loop-format.md). Fields beyond the contract are additions; none of the
// contract's is renamed.
type Doc struct {
	Files []File `json:"files"`
}

// File is one checked file.
type File struct {
	Path        string       `json:"path"`
	SampleS     *float64     `json:"sample_s"`
	Diagnostics []Diagnostic `json:"diagnostics"`
	Loops       []Loop       `json:"loops"`
	Gains       []Gain       `json:"gains"`
	Blocks      []Block      `json:"blocks"`
}

// Diagnostic positions are 1-based lines and columns in Unicode code points.
type Diagnostic struct {
	Line      int    `json:"line"`
	Column    int    `json:"column"`
	EndLine   int    `json:"end_line"`
	EndColumn int    `json:"end_column"`
	Severity  string `json:"severity"`
	Code      string `json:"code"`
	Message   string `json:"message"`
	Fixes     []Fix  `json:"fixes,omitempty"`
}

// Fix is a suggested edit, for tools that apply them.
type Fix struct {
	Title string `json:"title"`
	Edits []Edit `json:"edits"`
}

// Edit replaces the text between two positions.
type Edit struct {
	Path      string `json:"path"`
	Line      int    `json:"line"`
	Column    int    `json:"column"`
	EndLine   int    `json:"end_line"`
	EndColumn int    `json:"end_column"`
	NewText   string `json:"new_text"`
}

// Loop holds a loop's figures; nil where a figure does not exist.
type Loop struct {
	Name               string        `json:"name"`
	Stable             *bool         `json:"stable"` // null when undecided
	Marginal           bool          `json:"marginal"`
	Analysed           bool          `json:"analysed"`
	Poles              []Pole        `json:"poles"`
	MaxRadius          *float64      `json:"max_radius"`
	MinDamping         *float64      `json:"min_damping"`
	GainMarginDB       *float64      `json:"gain_margin_db"`
	PhaseCrossoverHz   *float64      `json:"phase_crossover_hz"`
	PhaseMarginDeg     *float64      `json:"phase_margin_deg"`
	GainCrossoverHz    *float64      `json:"gain_crossover_hz"`
	DelayMarginS       *float64      `json:"delay_margin_s"`
	DelayMarginSamples *float64      `json:"delay_margin_samples"`
	PeakSensitivityDB  *float64      `json:"peak_sensitivity_db"`
	OvershootPct       *float64      `json:"overshoot_pct"`
	RiseS              *float64      `json:"rise_s"`
	SettlingS          *float64      `json:"settling_s"`
	SteadyStateError   *float64      `json:"steady_state_error"`
	HiddenModes        []HiddenMode  `json:"hidden_modes"`
	Requirements       []Requirement `json:"requirements"`
	Verdict            string        `json:"verdict"`
	DiskMargin         *DiskMargin   `json:"disk_margin"`
	Robust             *Robust       `json:"robust,omitempty"`
	// Realized: the loop with its realized blocks in place (loop-format.md,
	// version 2); absent when no block of the loop is realized.
	Realized *RealizedLoop `json:"realized,omitempty"`
}

// RealizedLoop is the contract's loops[].realized.
type RealizedLoop struct {
	Stable         *bool    `json:"stable"`
	MaxRadius      *float64 `json:"max_radius"`
	GainMarginDB   *float64 `json:"gain_margin_db"`
	PhaseMarginDeg *float64 `json:"phase_margin_deg"`
	Blocks         []string `json:"blocks"`
}

// Realization is the contract's blocks[].realization.
type Realization struct {
	Structure    string      `json:"structure"`
	Format       string      `json:"format"`
	Coefficients [][]float64 `json:"coefficients"`
	Poles        []Pole      `json:"poles"`
	MaxPoleShift float64     `json:"max_pole_shift"`
	Stable       bool        `json:"stable"`
	// Delta is Δ of the delta form; MaxInput the largest input magnitude
	// that cannot overflow a fixed-point realization (null otherwise).
	Delta    *float64 `json:"delta,omitempty"`
	MaxInput *float64 `json:"max_input"`
}

// Pole is one closed-loop (or block) pole or zero.
type Pole struct {
	Re            float64  `json:"re"`
	Im            float64  `json:"im"`
	Radius        float64  `json:"radius"`
	AngleRad      float64  `json:"angle_rad"`
	FreqHz        float64  `json:"freq_hz"`
	Damping       float64  `json:"damping"`
	NaturalHz     *float64 `json:"natural_hz"`
	TimeConstantS *float64 `json:"time_constant_s"`
	Shape         string   `json:"shape"`
}

// HiddenMode is a pole cancelled inside a loop.
type HiddenMode struct {
	Re        float64 `json:"re"`
	Im        float64 `json:"im"`
	Radius    float64 `json:"radius"`
	PoleBlock string  `json:"pole_block"`
	ZeroBlock string  `json:"zero_block"`
}

// Requirement is one checked requirement.
type Requirement struct {
	Metric  string   `json:"metric"`
	Op      string   `json:"op"`
	Want    float64  `json:"want"`
	Got     *float64 `json:"got"`
	Met     bool     `json:"met"`
	Default bool     `json:"default"`
}

// Gain holds a gain's limits; nil where unbounded or unknown.
type Gain struct {
	Name          string   `json:"name"`
	Value         float64  `json:"value"`
	StableMin     *float64 `json:"stable_min"`
	StableMax     *float64 `json:"stable_max"`
	SafeMax       *float64 `json:"safe_max"`
	Exact         bool     `json:"exact"`
	CurrentStable *bool    `json:"current_stable"`
	Loops         []string `json:"loops"`
}

// Block is a block's discrete transfer function and roots.
type Block struct {
	Name   string    `json:"name"`
	Method string    `json:"method,omitempty"`
	Num    []float64 `json:"num"` // coefficients in z, highest power first
	Den    []float64 `json:"den"`
	Poles  []Pole    `json:"poles"`
	Zeros  []Pole    `json:"zeros"`
	DCGain *float64  `json:"dc_gain"`
	// Realization is present for a block with a realize line.
	Realization *Realization `json:"realization,omitempty"`
}

// finite returns a pointer to v, or nil when v is not a finite number: the
// contract has null, never NaN or Inf.
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func finitePtr(p *float64) *float64 {
	if p == nil {
		return nil
	}
	return finite(*p)
}

// Build converts results into the JSON document. display maps a result's
// path to the path to print (as the user named it).
func Build(results []*analysis.Result, display func(string) string) Doc {
	doc := Doc{Files: []File{}}
	for _, r := range results {
		doc.Files = append(doc.Files, buildFile(r, display))
	}
	return doc
}

func buildFile(r *analysis.Result, display func(string) string) File {
	f := File{Path: display(r.Path), Diagnostics: []Diagnostic{}, Loops: []Loop{}, Gains: []Gain{}, Blocks: []Block{}}
	if r.SampleT > 0 {
		f.SampleS = finite(r.SampleT)
	}
	// Each diagnostic's, loop's and block's entry reads only its own: built
	// side by side.
	f.Diagnostics = make([]Diagnostic, len(r.Diagnostics))
	par.Each(len(r.Diagnostics), func(i int) { f.Diagnostics[i] = diagnostic(r, r.Diagnostics[i], display) })
	f.Loops = make([]Loop, len(r.Loops))
	par.Each(len(r.Loops), func(i int) { f.Loops[i] = loop(r.Loops[i]) })
	for _, g := range r.Gains {
		out := Gain{Name: g.Name, Value: g.Value, Loops: []string{}}
		if lim := g.Limits; lim != nil {
			out.StableMin, out.StableMax, out.SafeMax = finitePtr(lim.StableMin), finitePtr(lim.StableMax), finitePtr(lim.SafeMax)
			out.Exact = lim.Exact
			cs := lim.CurrentStable
			out.CurrentStable = &cs
			out.Loops = lim.Loops
		}
		f.Gains = append(f.Gains, out)
	}
	f.Blocks = make([]Block, len(r.Blocks))
	par.Each(len(r.Blocks), func(i int) {
		f.Blocks[i] = block(r.Blocks[i])
		f.Blocks[i].Realization = realization(r.Blocks[i].Realization, r.SampleT)
	})
	return f
}

// Position converts a byte offset of a result's file to 1-based line and
// code-point column.
func Position(r *analysis.Result, path string, off int) (int, int) {
	f := r.Files[path]
	if f == nil || f.Lines == nil {
		return 1, 1
	}
	return f.Lines.LineCol(pos(off))
}

func diagnostic(r *analysis.Result, d analysis.Diagnostic, display func(string) string) Diagnostic {
	line, col := Position(r, d.Path, int(d.Span.From))
	el, ec := Position(r, d.Path, int(d.Span.To))
	out := Diagnostic{Line: line, Column: col, EndLine: el, EndColumn: ec, Severity: d.Severity.String(), Code: d.Code, Message: d.Message}
	for _, fx := range d.Fixes {
		f := Fix{Title: fx.Title}
		for _, e := range fx.Edits {
			l1, c1 := Position(r, e.Path, int(e.Span.From))
			l2, c2 := Position(r, e.Path, int(e.Span.To))
			f.Edits = append(f.Edits, Edit{Path: display(e.Path), Line: l1, Column: c1, EndLine: l2, EndColumn: c2, NewText: e.NewText})
		}
		out.Fixes = append(out.Fixes, f)
	}
	return out
}

func loop(l *analysis.Loop) Loop {
	stable := l.Stable && l.OK
	out := Loop{Name: l.Name, Stable: &stable, Marginal: l.Marginal, Analysed: l.OK, Poles: []Pole{},
		HiddenModes: []HiddenMode{}, Requirements: []Requirement{}, Verdict: l.Verdict()}
	if !l.OK {
		return out
	}
	if l.Undecided {
		out.Stable = nil
	}
	for _, p := range l.Poles {
		out.Poles = append(out.Poles, polePoint(p))
	}
	out.MaxRadius, out.MinDamping = finite(l.MaxRadius), finite(l.MinDamping)
	m := l.Margins
	out.GainMarginDB, out.PhaseCrossoverHz = finitePtr(m.GainMarginDB), finitePtr(m.PhaseCrossoverHz)
	out.PhaseMarginDeg, out.GainCrossoverHz = finitePtr(m.PhaseMarginDeg), finitePtr(m.GainCrossoverHz)
	out.DelayMarginS, out.DelayMarginSamples = finitePtr(m.DelayMarginS), finitePtr(m.DelayMarginSamples)
	out.PeakSensitivityDB = finitePtr(m.PeakSensitivityDB)
	if s := l.Step; s != nil {
		out.OvershootPct = finite(s.OvershootPct)
		out.RiseS = finite(s.RiseTimeS)
		if s.Settled {
			out.SettlingS = finite(s.SettlingS)
		}
		out.SteadyStateError = finite(s.SteadyStateError)
	}
	for _, h := range l.Hidden {
		out.HiddenModes = append(out.HiddenModes, HiddenMode{Re: real(h.Pole), Im: imag(h.Pole), Radius: math.Hypot(real(h.Pole), imag(h.Pole)), PoleBlock: h.PoleBlock, ZeroBlock: h.ZeroBlock})
	}
	for _, q := range l.Requirements {
		out.Requirements = append(out.Requirements, Requirement{Metric: q.Metric, Op: q.Op, Want: q.Want, Got: finitePtr(q.Got), Met: q.Met, Default: q.Item == nil})
	}
	out.DiskMargin, out.Robust = diskMargin(l), robust(l)
	out.Realized = realizedLoop(l.Realized)
	return out
}

func realizedLoop(r *analysis.RealizedLoop) *RealizedLoop {
	if r == nil {
		return nil
	}
	out := &RealizedLoop{Blocks: r.Blocks}
	if l := r.Figures; l.OK {
		if !l.Undecided {
			st := l.Stable
			out.Stable = &st
		}
		out.MaxRadius = finite(l.MaxRadius)
		out.GainMarginDB, out.PhaseMarginDeg = finitePtr(l.Margins.GainMarginDB), finitePtr(l.Margins.PhaseMarginDeg)
	}
	return out
}

func realization(r *analysis.Realization, T float64) *Realization {
	if r == nil || r.Realization == nil {
		return nil
	}
	out := &Realization{Structure: r.Structure.String(), Format: r.Format.String(), Coefficients: r.Coefficients(),
		Poles: []Pole{}, MaxPoleShift: r.MaxPoleShift, Stable: r.Stable}
	for _, p := range r.Poles {
		out.Poles = append(out.Poles, polePoint(pole.Describe(p, T, analysis.DefaultTolerance)))
	}
	if d := r.Delta(); d != 0 {
		out.Delta = &d
	}
	if h := r.Headroom; h != nil {
		out.MaxInput = finite(h.MaxInput)
	}
	return out
}

func block(b *analysis.Block) Block {
	out := Block{Name: b.Name, Num: []float64{}, Den: []float64{}, Poles: []Pole{}, Zeros: []Pole{}}
	if b.Method != 0 {
		out.Method = b.Method.String()
	}
	if !b.OK {
		return out
	}
	out.Num, out.Den = highFirst(b.TF.Num), highFirst(b.TF.Den)
	for _, p := range b.Poles {
		out.Poles = append(out.Poles, polePoint(p))
	}
	for _, z := range b.Zeros {
		out.Zeros = append(out.Zeros, polePoint(z))
	}
	out.DCGain = finite(b.DCGain)
	return out
}

func highFirst(p []float64) []float64 {
	out := make([]float64, len(p))
	for i, v := range p {
		out[len(p)-1-i] = v
	}
	return out
}
