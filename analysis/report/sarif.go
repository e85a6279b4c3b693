package report

import (
	"net/url"
	"path/filepath"
	"strings"

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

const sarifSchema = "https://json.schemastore.org/sarif-2.1.0.json"

// SARIF builds the SARIF log of the results. uri maps a path to the
// artifact URI (relative to the repository root, with forward slashes).
func SARIF(results []*analysis.Result, uri func(string) string, version string) any {
	run := sarifRun{ColumnKind: "unicodeCodePoints", Results: []sarifResult{}}
	rules := map[string]bool{}
	for _, r := range results {
		for _, res := range sarifResults(r, uri) {
			rules[res.RuleID] = true
			run.Results = append(run.Results, res)
		}
	}
	run.Tool = sarifToolOf(rules, version)
	return sarifLog{Schema: sarifSchema, Version: "2.1.0", Runs: []sarifRun{run}}
}

// sarifResults are the SARIF results of one file's diagnostics.
func sarifResults(r *analysis.Result, uri func(string) string) []sarifResult {
	var out []sarifResult
	for _, d := range r.Diagnostics {
		res := sarifResult{RuleID: d.Code, Level: level(d.Severity), Message: sarifMessage{d.Message},
			Locations: []sarifLocation{location(r, d.Path, d.Span.From, d.Span.To, uri, "")}}
		for _, rel := range d.Related {
			res.RelatedLocations = append(res.RelatedLocations, location(r, rel.Path, rel.Span.From, rel.Span.To, uri, rel.Message))
		}
		out = append(out, res)
	}
	return out
}

func location[P ~int](r *analysis.Result, path string, from, to P, uri func(string) string, msg string) sarifLocation {
	l1, c1 := Position(r, path, int(from))
	l2, c2 := Position(r, path, int(to))
	loc := sarifLocation{PhysicalLocation: sarifPhysical{ArtifactLocation: sarifArtifact{URI: artifactURI(uri(path))}, Region: sarifRegion{l1, c1, l2, c2}}}
	if msg != "" {
		loc.Message = &sarifMessage{msg}
	}
	return loc
}

// artifactURI writes a path as a URI reference (RFC 3986), as SARIF
// requires: every character outside the unreserved and path sets
// percent-encoded ("my loop #1%.loop" is "my%20loop%20%231%25.loop", not a
// fragment), a relative path as a relative reference, an absolute one as
// a file URI.
func artifactURI(p string) string {
	p = filepath.ToSlash(p)
	if filepath.IsAbs(filepath.FromSlash(p)) || strings.HasPrefix(p, "/") {
		if !strings.HasPrefix(p, "/") {
			p = "/" + p // a drive letter
		}
		return (&url.URL{Scheme: "file", Path: p}).String()
	}
	return (&url.URL{Path: p}).String()
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

// Baseline tells each result's SARIF baselineState against an earlier
// run, and lists that run's results that are gone.
type Baseline interface {
	// State is "new", "unchanged" or "updated" for a result of this run,
	// asked once per result in the order of the run.
	State(uri, code, message string) string
	// Absent lists the earlier run's results with no counterpart now.
	Absent() []AbsentResult
}

// AbsentResult is a result of the earlier run that this run no longer has;
// URI is its path as the JSON document wrote it.
type AbsentResult struct {
	URI string
	Diagnostic
}

// absentResult is the SARIF result of a result that is gone.
func absentResult(a AbsentResult) sarifResult {
	return sarifResult{RuleID: a.Code, Level: levelName(a.Severity), Message: sarifMessage{a.Message},
		Locations:     []sarifLocation{{PhysicalLocation: sarifPhysical{ArtifactLocation: sarifArtifact{URI: artifactURI(a.URI)}, Region: sarifRegion{a.Line, a.Column, a.EndLine, a.EndColumn}}}},
		BaselineState: "absent"}
}

// levelName maps a severity word of the JSON document to a SARIF level.
func levelName(sev string) string {
	switch sev {
	case "error", "warning":
		return sev
	}
	return "note"
}
