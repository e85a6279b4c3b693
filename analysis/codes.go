package analysis

import "sort"

// Diagnostic codes. They are stable: editors, CI filters and SARIF rules key
// on them. Each names the finding, not its severity.
const (
	CodeSyntax          = "syntax"              // the parser could not read a statement
	CodeUnknownName     = "unknown-name"        // a name that is neither gain nor block in scope
	CodeDuplicateName   = "duplicate-name"      // a name declared twice
	CodeLaterBlock      = "used-before-defined" // a block used above its declaration
	CodeMixedVariables  = "mixed-variables"     // s and z in one block
	CodeNoVia           = "no-via"              // an s block used in a loop without a discretization method
	CodeViaOnDiscrete   = "via-on-discrete"     // a z block with via
	CodeUnknownVia      = "unknown-via"         // a method name that is not zoh/foh/tustin/matched
	CodeDiscretize      = "discretize-failed"   // the method cannot handle this block
	CodeNoSample        = "no-sample"           // s blocks (or loops) without a sample period
	CodeSampleTwice     = "sample-twice"        // more than one sample line
	CodeSampleMismatch  = "sample-mismatch"     // a used file runs at another period
	CodeBadUnit         = "bad-unit"            // a unit that does not fit the quantity
	CodeNonCausal       = "non-causal"          // numerator degree above denominator degree
	CodeBadExpression   = "bad-expression"      // division by zero, overflow, and the like
	CodeTooComplex      = "too-complex"         // degree beyond what the numerics support
	CodeTooMany         = "too-many"            // diagnostics past the per-file cap
	CodeCommonRoot      = "common-root"         // a block's numerator and denominator share a root
	CodeAliasing        = "aliasing"            // a continuous pole beyond the Nyquist frequency
	CodeBlockOnCircle   = "block-pole-on-circle"
	CodeBlockOutside    = "block-pole-outside"
	CodeAlgebraicLoop   = "algebraic-loop"    // a loop without delay
	CodeEmptyPath       = "empty-path"        // a loop without forward path
	CodeBadSign         = "bad-sign"          // sign other than negative/positive
	CodeUnknownMetric   = "unknown-metric"    // require with a metric the format lacks
	CodePoleOutside     = "pole-outside"      // closed-loop pole outside the unit circle: unstable
	CodePoleOnCircle    = "pole-on-circle"    // closed-loop pole on the circle: not BIBO stable
	CodeHiddenMode      = "hidden-mode"       // a pole cancelled by a zero inside the loop
	CodeGainRange       = "gain-out-of-range" // a gain outside its declared min/max
	CodeGainRangeEmpty  = "gain-range-empty"  // min above max
	CodeUseNotFound     = "use-not-found"
	CodeUseOutside      = "use-outside-workspace"
	CodeUseCycle        = "use-cycle"
	CodeUseErrors       = "use-has-errors"  // the used file has syntax errors
	CodeNumeric         = "numeric-failure" // a computation that could not give a trustworthy figure
	CodeGainMarginLow   = "gain-margin-low"
	CodePhaseMarginLow  = "phase-margin-low"
	CodeDelayMarginLow  = "delay-margin-low"
	CodeDampingLow      = "damping-low"
	CodeRadiusHigh      = "radius-high"
	CodeSensitivityHigh = "sensitivity-high"
	CodeOvershootHigh   = "overshoot-high"
	CodeSettlingSlow    = "settling-slow"
	CodeBadRealize      = "bad-realize"      // a realize line that cannot be used
	CodeRealizeRange    = "realize-range"    // a coefficient outside the format's range
	CodeRealizeUnstable = "realize-unstable" // rounding moves a block pole onto or outside the circle
	CodeRealizeLoop     = "realize-loop"     // the loop with the realized block loses stability or a requirement
	CodeRealizeHeadroom = "realize-headroom" // a fixed-point signal can overflow
	CodeDiskMarginLow   = "disk-margin-low"
	CodeRangeUnstable   = "range-unstable"  // a loop not stable over the range of its varying gains
	CodeRangeUndecided  = "range-undecided" // stability over the range could not be established
	CodeLoopVerdict     = "loop-verdict"    // info: one line of figures per loop
	CodeGainLimits      = "gain-limits"     // info: stable interval of a gain
)

// metricCode is the diagnostic code for a missed requirement on a metric.
var metricCode = map[string]string{
	"gain_margin":      CodeGainMarginLow,
	"phase_margin":     CodePhaseMarginLow,
	"delay_margin":     CodeDelayMarginLow,
	"damping":          CodeDampingLow,
	"radius":           CodeRadiusHigh,
	"peak_sensitivity": CodeSensitivityHigh,
	"overshoot":        CodeOvershootHigh,
	"settling":         CodeSettlingSlow,
	"disk_margin":      CodeDiskMarginLow,
}

