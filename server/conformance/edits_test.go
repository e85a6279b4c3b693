package conformance

import (
	"context"
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"
	"unicode/utf8"

	"ringside/analysis"
	"ringside/syntax"
)

// lspLines returns the start offset and the content end offset (before its
// line end) of every line of text, with the line ends of LSP 3.17
// ("\n", "\r\n" and "\r"). There is always at least one line.
func lspLines(text []byte) (starts, ends []int) {
	start := 0
	for i := 0; i < len(text); i++ {
		switch text[i] {
		case '\n':
			starts, ends = append(starts, start), append(ends, i)
			start = i + 1
		case '\r':
			starts, ends = append(starts, start), append(ends, i)
			if i+1 < len(text) && text[i+1] == '\n' {
				i++
			}
			start = i + 1
		}
	}
	return append(starts, start), append(ends, len(text))
}

// units16 is the number of UTF-16 code units of r (a surrogate pair above
// the Basic Multilingual Plane). An invalid byte decodes to U+FFFD, one unit.
func units16(r rune) int {
	if r >= 0x10000 {
		return 2
	}
	return 1
}

// offsetOf converts an LSP position (0-based line, character in UTF-16 code
// units) to a byte offset, as LSP 3.17 defines it: a character past the
// line length means the line length. Lines past the last are a test error.
func offsetOf(text []byte, line, char int) (int, error) {
	starts, ends := lspLines(text)
	if line < 0 || line >= len(starts) {
		return 0, fmt.Errorf("line %d outside 0-%d", line, len(starts)-1)
	}
	off, units := starts[line], 0
	for off < ends[line] && units < char {
		r, size := utf8.DecodeRune(text[off:ends[line]])
		units += units16(r)
		off += size
	}
	if units > char {
		return 0, fmt.Errorf("character %d on line %d is inside a surrogate pair", char, line)
	}
	return off, nil
}

// boundaries lists the characters of a line at which a position may stand
// (not inside a surrogate pair), from 0 to the line length.
func boundaries(text []byte, start, end int) []int {
	out := []int{0}
	units := 0
	for off := start; off < end; {
		r, size := utf8.DecodeRune(text[off:end])
		units += units16(r)
		off += size
		out = append(out, units)
	}
	return out
}

// editFragments are the texts the random edits insert: multi-byte
// characters (é and µ two bytes, ° two, the emoji four bytes and a UTF-16
// surrogate pair), line ends of both kinds, and pieces of .loop syntax.
var editFragments = []string{
	"é", "µ", "°", "😀", "\r\n", "\n", " ", "z", "1", "(", ")", "/", "#",
	"gain kx = 0.5\r\n", "block bx = 1 / (z - 0.5)\n", "# 40 °C at 5 µs, café 😀\r\n",
	"loop lx {\n  forward kx bx\n}\n", "kp", " ms", "0.001 * z", "😀😀é",
}

// TestRandomEdits sends seeded random incremental edits to one open
// document and checks after every edit that the server's copy
// (ringside/documentText) equals the test's own application of the edit,
// and at checkpoints that the published diagnostics equal a fresh
// analysis.Check of that text.
func TestRandomEdits(t *testing.T) {
	const (
		edits      = 10000
		checkEvery = 500
		seed       = 20261201
	)
	src, err := os.ReadFile(filepath.Join(moduleRoot, "testdata", "demo", "conveyor.loop"))
	if err != nil {
		t.Fatal(err)
	}
	// Half the lines with CRLF ends, and a comment of multi-byte characters.
	lines := strings.SplitAfter(string(src), "\n")
	for i := range lines {
		if i%2 == 1 {
			lines[i] = strings.Replace(lines[i], "\n", "\r\n", 1)
		}
	}
	text := []byte(strings.Join(lines, "") + "# belt at 40 °C, encoder 5 µs, café 😀 end\r\n")

	dir := t.TempDir()
	path := filepath.Join(dir, "conveyor.loop")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	uri := fileURI(path)
	p := start(t, dir)
	p.initialize(dir, map[string]any{"trigger": "change"})
	version := 1
	from := p.mark()
	p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": uri, "languageId": "loop", "version": version, "text": string(text)}})
	compared := checkDiagnostics(t, p, from, uri, version, path, dir, text)

	rng := rand.New(rand.NewSource(seed))
	docTextMissing := false
	started := time.Now()
	for i := 1; i <= edits; i++ {
		var changes []any
		for n := 1 + rng.Intn(3)/2; n > 0; n-- { // one change, sometimes two
			var ch any
			text, ch = randomEdit(t, rng, text, len(src))
			changes = append(changes, ch)
		}
		version++
		if i%checkEvery == 0 || i == edits {
			from = p.mark()
		}
		p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": uri, "version": version}, "contentChanges": changes})
		if !docTextMissing {
			got, gotVersion, m, err := p.docText(uri)
			switch {
			case err != nil:
				t.Fatalf("edit %d: %v", i, err)
			case m.Error != nil && m.Error.Code == codeMethodNotFound:
				docTextMissing = true
			case m.Error != nil:
				t.Fatalf("edit %d: documentText: %s", i, m)
			case got != string(text) || gotVersion != version:
				t.Fatalf("edit %d (%v): server has version %d\n%q\nwant version %d\n%q", i, changes, gotVersion, got, version, text)
			}
		}
		if i%checkEvery == 0 || i == edits {
			compared += checkDiagnostics(t, p, from, uri, version, path, dir, text)
		}
	}
	t.Logf("%d edits in %v; final text %d bytes; %d diagnostics compared", edits, time.Since(started), len(text), compared)
	if compared == 0 {
		t.Errorf("no checkpoint had a diagnostic: the comparison proved nothing")
	}
	if docTextMissing {
		t.Errorf("this binary lacks ringside/documentText (MethodNotFound): only the diagnostics were compared, at %d checkpoints", edits/checkEvery)
	}
	p.shutdownExit()
}

