package conformance

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// Hostile and unlucky input, over the built binary: nothing is lost,
// nothing hangs, every output error is reported.

func openDoc(p *proc, uri, text string) {
	p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": uri, "languageId": "loop", "version": 1, "text": text}})
}

func at(uri string, line, char int) map[string]any {
	return map[string]any{"textDocument": map[string]any{"uri": uri}, "position": map[string]any{"line": line, "character": char}}
}

// textEdit is an LSP TextEdit.
type textEdit struct {
	Range   lspRange `json:"range"`
	NewText string   `json:"newText"`
}

// applyUTF16 applies edits given in UTF-16 positions to text, the way an
// editor does, with "\n", "\r\n" and "\r" all ending lines.
func applyUTF16(t *testing.T, text string, edits []textEdit) string {
	t.Helper()
	off := func(p position) int {
		line, i := 0, 0
		for line < p.Line {
			if i >= len(text) {
				t.Fatalf("line %d past the end", p.Line)
			}
			if text[i] == '\n' || text[i] == '\r' && (i+1 == len(text) || text[i+1] != '\n') {
				line++
			}
			i++
		}
		for units := 0; units < p.Character && i < len(text) && text[i] != '\n' && text[i] != '\r'; {
			r, size := []rune(text[i:])[0], len(string([]rune(text[i:])[0]))
			units++
			if r >= 0x10000 {
				units++
			}
			i += size
		}
		return i
	}
	for k := len(edits) - 1; k >= 0; k-- { // edits in order; apply from the end
		e := edits[k]
		a, b := off(e.Range.Start), off(e.Range.End)
		text = text[:a] + e.NewText + text[b:]
	}
	return text
}

// A lone CR ends a line (LSP 3.17): an edit at line 1 of a CR-only document
// lands on line 1, not at the end of the text.
func TestCROnlyDocument(t *testing.T) {
	dir := t.TempDir()
	p := start(t, dir)
	p.initialize(dir, nil)
	uri := fileURI(filepath.Join(dir, "cr.loop"))
	openDoc(p, uri, "sample 1 ms\rgain k = 0.5\rblock p = k/(z - 0.5)\r")
	p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": uri, "version": 2},
		"contentChanges": []any{map[string]any{"range": map[string]any{"start": map[string]any{"line": 1, "character": 9}, "end": map[string]any{"line": 1, "character": 12}}, "text": "0.25"}}})
	text, _, _, err := p.docText(uri)
	if err != nil || text != "sample 1 ms\rgain k = 0.25\rblock p = k/(z - 0.5)\r" {
		t.Fatalf("after the edit: %q (%v)", text, err)
	}
	p.shutdownExit()
}

// The no-sample fix on a file with a byte order mark goes after the mark.
func TestBOMFix(t *testing.T) {
	dir := t.TempDir()
	p := start(t, dir)
	p.initialize(dir, nil)
	uri := fileURI(filepath.Join(dir, "bom.loop"))
	text := "\ufeffblock p = 5 / (s + 5) via zoh\n"
	from := p.mark()
	openDoc(p, uri, text)
	pub, ok := p.diagnosticsFor(from, uri, -1, replyTimeout)
	var d *diagnostic
	for i := range pub.Diagnostics {
		if pub.Diagnostics[i].Code == "no-sample" {
			d = &pub.Diagnostics[i]
		}
	}
	if !ok || d == nil {
		t.Fatalf("no no-sample diagnostic: %+v", pub)
	}
	res := p.mustCall("textDocument/codeAction", map[string]any{"textDocument": map[string]any{"uri": uri}, "range": d.Range,
		"context": map[string]any{"diagnostics": []any{d}}})
	var actions []struct {
		Edit struct {
			Changes map[string][]textEdit `json:"changes"`
		} `json:"edit"`
	}
	json.Unmarshal(res, &actions)
	if len(actions) == 0 {
		t.Fatalf("no action: %s", res)
	}
	fixed := applyUTF16(t, text, actions[0].Edit.Changes[uri])
	if !strings.HasPrefix(fixed, "\ufeffsample 1 ms\n") {
		t.Fatalf("fixed text %q", fixed)
	}
	p.shutdownExit()
}

