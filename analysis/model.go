// Package analysis turns a parsed .loop file into what a control engineer
// needs to know: each block's discrete transfer function and poles, each
// loop's closed-loop poles, verdict, margins and step response, each gain's
// stable interval, and diagnostics with exact spans and suggested edits.
//
// It knows nothing of any editor protocol: positions are byte spans in the
// file they belong to, and fixes are plain text edits.
package analysis

import (
	"time"

	"ringside/analysis/discretize"
	"ringside/analysis/freq"
	"ringside/analysis/lti"
	"ringside/analysis/pole"
	"ringside/analysis/poly"
	"ringside/analysis/step"
	"ringside/syntax"
)

// Options are the thresholds the engineer may set (settings or flags).
type Options struct {
	// GainMarginDB and PhaseMarginDeg are the requirements applied to a
	// loop without any `require` line (rules of thumb, common practice).
	GainMarginDB   float64
	PhaseMarginDeg float64
	// Tolerance is how close to the unit circle a pole's radius must be
	// to count as on it: |r − 1| <= Tolerance.
	Tolerance float64
	// NoStepSamples drops the step response's samples from the result
	// (its figures stay): for a holder of many results that draws no plot,
	// such as an editor's diagnostics.
	NoStepSamples bool
	// Quick skips the loop numerics (closed-loop poles, margins, step
	// response, gain limits): what an editor runs on every keystroke.
	Quick bool
	// Budget bounds the time of one Check (0: no bound). When it runs
	// out, the loops not yet analysed get a warning saying so and no
	// figures; nothing is guessed.
	Budget time.Duration
}

// MaxLoops is the most loops one file may hold (20,000): far beyond any
// controller, and it keeps a pasted or generated file from stalling an
// editor. Loops past it are reported, not analysed.
const MaxLoops = 20000

// Default thresholds (loop-format.md: gain margin ≥ 6 dB, phase margin ≥ 30°).
const (
	DefaultGainMarginDB   = 6
	DefaultPhaseMarginDeg = 30
	// DefaultTolerance: root finding on the characteristic polynomials
	// met here (degree ≤ 40, backward error near 1e-15) places a simple
	// root to far better than 1e-9 but a double root only to about
	// sqrt(eps) ≈ 1.5e-8 and a triple to eps^(1/3) ≈ 6e-6. 1e-6 keeps
	// double integrators on the circle while a pole at radius 0.99999
	// still counts as inside.
	DefaultTolerance = 1e-6
)

// DefaultOptions returns the contract's defaults.
func DefaultOptions() Options {
	return Options{GainMarginDB: DefaultGainMarginDB, PhaseMarginDeg: DefaultPhaseMarginDeg, Tolerance: DefaultTolerance}
}

func (o Options) withDefaults() Options {
	if o.GainMarginDB == 0 && o.PhaseMarginDeg == 0 {
		o.GainMarginDB, o.PhaseMarginDeg = DefaultGainMarginDB, DefaultPhaseMarginDeg
	}
	if !(o.Tolerance > 0) {
		o.Tolerance = DefaultTolerance
	}
	return o
}

// Result is the analysis of one file (with what it uses).
type Result struct {
	Path        string
	File        *syntax.File
	Diagnostics []Diagnostic // sorted by file, then position
	SampleT     float64      // seconds; 0 when the file has no usable sample line
	Uses        []*Use
	Gains       []*Gain  // declared in this file, in order
	Blocks      []*Block // declared in this file, in order
	Loops       []*Loop  // declared in this file, in order
	// Scope holds every gain and block visible in this file, own and used.
	Scope map[string]*Decl
	// Files holds every file read for this result (this one first).
	Files map[string]*syntax.File
}

// Use is a `use` line and what it resolved to.
type Use struct {
	Stmt *syntax.UseStmt
	Path string // cleaned absolute path, "" when not resolved
}

// Decl is a named gain or block, possibly from a used file.
type Decl struct {
	Name  string
	Path  string // file it is declared in
	Ident *syntax.Ident
	Gain  *Gain
	Block *Block
}

// Gain is a named, tunable gain.
type Gain struct {
	Name     string
	Path     string
	Stmt     *syntax.GainStmt
	Value    float64
	Min, Max *float64
	Limits   *GainLimits // nil when no loop of this file uses it
	// Fit is the value the quick-fix offers, keeping every requirement it
	// can (fixsearch.go); nil until a failing loop asks for a fix.
	Fit                 *GainFit
	fitDone, fitSkipped bool
	// Vary is the range of an uncertain gain (`vary A to B`); nil for a
	// tunable one (or when the range is not valid).
	Vary *Range
}

