package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"sort"

	"ringside/analysis"
)

// Stream writes a report file by file, as each check finishes, so that a
// run holds one file's result at a time: memory is bounded by the largest
// file, not by the sum. Close writes the end of the document and returns
// the first write or encoding error.
type Stream interface {
	Add(r *analysis.Result)
	Close() error
}

// NewStream returns the stream of format "text", "json" or "sarif".
// display maps a result's path to the path (or SARIF artifact URI) to
// print; indent lays JSON out for people (two spaces a level) instead of
// compactly.
func NewStream(format string, w io.Writer, display func(string) string, version string, indent bool) Stream {
	return NewStreamAgainst(format, w, display, version, indent, nil)
}

// NewStreamAgainst is NewStream for a run compared with a baseline: SARIF
// results get their baselineState, and the baseline's results that are
// gone follow as "absent" ones (base nil: no baseline). "markdown" is the
// overview for a review comment.
func NewStreamAgainst(format string, w io.Writer, display func(string) string, version string, indent bool, base Baseline) Stream {
	switch format {
	case "json":
		return &jsonStream{out: out{w: w, indent: indent}, display: display}
	case "sarif":
		return &sarifStream{out: out{w: w, indent: indent}, uri: display, version: version, rules: map[string]bool{}, base: base}
	case "markdown":
		return &markdownStream{textStream: textStream{w: w, display: display}}
	}
	return &textStream{w: w, display: display}
}

// out writes JSON pieces and keeps the first error.
type out struct {
	w      io.Writer
	indent bool
	err    error
	buf    bytes.Buffer
}

func (o *out) raw(s string) {
	if o.err == nil {
		_, o.err = io.WriteString(o.w, s)
	}
}

// value writes v as one element at the given depth of nesting (its
// continuation lines indented to match), without HTML escapes.
func (o *out) value(v any, depth int) {
	if o.err != nil {
		return
	}
	o.buf.Reset()
	enc := json.NewEncoder(&o.buf)
	enc.SetEscapeHTML(false)
	if o.indent {
		prefix := indentOf(depth)
		enc.SetIndent(prefix, "  ")
		o.raw(prefix)
	}
	if o.err = enc.Encode(v); o.err != nil {
		return
	}
	b := o.buf.Bytes()
	_, o.err = o.w.Write(b[:len(b)-1]) // Encode ends with a newline
}

// indented writes compact JSON b (from an AppendJSON) as value writes a
// value when indenting: by json.Indent, which is what the encoder's own
// indenting does.
func (o *out) indented(b []byte, err error, depth int) {
	if o.err != nil {
		return
	}
	if o.err = err; err != nil {
		return
	}
	prefix := indentOf(depth)
	o.raw(prefix)
	o.buf.Reset()
	if o.err = json.Indent(&o.buf, b, prefix, "  "); o.err == nil {
		_, o.err = o.w.Write(o.buf.Bytes())
	}
}

func indentOf(depth int) string {
	b := make([]byte, 2*depth)
	for i := range b {
		b[i] = ' '
	}
	return string(b)
}

// layout returns s in the indented form when indenting, else compact.
func (o *out) layout(indented, compact string) {
	if o.indent {
		o.raw(indented)
	} else {
		o.raw(compact)
	}
}

// jsonStream writes the contract's document: {"files": [file, ...]}.
type jsonStream struct {
	out
	display func(string) string
	n       int
	scratch []byte // JSON not yet written, reused
}

func (s *jsonStream) Add(r *analysis.Result) {
	switch {
	case s.n == 0:
		s.layout("{\n  \"files\": [\n", `{"files":[`)
	default:
		s.layout(",\n", ",")
	}
	s.n++
	f := buildFile(r, s.display)
	if s.err != nil {
		return
	}
	if !s.indent {
		s.scratch, s.err = f.writeJSON(s.w, s.scratch)
		return
	}
	var err error
	s.scratch, err = f.AppendJSON(s.scratch[:0])
	s.indented(s.scratch, err, 2)
}

func (s *jsonStream) Close() error {
	if s.n == 0 {
		s.layout("{\n  \"files\": []\n}\n", "{\"files\":[]}\n")
	} else {
		s.layout("\n  ]\n}\n", "]}\n")
	}
	return s.err
}