// SummaryCode reports whether code is an informational summary (shown by
// editors as lenses and hovers rather than as problems).
func SummaryCode(code string) bool { return code == CodeLoopVerdict || code == CodeGainLimits }

var codeDescriptions = map[string]string{
	CodeSyntax:          "The file could not be read as .loop syntax.",
	CodeUnknownName:     "A name that is neither a gain nor a block in scope.",
	CodeDuplicateName:   "A name declared twice.",
	CodeLaterBlock:      "A block used above its declaration.",
	CodeMixedVariables:  "A block mixes s and z.",
	CodeNoVia:           "A continuous (s) block used in a loop without a discretization method.",
	CodeViaOnDiscrete:   "A discrete (z) block with a discretization method.",
	CodeUnknownVia:      "An unknown discretization method.",
	CodeDiscretize:      "The discretization method cannot handle this block.",
	CodeNoSample:        "No sample period, though the file needs one.",
	CodeSampleTwice:     "More than one sample line.",
	CodeSampleMismatch:  "A used file runs at another sample period.",
	CodeBadUnit:         "A unit that does not fit the quantity.",
	CodeNonCausal:       "A non-causal or improper block.",
	CodeBadExpression:   "An expression that cannot be evaluated (division by zero, overflow).",
	CodeTooComplex:      "A degree or size beyond the supported limits.",
	CodeTooMany:         "More diagnostics than one file lists; the rest are counted.",
	CodeCommonRoot:      "A block whose numerator and denominator share a root.",
	CodeAliasing:        "A continuous pole above the Nyquist frequency.",
	CodeBlockOnCircle:   "A block pole on the unit circle (integrator or oscillator).",
	CodeBlockOutside:    "A block pole outside the unit circle (open-loop unstable).",
	CodeAlgebraicLoop:   "A loop without delay.",
	CodeEmptyPath:       "A loop without a forward path.",
	CodeBadSign:         "A feedback sign other than negative or positive.",
	CodeUnknownMetric:   "An unknown require metric.",
	CodePoleOutside:     "A closed-loop pole outside the unit circle: the loop is unstable.",
	CodePoleOnCircle:    "A closed-loop pole on the unit circle: the loop is not BIBO stable.",
	CodeHiddenMode:      "A pole cancelled by a zero inside a loop (hidden mode).",
	CodeGainRange:       "A gain outside its declared range.",
	CodeGainRangeEmpty:  "A gain whose min is above its max.",
	CodeUseNotFound:     "A used file that cannot be read.",
	CodeUseOutside:      "A used file outside the workspace.",
	CodeUseCycle:        "Files that use each other in a circle.",
	CodeUseErrors:       "A used file with syntax errors.",
	CodeNumeric:         "A figure that could not be computed reliably.",
	CodeGainMarginLow:   "Gain margin below its requirement.",
	CodePhaseMarginLow:  "Phase margin below its requirement.",
	CodeDelayMarginLow:  "Delay margin below its requirement.",
	CodeDampingLow:      "Closed-loop damping below its requirement.",
	CodeRadiusHigh:      "Largest closed-loop pole radius above its requirement.",
	CodeSensitivityHigh: "Peak sensitivity above its requirement.",
	CodeOvershootHigh:   "Step overshoot above its requirement.",
	CodeSettlingSlow:    "Step settling time above its requirement.",
	CodeBadRealize:      "A realize line that cannot be used (unknown block, structure or format, twice).",
	CodeRealizeRange:    "A realized coefficient outside the range of its format.",
	CodeRealizeUnstable: "Rounding moves a block pole onto or outside the unit circle.",
	CodeRealizeLoop:     "The loop with a realized block is unstable or misses a requirement the ideal loop meets.",
	CodeRealizeHeadroom: "A fixed-point signal of a realized block can overflow.",
	CodeDiskMarginLow:   "Disk margin below its requirement.",
	CodeRangeUnstable:   "A loop that is not stable for every value of its varying gains.",
	CodeRangeUndecided:  "Stability over the range of the varying gains could not be established.",
	CodeLoopVerdict:     "A loop's verdict and figures.",
	CodeGainLimits:      "A gain's stable interval and safe maximum.",
}

// CodeDescription is a one-sentence description of a diagnostic code.
func CodeDescription(code string) string {
	if d, ok := codeDescriptions[code]; ok {
		return d
	}
	return code
}

// Codes lists every diagnostic code.
func Codes() []string {
	out := make([]string, 0, len(codeDescriptions))
	for c := range codeDescriptions {
		out = append(out, c)
	}
	sort.Strings(out)
	return out
}
