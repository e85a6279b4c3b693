package report

import (
	"sort"

	"ringside/analysis"
)

// SARIF 2.1.0 (OASIS standard) as read by code-scanning services. Columns
// are Unicode code points, declared in columnKind (the standard's default
// would be UTF-16 units).
type sarifLog struct {
	Schema  string     `json:"$schema"`
	Version string     `json:"version"`
	Runs    []sarifRun `json:"runs"`
}

type sarifRun struct {
	Tool       sarifTool     `json:"tool"`
	ColumnKind string        `json:"columnKind"`
	Results    []sarifResult `json:"results"`
}

type sarifTool struct {
	Driver sarifDriver `json:"driver"`
}

type sarifDriver struct {
	Name    string      `json:"name"`
	Version string      `json:"version"`
	Rules   []sarifRule `json:"rules"`
}

type sarifRule struct {
	ID               string       `json:"id"`
	ShortDescription sarifMessage `json:"shortDescription"`
}

type sarifMessage struct {
	Text string `json:"text"`
}

type sarifResult struct {
	RuleID           string          `json:"ruleId"`
	Level            string          `json:"level"`
	Message          sarifMessage    `json:"message"`
	Locations        []sarifLocation `json:"locations"`
	RelatedLocations []sarifLocation `json:"relatedLocations,omitempty"`
	// BaselineState (new, unchanged, updated, absent) is set when the run
	// is compared with a baseline (`check --baseline`).
	BaselineState string `json:"baselineState,omitempty"`
}

type sarifLocation struct {
	PhysicalLocation sarifPhysical `json:"physicalLocation"`
	Message          *sarifMessage `json:"message,omitempty"`
}

type sarifPhysical struct {
	ArtifactLocation sarifArtifact `json:"artifactLocation"`
	Region           sarifRegion   `json:"region"`
}

type sarifArtifact struct {
	URI string `json:"uri"`
}

type sarifRegion struct {
	StartLine   int `json:"startLine"`
	StartColumn int `json:"startColumn"`
	EndLine     int `json:"endLine"`
	EndColumn   int `json:"endColumn"`
}

// SARIF builds the SARIF log of the results. uri maps a path to the
// artifact URI (relative to the repository root, with forward slashes).
func SARIF(results []*analysis.Result, uri func(string) string, version string) any {
	return SARIFAgainst(results, uri, version, nil)
}

// Baseline tells each result's SARIF baselineState against an earlier
// run, and lists that run's results that are gone.
type Baseline interface {
	// State is "new", "unchanged" or "updated" for a result of this run.
	State(uri, code, message string) string
	// Absent lists the earlier run's results with no counterpart now.
	Absent() []AbsentResult
}

// AbsentResult is a result of the earlier run that this run no longer has.
type AbsentResult struct {
	URI string
	Diagnostic
}

// SARIFAgainst is SARIF with each result's baselineState set from base
// (nil: no baseline, no states), absent results included.
func SARIFAgainst(results []*analysis.Result, uri func(string) string, version string, base Baseline) any {
	run := sarifRun{Tool: sarifTool{Driver: sarifDriver{Name: "ringside", Version: version}}, ColumnKind: "unicodeCodePoints", Results: []sarifResult{}}
	rules := map[string]bool{}
	for _, r := range results {
		for _, d := range r.Diagnostics {
			rules[d.Code] = true
			res := sarifResult{RuleID: d.Code, Level: level(d.Severity), Message: sarifMessage{d.Message},
				Locations: []sarifLocation{location(r, d.Path, d.Span.From, d.Span.To, uri, "")}}
			for _, rel := range d.Related {
				res.RelatedLocations = append(res.RelatedLocations, location(r, rel.Path, rel.Span.From, rel.Span.To, uri, rel.Message))
			}
			if base != nil {
				res.BaselineState = base.State(uri(d.Path), d.Code, d.Message)
			}
			run.Results = append(run.Results, res)
		}
	}
	if base != nil {
		for _, a := range base.Absent() {
			rules[a.Code] = true
			run.Results = append(run.Results, sarifResult{RuleID: a.Code, Level: levelName(a.Severity), Message: sarifMessage{a.Message},
				Locations:     []sarifLocation{{PhysicalLocation: sarifPhysical{ArtifactLocation: sarifArtifact{URI: a.URI}, Region: sarifRegion{a.Line, a.Column, a.EndLine, a.EndColumn}}}},
				BaselineState: "absent"})
		}
	}
	ids := make([]string, 0, len(rules))
	for id := range rules {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		run.Tool.Driver.Rules = append(run.Tool.Driver.Rules, sarifRule{ID: id, ShortDescription: sarifMessage{analysis.CodeDescription(id)}})
	}
	if run.Tool.Driver.Rules == nil {
		run.Tool.Driver.Rules = []sarifRule{}
	}
	return sarifLog{Schema: "https://json.schemastore.org/sarif-2.1.0.json", Version: "2.1.0", Runs: []sarifRun{run}}
}

func location[P ~int](r *analysis.Result, path string, from, to P, uri func(string) string, msg string) sarifLocation {
	l1, c1 := Position(r, path, int(from))
	l2, c2 := Position(r, path, int(to))
	loc := sarifLocation{PhysicalLocation: sarifPhysical{ArtifactLocation: sarifArtifact{URI: uri(path)}, Region: sarifRegion{l1, c1, l2, c2}}}
	if msg != "" {
		loc.Message = &sarifMessage{msg}
	}
	return loc
}

func level(s analysis.Severity) string {
	switch s {
	case analysis.Error:
		return "error"
	case analysis.Warning:
		return "warning"
	}
	return "note"
}

// levelName maps a severity word of the JSON document to a SARIF level.
func levelName(sev string) string {
	switch sev {
	case "error", "warning":
		return sev
	}
	return "note"
}