// Renaming k to e3 in `2k` keeps the product; it never writes 2e3.
func TestRenameNeverWritesANumber(t *testing.T) {
	dir := t.TempDir()
	p := start(t, dir)
	p.initialize(dir, nil)
	uri := fileURI(filepath.Join(dir, "r.loop"))
	text := "sample 1 ms\ngain k = 0.5\nblock c2 = 2k / (z - 0.5)\nloop l {\n  forward c2\n}\n"
	openDoc(p, uri, text)
	var we struct {
		Changes map[string][]textEdit `json:"changes"`
	}
	params := at(uri, 1, 5)
	params["newName"] = "e3"
	json.Unmarshal(p.mustCall("textDocument/rename", params), &we)
	out := applyUTF16(t, text, we.Changes[uri])
	if strings.Contains(out, "2e3") || !strings.Contains(out, "gain e3 = 0.5") {
		t.Fatalf("renamed text:\n%s", out)
	}
	for _, bad := range []string{"s", "z", "via", "2x"} {
		params["newName"] = bad
		if m, err := p.call("textDocument/rename", params); err != nil || m.Error == nil {
			t.Errorf("rename to %q: %v %s", bad, err, m.Result)
		}
	}
	p.shutdownExit()
}

// A FIFO or a device reached by a request or a `use` is refused at once,
// with what it is; the server keeps answering.
func TestNonRegularFilesNeverBlock(t *testing.T) {
	dir := t.TempDir()
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe.loop"), 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	os.WriteFile(filepath.Join(dir, "ok.loop"), []byte("sample 1 ms\ngain k = 1\n"), 0o644)
	p := start(t, dir)
	p.initialize(dir, nil)
	for _, target := range []string{filepath.Join(dir, "pipe.loop"), "/dev/zero"} {
		m, err := p.call("textDocument/hover", at(fileURI(target), 0, 0))
		if err != nil || m.Error == nil {
			t.Fatalf("hover on %s: %v %s", target, err, m.Result)
		}
		if !strings.Contains(m.Error.Message, "FIFO") && !strings.Contains(m.Error.Message, "device") {
			t.Errorf("hover on %s: %s", target, m.Error.Message)
		}
	}
	uri := fileURI(filepath.Join(dir, "user.loop"))
	from := p.mark()
	openDoc(p, uri, "use \"pipe.loop\"\nsample 1 ms\n")
	pub, ok := p.diagnosticsFor(from, uri, -1, replyTimeout)
	if !ok || len(pub.Diagnostics) == 0 || !strings.Contains(pub.Diagnostics[0].Message, "FIFO") {
		t.Fatalf("use of a FIFO: %+v", pub)
	}
	p.mustCall("workspace/symbol", map[string]any{"query": ""})
	p.mustCall("textDocument/references", map[string]any{"textDocument": map[string]any{"uri": fileURI(filepath.Join(dir, "ok.loop"))},
		"position": map[string]any{"line": 1, "character": 5}, "context": map[string]any{"includeDeclaration": true}})
	p.shutdownExit()
}

