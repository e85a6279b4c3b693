package plot

import (
	"bytes"
	"errors"
	"fmt"
	"html/template"
	"math"
	"path/filepath"
	"strings"

	"ringside/analysis"
)

// Caution is the line every page carries about what the figures mean.
const Caution = "Caution: this analysis assumes linear time-invariant models of every block. " +
	"It does not replace validation on the real system and your local safety practice."

// pageLoop is what the template shows for one loop.
type pageLoop struct {
	Name     string
	ID       string
	Verdict  string
	Good     bool
	Figures  [][2]string
	Reqs     []pageReq
	SVG      template.HTML
	NoFigure string
}

type pageReq struct {
	Want, Got string
	Default   bool
	Met       bool
}

type pageDiag struct {
	Where, Severity, Code, Message string
}

type pageData struct {
	Title   string
	Path    string
	Sample  string
	Caution string
	Diags   []pageDiag
	Loops   []pageLoop
	NoLoops bool
	Colours map[string]string
}

// Page returns one self-contained HTML page (inline SVG and CSS, no remote
// resources) with every loop of res: its verdict in plain words, a table
// of its figures and requirements, and its figure. A loop whose figure
// cannot be drawn gets the reason in its place.
func Page(res *analysis.Result) ([]byte, error) {
	if res == nil {
		return nil, errors.New("plot: no result given")
	}
	d := pageData{
		Title:   "ringside: " + filepath.Base(res.Path),
		Path:    res.Path,
		Caution: Caution,
		NoLoops: len(res.Loops) == 0,
	}
	if res.SampleT > 0 {
		d.Sample = fmt.Sprintf("sample period %s (%s)", analysis.FormatTime(res.SampleT), analysis.FormatHz(1/res.SampleT))
	}
	for _, g := range res.Diagnostics {
		if g.Severity == analysis.Info {
			continue
		}
		d.Diags = append(d.Diags, pageDiag{Where: filepath.Base(g.Path), Severity: g.Severity.String(), Code: g.Code, Message: g.Message})
	}
	for i, l := range res.Loops {
		if i >= MaxPageFigures {
			d.Loops = append(d.Loops, listedLoop(l, i))
			continue
		}
		d.Loops = append(d.Loops, loopSection(res, l, i))
	}
	var buf bytes.Buffer
	if err := pageTemplate.Execute(&buf, d); err != nil {
		return nil, fmt.Errorf("plot: writing the page: %w", err)
	}
	return buf.Bytes(), nil
}

// MaxPageFigures is how many loops a page draws (50, about 2.5 MB of SVG);
// the loops after them are listed with their verdict only, and a pointer
// to plotting them one at a time. A generated file of thousands of loops
// then gives a page a browser opens, not hundreds of megabytes.
const MaxPageFigures = 50

// listedLoop is a loop past MaxPageFigures: its verdict, no figure.
func listedLoop(l *analysis.Loop, i int) pageLoop {
	pl := pageLoop{Name: l.Name, ID: fmt.Sprintf("loop-%d-%s", i+1, l.Name)}
	pl.Verdict, pl.Good = plainVerdict(l)
	pl.NoFigure = fmt.Sprintf("No figure: a page draws only its first %d loops; plot this one with `ringside plot FILE --loop %s`.", MaxPageFigures, l.Name)
	return pl
}

func loopSection(res *analysis.Result, l *analysis.Loop, i int) pageLoop {
	pl := pageLoop{Name: l.Name, ID: fmt.Sprintf("loop-%d-%s", i+1, l.Name)}
	pl.Verdict, pl.Good = plainVerdict(l)
	if !l.OK {
		pl.NoFigure = "No figure: the loop was not analysed."
		return pl
	}
	pl.Figures = figureRows(l)
	for _, q := range l.Requirements {
		want := fmt.Sprintf("%s %s %s%s", q.Metric, q.Op, analysis.FormatNumber(q.Want), unitSuffix(q.Unit))
		pl.Reqs = append(pl.Reqs, pageReq{Want: want, Got: q.GotText, Default: q.Item == nil, Met: q.Met})
	}
	svg, err := LoopSVG(res, l)
	if err != nil {
		pl.NoFigure = "No figure: " + err.Error()
		return pl
	}
	pl.SVG = template.HTML(inlineSVG(svg))
	return pl
}

func unitSuffix(u string) string {
	switch u {
	case "":
		return ""
	case "deg":
		return "°"
	case "%":
		return " %"
	}
	return " " + u
}

// inlineSVG drops the XML prolog and comment that precede <svg>, which
// have no place inside HTML.
func inlineSVG(b []byte) string {
	s := string(b)
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:]
	}
	return s
}

// plainVerdict says in plain words whether the loop is fit to run, and
// reports good when it is stable and meets every requirement.
func plainVerdict(l *analysis.Loop) (string, bool) {
	if !l.OK {
		return l.VerdictWord() + ": " + l.VerdictReason() + ".", false
	}
	var missed []string
	for _, q := range l.Requirements {
		if !q.Met {
			missed = append(missed, strings.ReplaceAll(q.Metric, "_", " "))
		}
	}
	switch {
	case !l.Stable:
		return l.VerdictWord() + ": " + l.VerdictReason() + ".", false
	case len(missed) > 0:
		return fmt.Sprintf("Stable, but %d requirement(s) missed: %s.", len(missed), strings.Join(missed, ", ")), false
	}
	return "Stable, and every requirement is met.", true
}