// sarifStream writes one SARIF run whose results are streamed; the rules
// they name follow them in the tool's driver.
type sarifStream struct {
	out
	uri     func(string) string
	version string
	rules   map[string]bool
	n       int
	base    Baseline
}

func (s *sarifStream) Add(r *analysis.Result) {
	for i, res := range sarifResults(r, s.uri) {
		if s.base != nil { // one result per diagnostic, in order
			d := r.Diagnostics[i]
			res.BaselineState = s.base.State(s.uri(d.Path), d.Code, d.Message)
		}
		s.result(res)
	}
}

// result writes one result, opening the document before the first.
func (s *sarifStream) result(res sarifResult) {
	if s.n == 0 {
		s.layout("{\n  \"$schema\": \""+sarifSchema+"\",\n  \"version\": \"2.1.0\",\n  \"runs\": [\n    {\n      \"columnKind\": \"unicodeCodePoints\",\n      \"results\": [\n",
			`{"$schema":"`+sarifSchema+`","version":"2.1.0","runs":[{"columnKind":"unicodeCodePoints","results":[`)
	} else {
		s.layout(",\n", ",")
	}
	s.n++
	s.rules[res.RuleID] = true
	s.value(res, 4)
}

func (s *sarifStream) Close() error {
	if s.base != nil {
		for _, a := range s.base.Absent() {
			s.result(absentResult(a))
		}
	}
	if s.n == 0 {
		s.layout("{\n  \"$schema\": \""+sarifSchema+"\",\n  \"version\": \"2.1.0\",\n  \"runs\": [\n    {\n      \"columnKind\": \"unicodeCodePoints\",\n      \"results\": [],\n",
			`{"$schema":"`+sarifSchema+`","version":"2.1.0","runs":[{"columnKind":"unicodeCodePoints","results":[],`)
	} else {
		s.layout("\n      ],\n", "],")
	}
	s.layout(`      "tool": `, `"tool":`)
	s.value(sarifToolOf(s.rules, s.version), 3)
	s.layout("\n    }\n  ]\n}\n", "}]}\n")
	return s.err
}

// sarifToolOf is the tool entry with a rule for each code used.
func sarifToolOf(rules map[string]bool, version string) sarifTool {
	ids := make([]string, 0, len(rules))
	for id := range rules {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	t := sarifTool{Driver: sarifDriver{Name: "ringside", Version: version, Rules: []sarifRule{}}}
	for _, id := range ids {
		t.Driver.Rules = append(t.Driver.Rules, sarifRule{ID: id, ShortDescription: sarifMessage{analysis.CodeDescription(id)}})
	}
	return t
}

// textStream writes `file:line:col: severity: message [code]` lines, then
// the overview of every loop with the failing ones named, and the caution.
type textStream struct {
	w        io.Writer
	display  func(string) string
	overview Overview
	err      error
}

func (s *textStream) printf(format string, args ...any) {
	if s.err == nil {
		_, s.err = fmt.Fprintf(s.w, format, args...)
	}
}

func (s *textStream) Add(r *analysis.Result) {
	for _, d := range r.Diagnostics {
		line, col := Position(r, d.Path, int(d.Span.From))
		s.printf("%s:%d:%d: %s: %s [%s]\n", s.display(d.Path), line, col, d.Severity, d.Message, d.Code)
		for _, rel := range d.Related {
			l2, c2 := Position(r, rel.Path, int(rel.Span.From))
			s.printf("\t%s:%d:%d: %s\n", s.display(rel.Path), l2, c2, rel.Message)
		}
	}
	s.overview.Add(r, s.display)
}

func (s *textStream) Close() error {
	if s.err == nil {
		s.err = s.overview.Write(s.w)
	}
	s.printf("%s\n", Caution)
	return s.err
}

// markdownStream writes only the overview, as Markdown, at the end.
type markdownStream struct {
	textStream
}

func (s *markdownStream) Add(r *analysis.Result) { s.overview.Add(r, s.display) }

func (s *markdownStream) Close() error {
	if s.err == nil {
		s.err = s.overview.WriteMarkdown(s.w)
	}
	return s.err
}