// The plot page is never written through a symbolic link.
func TestPlotPageNotThroughLink(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.loop")
	os.WriteFile(path, []byte("sample 1 ms\nblock p = 0.5/(z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	victim := filepath.Join(t.TempDir(), "victim")
	os.WriteFile(victim, []byte("keep"), 0o644)
	os.Symlink(victim, filepath.Join(dir, "a.html"))
	p := start(t, dir)
	p.initialize(dir, nil)
	m, err := p.call("workspace/executeCommand", map[string]any{"command": "ringside.plot", "arguments": []any{map[string]any{"uri": fileURI(path), "write": true}}})
	if err != nil || m.Error == nil {
		t.Fatalf("write through a link: %v, no error (%d bytes of result)", err, len(m.Result))
	}
	if b, _ := os.ReadFile(victim); string(b) != "keep" {
		t.Fatalf("target overwritten: %q", b)
	}
	p.shutdownExit()
}

// A refused setting is shown to the user.
func TestRefusedSettingShown(t *testing.T) {
	dir := t.TempDir()
	p := start(t, dir)
	from := p.mark()
	p.initialize(dir, map[string]any{"phaseMarginDeg": "NaN"})
	m, ok := p.waitFor(from, replyTimeout, func(m message) bool { return m.Method == "window/showMessage" })
	if !ok || !strings.Contains(string(m.Params), "phaseMarginDeg") {
		t.Fatalf("no window/showMessage naming the setting: %s", m.Params)
	}
	p.shutdownExit()
}

// Half a megabyte of junk gives one bounded publication.
func TestJunkDiagnosticsBounded(t *testing.T) {
	dir := t.TempDir()
	p := start(t, dir)
	p.initialize(dir, nil)
	uri := fileURI(filepath.Join(dir, "junk.loop"))
	from := p.mark()
	openDoc(p, uri, strings.Repeat("@$\n", 170000))
	pub, ok := p.diagnosticsFor(from, uri, -1, 3*replyTimeout)
	if !ok || len(pub.Diagnostics) == 0 || len(pub.Diagnostics) > 1001 {
		t.Fatalf("%d diagnostics published (ok %v)", len(pub.Diagnostics), ok)
	}
	if last := pub.Diagnostics[len(pub.Diagnostics)-1]; !strings.Contains(last.Message, "more") {
		t.Errorf("last diagnostic does not count the rest: %s", last.Message)
	}
	p.shutdownExit()
}

// ---- the command line ----

// cli runs the binary in dir and returns stdout, stderr and the exit status.
func cli(t *testing.T, dir string, stdout *os.File, args ...string) (string, string, int) {
	t.Helper()
	cmd := exec.Command(binary, args...)
	cmd.Dir = dir
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if stdout != nil {
		cmd.Stdout = stdout
	}
	done := make(chan error, 1)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { done <- cmd.Wait() }()
	select {
	case <-done:
	case <-time.After(3 * replyTimeout):
		cmd.Process.Kill()
		t.Fatalf("ringside %v did not end", args)
	}
	return out.String(), errb.String(), cmd.ProcessState.ExitCode()
}

// fmt -w that fails half-way (here a file size limit) leaves the file whole.
func TestFmtWriteAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "big.loop")
	var b strings.Builder
	for i := range 200 {
		fmt.Fprintf(&b, "gain   g%d   =   %d\n", i, i)
	}
	orig := b.String()
	os.WriteFile(path, []byte(orig), 0o640)
	os.Chmod(path, 0o640)
	cmd := exec.Command("sh", "-c", "ulimit -f 2 && exec \"$0\" fmt -w big.loop", binary)
	cmd.Dir = dir
	out, err := cmd.CombinedOutput()
	if err == nil {
		t.Fatalf("fmt -w under a 1 KiB file size limit succeeded: %s", out)
	}
	if got, _ := os.ReadFile(path); string(got) != orig {
		t.Fatalf("file damaged by a failed write (%d bytes of %d): %s", len(got), len(orig), out)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("left behind: %v", entries)
	}
	if _, _, code := cli(t, dir, nil, "fmt", "-w", "big.loop"); code != 0 {
		t.Fatalf("fmt -w: exit %d", code)
	}
	if info, _ := os.Stat(path); info.Mode().Perm() != 0o640 {
		t.Errorf("mode %v, want 0640 kept", info.Mode().Perm())
	}
}

// check's folder walk skips a FIFO, saying so; naming one is an error.
func TestCheckSkipsFIFO(t *testing.T) {
	dir := t.TempDir()
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe.loop"), 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	os.WriteFile(filepath.Join(dir, "a.loop"), []byte("sample 1 ms\nblock p = 0.5/(z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	_, stderr, code := cli(t, dir, nil, "check", ".")
	if code != 0 || !strings.Contains(stderr, "skipped") || !strings.Contains(stderr, "FIFO") {
		t.Fatalf("exit %d, stderr %q", code, stderr)
	}
	if _, stderr, code := cli(t, dir, nil, "check", "pipe.loop"); code != 2 || !strings.Contains(stderr, "FIFO") {
		t.Fatalf("naming a FIFO: exit %d, stderr %q", code, stderr)
	}
}

// Output errors are reported with exit status 2 on every output path.
func TestOutputErrorsExit2(t *testing.T) {
	full, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip(err)
	}
	defer full.Close()
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "a.loop"), []byte("sample 1 ms\nblock p = 0.5/(z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	for _, args := range [][]string{{"check", "a.loop"}, {"check", "--format", "json", "a.loop"}, {"check", "--format", "sarif", "a.loop"},
		{"fmt", "a.loop"}, {"plot", "a.loop"}} {
		if _, stderr, code := cli(t, dir, full, args...); code != 2 || stderr == "" {
			t.Errorf("%v to a full disk: exit %d, stderr %q", args, code, stderr)
		}
	}
}