// randomEdit makes one random change to text and returns the new text and
// the change as an LSP TextDocumentContentChangeEvent. The document is kept
// near its original size (origLen) by favouring deletions when it grows.
func randomEdit(t *testing.T, rng *rand.Rand, text []byte, origLen int) ([]byte, any) {
	t.Helper()
	starts, ends := lspLines(text)
	pick := func(line, min int) int {
		b := boundaries(text, starts[line], ends[line])
		var ok []int
		for _, c := range b {
			if c >= min {
				ok = append(ok, c)
			}
		}
		if rng.Intn(5) == 0 { // line ends are where CRLF bugs live
			return ok[len(ok)-1]
		}
		return ok[rng.Intn(len(ok))]
	}
	l1 := rng.Intn(len(starts))
	c1 := pick(l1, 0)
	l2, c2 := l1, c1
	insert := ""
	kind := rng.Intn(3) // 0 insert, 1 delete, 2 replace
	if len(text) > 2*origLen {
		kind = 1
	} else if len(text) < origLen/2 {
		kind = 0
	}
	if kind != 0 {
		l2 = min(l1+rng.Intn(3)/2*(1+rng.Intn(2)), len(starts)-1)
		if l2 == l1 {
			c2 = pick(l2, c1)
		} else {
			c2 = pick(l2, 0)
		}
	}
	if kind != 1 {
		insert = editFragments[rng.Intn(len(editFragments))]
		if rng.Intn(4) == 0 { // a piece of the text itself
			a := rng.Intn(len(text) + 1)
			b := min(len(text), a+rng.Intn(30))
			insert = strings.ToValidUTF8(string(text[a:b]), "")
			if strings.HasSuffix(insert, "\r") || strings.HasPrefix(insert, "\n") {
				insert = strings.Trim(insert, "\r\n") // no lone CR or split CRLF
			}
		}
	}
	a, err := offsetOf(text, l1, c1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := offsetOf(text, l2, c2)
	if err != nil {
		t.Fatal(err)
	}
	next := append(append(append([]byte(nil), text[:a]...), insert...), text[b:]...)
	change := map[string]any{
		"range": map[string]any{"start": map[string]any{"line": l1, "character": c1}, "end": map[string]any{"line": l2, "character": c2}},
		"text":  insert,
	}
	return next, change
}

// checkDiagnostics waits for the diagnostics of version and compares them
// with a fresh full analysis of text (what trigger "change" publishes):
// same codes, messages, severities and ranges, summary codes excluded.
func checkDiagnostics(t *testing.T, p *proc, from int, uri string, version int, path, root string, text []byte) int {
	t.Helper()
	pp, ok := p.diagnosticsFor(from, uri, version, replyTimeout)
	if !ok {
		t.Fatalf("no diagnostics for version %d within %v (%s)", version, replyTimeout, p.state())
	}
	if *pp.Version != version {
		t.Fatalf("diagnostics of version %d, want %d", *pp.Version, version)
	}
	res := analysis.Check(context.Background(), path, text, analysis.Env{Roots: []string{root}, Options: analysis.DefaultOptions()})
	lines := syntax.NewLines(text)
	var want []string
	for _, d := range res.Diagnostics {
		if d.Path != res.Path || analysis.SummaryCode(d.Code) {
			continue
		}
		l1, c1 := lines.UTF16(d.Span.From)
		l2, c2 := lines.UTF16(d.Span.To)
		sev := map[analysis.Severity]int{analysis.Error: 1, analysis.Warning: 2}[d.Severity]
		if sev == 0 {
			sev = 3
		}
		want = append(want, fmt.Sprintf("%d:%d-%d:%d sev%d [%s] %s", l1, c1, l2, c2, sev, d.Code, d.Message))
	}
	var got []string
	for _, d := range pp.Diagnostics {
		r := d.Range
		got = append(got, fmt.Sprintf("%d:%d-%d:%d sev%d [%s] %s", r.Start.Line, r.Start.Character, r.End.Line, r.End.Character, d.Severity, d.Code, d.Message))
	}
	sort.Strings(want)
	sort.Strings(got)
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Fatalf("version %d: published diagnostics\n%s\nwant (fresh analysis.Check)\n%s\ntext:\n%q", version, strings.Join(got, "\n"), strings.Join(want, "\n"), text)
	}
	return len(want)
}

// TestOffsetOf checks the test's own position conversion on the cases
// LSP 3.17 spells out: UTF-16 code units (a surrogate pair counts two),
// the three line ends, and a character past the line length.
func TestOffsetOf(t *testing.T) {
	text := []byte("a😀b\r\nc\rdé\nx")
	for _, c := range []struct{ line, char, want int }{
		{0, 0, 0}, {0, 1, 1}, {0, 3, 5}, {0, 4, 6}, {0, 99, 6}, // 😀 is 4 bytes, 2 units
		{1, 0, 8}, {1, 1, 9}, // after "\r\n"
		{2, 0, 10}, {2, 2, 13}, {2, 5, 13}, // after a lone "\r"; é is 2 bytes, 1 unit
		{3, 0, 14}, {3, 1, 15},
	} {
		got, err := offsetOf(text, c.line, c.char)
		if err != nil || got != c.want {
			t.Errorf("offsetOf(%d, %d) = %d, %v; want %d", c.line, c.char, got, err, c.want)
		}
	}
	if _, err := offsetOf(text, 0, 2); err == nil {
		t.Error("a character inside the surrogate pair was accepted")
	}
	if _, err := offsetOf(text, 4, 0); err == nil {
		t.Error("a line past the last was accepted")
	}
}