// figureRows lists the loop's figures as (name, value) rows.
func figureRows(l *analysis.Loop) [][2]string {
	m := l.Margins
	var rows [][2]string
	add := func(k, v string) { rows = append(rows, [2]string{k, v}) }
	if m.GainMarginDB != nil {
		add("Gain margin", analysis.FormatMetric("gain_margin", *m.GainMarginDB)+" at "+hzText(m.PhaseCrossoverHz))
	} else {
		add("Gain margin", "∞ (the phase never crosses −180°)")
	}
	if m.PhaseMarginDeg != nil {
		add("Phase margin", analysis.FormatMetric("phase_margin", *m.PhaseMarginDeg)+" at "+hzText(m.GainCrossoverHz))
	} else {
		add("Phase margin", "∞ (|L| never crosses 1)")
	}
	if m.DelayMarginS != nil && m.DelayMarginSamples != nil {
		add("Delay margin", fmt.Sprintf("%s (%.3g samples)", analysis.FormatMetric("delay_margin", *m.DelayMarginS), analysis.Shown(*m.DelayMarginSamples)))
	} else {
		add("Delay margin", "unlimited")
	}
	if m.PeakSensitivityDB != nil {
		v := analysis.FormatMetric("peak_sensitivity", *m.PeakSensitivityDB)
		if m.PeakSensitivityHz != nil {
			v += " at " + hzText(m.PeakSensitivityHz)
		}
		add("Peak sensitivity", v)
	} else {
		add("Peak sensitivity", "undefined (closed-loop pole on the unit circle)")
	}
	if st := l.Step; st != nil {
		add("Step overshoot", analysis.FormatMetric("overshoot", st.OvershootPct))
		if st.Settled {
			add("Settling time (2 %)", analysis.FormatTime(st.SettlingS))
		} else {
			add("Settling time (2 %)", "not settled within the simulated horizon")
		}
	} else {
		add("Step overshoot", "none: the loop is not stable")
		add("Settling time (2 %)", "none: the loop is not stable")
	}
	add("Largest pole radius", analysis.FormatRadius(l.MaxRadius))
	if !math.IsNaN(l.MinDamping) {
		add("Smallest damping ratio", fmt.Sprintf("%.3g", analysis.Shown(l.MinDamping)))
	}
	return rows
}

func hzText(f *float64) string {
	if f == nil {
		return "?"
	}
	return analysis.FormatHz(*f)
}

var pageTemplate = template.Must(template.New("page").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>
body { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; margin: 1.5em auto; max-width: 1200px; padding: 0 1em; color: #222; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.25em; margin: 0 0 0.3em 0; }
.meta { color: #555; margin-top: 0; }
.caution { border-left: 4px solid #c07000; background: #fff6e8; padding: 0.5em 0.8em; }
section.loop { border-top: 1px solid #ccc; padding-top: 1em; margin-top: 1.5em; }
.verdict { font-weight: bold; padding: 0.3em 0.6em; display: inline-block; border-radius: 3px; }
.good { background: #e3f4e8; color: #135c28; }
.bad { background: #fbe4e4; color: #9c0d0d; }
.tables { display: flex; flex-wrap: wrap; align-items: flex-start; gap: 2.5em; margin: 0.8em 0; }
table { border-collapse: collapse; font-size: 0.92em; }
th, td { text-align: left; padding: 0.2em 0.8em 0.2em 0; border-bottom: 1px solid #eee; vertical-align: top; }
th { color: #555; font-weight: normal; }
td.met { color: #135c28; font-weight: bold; }
td.missed { color: #9c0d0d; font-weight: bold; }
.figure svg { width: 100%; height: auto; }
ul.diags { font-size: 0.92em; }
.sev-error { color: #9c0d0d; font-weight: bold; }
.sev-warning { color: #8a5a00; font-weight: bold; }
.nofig { color: #9c0d0d; }
</style>
</head>
<body>
<h1>{{.Title}}</h1>
<p class="meta">{{.Path}}{{if .Sample}} · {{.Sample}}{{end}}</p>
<p class="caution">{{.Caution}}</p>
{{if .Diags}}<h2>Findings</h2>
<ul class="diags">
{{range .Diags}}<li><span class="sev-{{.Severity}}">{{.Severity}}</span> {{.Where}} · {{.Code}}: {{.Message}}</li>
{{end}}</ul>{{end}}
{{if .NoLoops}}<p>This file declares no loop.</p>{{end}}
{{range .Loops}}<section class="loop" id="{{.ID}}">
<h2>Loop {{.Name}}</h2>
<p class="verdict {{if .Good}}good{{else}}bad{{end}}">{{.Verdict}}</p>
<div class="tables">
{{if .Figures}}<table class="figures">
<caption hidden>Figures</caption>
{{range .Figures}}<tr><th>{{index . 0}}</th><td>{{index . 1}}</td></tr>
{{end}}</table>{{end}}
{{if .Reqs}}<table class="requirements">
<tr><th>Requirement</th><th>Actual</th><th>Result</th></tr>
{{range .Reqs}}<tr><td>{{.Want}}{{if .Default}} (default){{end}}</td><td>{{.Got}}</td>{{if .Met}}<td class="met">met</td>{{else}}<td class="missed">missed</td>{{end}}</tr>
{{end}}</table>{{end}}
</div>
{{if .SVG}}<div class="figure">{{.SVG}}</div>{{else}}<p class="nofig">{{.NoFigure}}</p>{{end}}
</section>
{{end}}
</body>
</html>
`))