// A figure too large to be a number never silences the JSON report.
func TestJSONNeverSilent(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "a.loop"), []byte("sample 10 s\nblock p = 0.5/(z - 0.5)\nloop l {\n  forward p\n  require settling <= 1e308 samples\n}\n"), 0o644)
	out, stderr, code := cli(t, dir, nil, "check", "--format", "json", "a.loop")
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil || code != 1 {
		t.Fatalf("exit %d, JSON %v, stderr %q\n%s", code, err, stderr, out)
	}
	if !strings.Contains(out, "1e308 samples") {
		t.Errorf("the message does not quote the value as written:\n%s", out)
	}
}

// SARIF artifact URIs read back, through a URI parser, as the paths.
func TestSARIFURIs(t *testing.T) {
	dir := t.TempDir()
	rel := "dir with space/my loop #1%.loop"
	os.MkdirAll(filepath.Join(dir, "dir with space"), 0o755)
	os.WriteFile(filepath.Join(dir, rel), []byte("sample -2.5 ms\n"), 0o644)
	out, _, _ := cli(t, dir, nil, "check", "--format", "sarif", rel)
	var log struct {
		Runs []struct {
			Results []struct {
				Message   struct{ Text string } `json:"message"`
				Locations []struct {
					PhysicalLocation struct {
						ArtifactLocation struct{ URI string } `json:"artifactLocation"`
					} `json:"physicalLocation"`
				} `json:"locations"`
			} `json:"results"`
		} `json:"runs"`
	}
	if err := json.Unmarshal([]byte(out), &log); err != nil || len(log.Runs) == 0 || len(log.Runs[0].Results) == 0 {
		t.Fatalf("sarif: %v\n%s", err, out)
	}
	for _, r := range log.Runs[0].Results {
		u := r.Locations[0].PhysicalLocation.ArtifactLocation.URI
		parsed, err := url.Parse(u)
		if err != nil || parsed.Fragment != "" || parsed.Path != rel {
			t.Errorf("uri %q reads back as %+v (%v)", u, parsed, err)
		}
		if strings.Contains(r.Message.Text, "2.5") && !strings.Contains(r.Message.Text, "-2.5 ms") {
			t.Errorf("message does not quote -2.5 ms as written: %s", r.Message.Text)
		}
	}
}

// With a budget too small for any loop, the summary does not point at
// errors that do not exist, and the exit status is 1 (loops undecided).
func TestBudgetTooSmall(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("sample 1 ms\nblock p = 0.5/(z - 0.5)\n")
	for i := range 50 {
		fmt.Fprintf(&b, "loop l%d {\n  forward p\n}\n", i)
	}
	os.WriteFile(filepath.Join(dir, "a.loop"), []byte(b.String()), 0o644)
	out, _, code := cli(t, dir, nil, "check", "--budget", "1ns", "a.loop")
	if code != 1 {
		t.Errorf("exit %d, want 1 for loops not analysed", code)
	}
	if strings.Contains(out, "see the errors") {
		t.Errorf("summary points at errors:\n%s", out)
	}
}

// Past the 1 MiB limit, check and fmt refuse at once; a file of junk gives
// a bounded report.
func TestLimits(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "huge.loop"), bytes.Repeat([]byte("gain a = 1\n"), 1_000_000), 0o644)
	for _, cmd := range []string{"check", "fmt"} {
		if _, stderr, code := cli(t, dir, nil, cmd, "huge.loop"); code != 2 || !strings.Contains(stderr, "limit") {
			t.Errorf("%s of 11 MB: exit %d, stderr %q", cmd, code, stderr)
		}
	}
	os.WriteFile(filepath.Join(dir, "junk.loop"), bytes.Repeat([]byte("@$\n"), 340000), 0o644)
	out, _, code := cli(t, dir, nil, "check", "--format", "json", "junk.loop")
	if code != 1 || len(out) > 1<<20 {
		t.Errorf("junk: exit %d, %d bytes of JSON", code, len(out))
	}
}

// plot -o never writes through a symbolic link.
func TestPlotOutNotThroughLink(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "a.loop"), []byte("sample 1 ms\nblock p = 0.5/(z - 0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	victim := filepath.Join(t.TempDir(), "victim")
	os.WriteFile(victim, []byte("keep"), 0o644)
	os.Symlink(victim, filepath.Join(dir, "out.html"))
	if _, stderr, code := cli(t, dir, nil, "plot", "a.loop", "-o", "out.html"); code != 2 || !strings.Contains(stderr, "symbolic link") {
		t.Errorf("exit %d, stderr %q", code, stderr)
	}
	if b, _ := os.ReadFile(victim); string(b) != "keep" {
		t.Fatalf("target overwritten")
	}
}
