package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"ringside/analysis"
	"ringside/analysis/baseline"
	"ringside/analysis/report"
	"ringside/cliflag"
)

// checkFlags are the flags of `ringside check`.
type checkFlags struct {
	format, root, baseline string
	indent                 bool
	opts                   analysis.Options
	th                     baseline.Thresholds
	paths                  []string
}

const checkAbout = `Checks every loop of the .loop files and folders named: closed-loop poles and
verdict, margins, step response, gain limits. Exit status: 0 when no file has an
error, 1 when any has (or, with --baseline, when a loop regressed), 2 on bad usage
or unreadable input.`

// parseCheckFlags reads check's flags; status is -1 when the check should
// run, else the exit status to return (help printed, or a usage error).
func parseCheckFlags(args []string, stdout, stderr io.Writer) (cf *checkFlags, status int) {
	cf = &checkFlags{opts: analysis.DefaultOptions(), th: baseline.DefaultThresholds()}
	fs := cliflag.New("ringside check", "PATH...", checkAbout)
	fs.Choice(&cf.format, "format", "text", []string{"text", "json", "sarif", "markdown"}, "output `FORMAT`: text, json, sarif, or markdown (the loop table, for a review comment)")
	fs.Bool(&cf.indent, "indent", "lay JSON and SARIF out for people (compact by default)")
	fs.String(&cf.root, "root", "workspace folder `DIR` that use lines may not leave (default: the current folder)")
	fs.Number(&cf.opts.GainMarginDB, "gain-margin", analysis.DefaultGainMarginDB, "a number of dB", "6", 0, 100, "gain margin in `DB` required of loops without require lines")
	fs.Number(&cf.opts.PhaseMarginDeg, "phase-margin", analysis.DefaultPhaseMarginDeg, "a number of degrees", "30", 0, 180, "phase margin in `DEG` required of loops without require lines")
	fs.Number(&cf.opts.Tolerance, "tolerance", analysis.DefaultTolerance, "a small positive number", "1e-6", 1e-15, 0.1, "a pole counts as on the unit circle when its radius is within `X` of 1")
	fs.Duration(&cf.opts.Budget, "budget", "time limit `DURATION` per file, such as 30s; loops not reached are reported, not guessed")
	fs.String(&cf.baseline, "baseline", "compare with an earlier `FILE.json` of check --format json; exit 1 on a regression")
	fs.Number(&cf.th.DB, "regress-db", cf.th.DB, "a number of dB", "1", 0, 100, "with --baseline: a gain margin lower, or a peak sensitivity higher, by more than `DB` is a regression")
	fs.Number(&cf.th.Deg, "regress-deg", cf.th.Deg, "a number of degrees", "5", 0, 180, "with --baseline: a phase margin lower by more than `DEG` is a regression")
	fs.Number(&cf.th.Radius, "regress-radius", cf.th.Radius, "a pole radius difference", "0.005", 0, 1, "with --baseline: a largest pole radius higher by more than `R` is a regression")
	fs.Number(&cf.th.Pct, "regress-pct", cf.th.Pct, "a percentage", "10", 0, 1000, "with --baseline: overshoot higher by more than `PCT` points, delay margin or settling worse by more than PCT % is a regression")
	paths, status := parseFlags(fs, args, stdout, stderr)
	if status >= 0 {
		return nil, status
	}
	if len(paths) == 0 {
		fmt.Fprint(stderr, "ringside check: name at least one .loop file or folder (see ringside check --help)\n")
		return nil, exitUsage
	}
	cf.paths = paths
	return cf, -1
}

// runBaseline is a check run's comparison with --baseline: the baseline
// read once, this run's figures gathered file by file (a few per loop),
// and the SARIF pairing. A nil *runBaseline is a run without baseline.
type runBaseline struct {
	old, cur baseline.Doc
	states   *baseline.States
	th       baseline.Thresholds
}

func openBaseline(cf *checkFlags) (*runBaseline, error) {
	if cf.baseline == "" {
		return nil, nil
	}
	f, err := os.Open(cf.baseline)
	if err != nil {
		return nil, errors.Unwrap(err)
	}
	defer f.Close()
	old, err := baseline.Read(f)
	if err != nil {
		return nil, err
	}
	return &runBaseline{old: *old, states: baseline.NewStates(old), th: cf.th}, nil
}

// sarifStates is the SARIF baseline, or nil (an untyped nil: no states).
func (b *runBaseline) sarifStates() report.Baseline {
	if b == nil {
		return nil
	}
	return b.states
}

func (b *runBaseline) add(r *analysis.Result, display func(string) string) {
	if b != nil {
		_ = b.cur.Add(report.BuildFile(r, display)) // a document of our own: it encodes
	}
}

// finish prints the comparison after a text or Markdown report and
// returns the exit status: 1 on a regression, else the run's.
func (b *runBaseline) finish(w io.Writer, format string, status int) int {
	if b == nil {
		return status
	}
	cmp := baseline.Compare(&b.old, &b.cur, b.th)
	switch format {
	case "text":
		cmp.WriteText(w)
	case "markdown":
		fmt.Fprintln(w)
		cmp.WriteMarkdown(w)
	}
	if cmp.Regressions > 0 {
		return 1
	}
	return status
}
