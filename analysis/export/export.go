// Package export writes the realized blocks of a checked file as code for
// the target: a self-contained C99 header, and a JSON description with the
// test vector the header must reproduce (loop-format.md, "Export"). Both
// come from the same realize.Realization that the analysis judged.
package export

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"strings"

	"ringside/analysis"
	"ringside/analysis/realize"
)

// Source is what a header's comment says about its origin.
type Source struct {
	Path    string // as the user named it
	Content []byte // the file's bytes, for the SHA-256
	Version string // the tool's version
}

// Error says why nothing was exported; Status is the exit status the
// command line should give (1: the file has errors, 2: nothing to export).
type Error struct {
	Status int
	Msg    string
}

func (e *Error) Error() string { return e.Msg }

// Blocks returns the file's realized blocks, or an *Error when there is none
// or when the file has errors (a failing realization, an unstable loop, a
// missed requirement): a header is never written for code the analysis
// rejects.
func Blocks(res *analysis.Result) ([]*analysis.Block, error) {
	var errs []string
	for _, d := range res.Diagnostics {
		if d.Severity == analysis.Error {
			line, col := 1, 1
			if f := res.Files[d.Path]; f != nil && f.Lines != nil {
				line, col = f.Lines.LineCol(d.Span.From)
			}
			errs = append(errs, fmt.Sprintf("  %d:%d: %s [%s]", line, col, d.Message, d.Code))
		}
	}
	if len(errs) > 0 {
		return nil, &Error{1, fmt.Sprintf("not exported: the file has %d error(s); fix them first:\n%s", len(errs), strings.Join(errs, "\n"))}
	}
	var out []*analysis.Block
	hasLine := false
	for _, b := range res.Blocks {
		if b.Realization != nil {
			hasLine = true
			if b.Realization.Realization == nil || !b.OK {
				return nil, &Error{1, fmt.Sprintf("not exported: block %s has a realize line but could not be realized", b.Name)}
			}
			out = append(out, b)
		}
	}
	if !hasLine {
		return nil, &Error{2, "nothing to export: no block of the file has a `realize` line (e.g. `realize ctrl as sections in q1.14`)"}
	}
	return out, nil
}

// Unrealized lists the blocks on loop paths that have no realize line: the
// header does not contain them, and the command line says so.
func Unrealized(res *analysis.Result) []string {
	seen := map[string]bool{}
	var out []string
	for _, l := range res.Loops {
		for _, n := range append(append([]string{}, l.Forward...), l.Feedback...) {
			d := res.Scope[n]
			if d == nil || d.Block == nil || d.Block.Realization != nil || seen[n] || d.Block.Var == 's' {
				continue
			}
			seen[n] = true
			out = append(out, n)
		}
	}
	return out
}

// Doc is the JSON export.
type Doc struct {
	Blocks []DocBlock `json:"blocks"`
}

// DocBlock is one realized block.
type DocBlock struct {
	Name         string      `json:"name"`
	Structure    string      `json:"structure"`
	Format       string      `json:"format"`
	SampleS      float64     `json:"sample_s"`
	Coefficients [][]float64 `json:"coefficients"`
	// Raw holds the fixed-point coefficient words (B then A without its
	// leading 1, per section); Delta the delta form's Δ.
	Raw   [][]int64 `json:"raw,omitempty"`
	Delta *float64  `json:"delta,omitempty"`
	Test  Test      `json:"test"`
}

// Test is the contract's test vector: raw words for fixed point.
type Test struct {
	Input  float64 `json:"input"`
	Output any     `json:"output"`
}

// JSON builds the JSON export of blocks.
func JSON(res *analysis.Result, blocks []*analysis.Block) ([]byte, error) {
	doc := Doc{Blocks: []DocBlock{}}
	for _, b := range blocks {
		r := b.Realization.Realization
		db := DocBlock{Name: b.Name, Structure: r.Structure.String(), Format: r.Format.String(), SampleS: res.SampleT,
			Coefficients: r.Coefficients(), Raw: r.Raw, Test: Test{Input: realize.TestInput}}
		if d := r.Delta(); d != 0 {
			db.Delta = &d
		}
		values, raw := r.TestVector()
		if r.Format.Kind == realize.Fixed {
			db.Test.Output = raw
		} else {
			db.Test.Output = values
		}
		doc.Blocks = append(doc.Blocks, db)
	}
	out, err := json.MarshalIndent(doc, "", "  ")
	return append(out, '\n'), err
}

func sha(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}