// GainLimits are the values of a gain that keep every loop using it stable
// and within its required gain margin.
type GainLimits struct {
	Loops []string // loops (of the checked file) that use the gain
	// StableMin, StableMax: the open stable interval around the current
	// value; nil = unbounded on that side.
	StableMin, StableMax *float64
	Exact                bool // every loop's characteristic polynomial is affine in the gain
	CurrentStable        bool // the current value lies inside the interval
	Found                bool // some stable interval exists (when the current value is unstable)
	// SafeMax is the largest value for which every such loop is stable and
	// meets its required gain margin; nil when no finite cap is needed or
	// none exists (see SafeMaxNote).
	SafeMax     *float64
	SafeMaxNote string
}

// Block is a named transfer function.
type Block struct {
	Name string
	Path string
	Stmt *syntax.BlockStmt
	// Var is 's', 'z', or 0 for a constant.
	Var byte
	// Cont is the continuous function of an s block, as written.
	Cont   poly.Rational
	Method discretize.Method // 0 when no via
	// PrewarpHz is the Tustin prewarp frequency, 0 when none.
	PrewarpHz float64
	// TF is the discrete transfer function in z; valid when OK.
	TF poly.Rational
	// Factored is TF as gain, poles and zeros (exact where written as
	// factors); valid when OK and FactoredOK.
	Factored   lti.Factored
	FactoredOK bool
	OK         bool
	Poles      []pole.Info
	Zeros      []pole.Info
	DCGain     float64 // TF(1); ±Inf for a pole at z = 1; NaN (undefined) when both vanish there
	// Gains lists the gain names the block depends on (directly or
	// through the blocks it uses).
	Gains []string
	// Realization is how the block runs on the target (its `realize`
	// line); nil without one.
	Realization *Realization
}

// Loop is a feedback loop and everything computed for it.
type Loop struct {
	Name     string
	Stmt     *syntax.LoopStmt
	Forward  []string
	Feedback []string
	Positive bool // positive feedback
	OK       bool // every element resolved and the analysis ran
	// NotReached: the analysis stopped (time budget, cancel) before this
	// loop; it has no verdict and an error says so.
	NotReached bool

	Open   poly.Rational // L, sign folded in so that the loop closes as 1 + L = 0
	Char   poly.Poly     // uncancelled characteristic polynomial
	Closed poly.Rational // reference to output

	Poles []pole.Info // closed-loop, largest radius first
	// PoleBounds[i] bounds the error of Poles[i] (see lti.Pole.Bound).
	PoleBounds []float64
	Stable     bool // every pole certainly strictly inside (by Tolerance)
	Marginal   bool // none certainly outside, some on the circle
	// Undecided: no pole certainly outside or on the circle, and some
	// pole's error bound straddles the circle; Stable and Marginal are
	// false and no verdict is given (a numeric-failure diagnostic says why).
	Undecided bool
	// Model is the loop as blocks in factored and state-space form: L at
	// any z, block by block; the closed-loop poles; margins; step.
	Model     *lti.Loop
	MaxRadius float64
	// MinDamping is the smallest damping ratio over the closed-loop
	// poles, excluding pure delays at z = 0.
	MinDamping   float64
	Margins      freq.Margins
	Step         *step.Result // nil unless stable
	Hidden       []HiddenMode
	Requirements []Requirement
	Gains        []string // gain names the loop depends on
	// Robust is the analysis over the box of the loop's varying gains;
	// nil when it depends on none (vary.go).
	Robust *Robust
	// Disk is the symmetric disk margin; nil unless the loop is stable
	// (disk.go).
	Disk *DiskMargin
	// Realized holds the figures of the loop with every realized block in
	// its rounded form; nil when no block of the loop is realized.
	Realized *RealizedLoop
}

// HiddenMode is a block pole cancelled by a zero in the loop: invisible in
// L, still a closed-loop pole.
type HiddenMode struct {
	Pole      complex128
	PoleBlock string
	ZeroBlock string
}

// Requirement is one checked requirement, written or default.
type Requirement struct {
	Item    *syntax.RequireItem // nil for a default
	Metric  string
	Op      string // ">=" or "<="
	Want    float64
	Unit    string // unit Want is expressed in, for messages
	Got     *float64
	GotText string
	Met     bool
}

// Severity of a diagnostic.
type Severity int

const (
	Error Severity = iota + 1
	Warning
	Info
)

func (s Severity) String() string {
	switch s {
	case Error:
		return "error"
	case Warning:
		return "warning"
	}
	return "info"
}

// Diagnostic is one finding with its exact span in Path.
type Diagnostic struct {
	Path     string
	Span     syntax.Span
	Severity Severity
	Code     string
	Message  string
	Related  []Related
	Fixes    []Fix
}

// Related points at another place that explains the diagnostic.
type Related struct {
	Path    string
	Span    syntax.Span
	Message string
}

// Fix is a suggested change the user may choose to apply.
type Fix struct {
	Title string
	Edits []Edit
}

// Edit replaces the bytes of Span in Path with NewText.
type Edit struct {
	Path    string
	Span    syntax.Span
	NewText string
}
