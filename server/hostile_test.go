package server

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/server/lspext"
	"ringside/syntax"
)

// Renaming k to e3 where `2k` is written must not turn it into the number
// 2e3: the edited text reads back as the same tree with the new name.
func TestRenameKeepsMeaning(t *testing.T) {
	c := newClient(t, clientOptions{})
	src := "sample 1 ms\ngain k = 0.5\nblock c2 = 2k / (z - 0.5)\nloop l {\n  forward c2\n}\n"
	uri := c.open("r.loop", src)
	c.waitDiags(uri, anyDiags)
	var we protocol.WorkspaceEdit
	if err := c.call(protocol.MethodTextDocumentRename, protocol.RenameParams{TextDocumentPositionParams: tdp(uri, c.posOf(uri, "k =", 0, 0)), NewName: "e3"}, &we); err != nil {
		t.Fatal(err)
	}
	c.applyEdit(&we)
	out := c.text(uri)
	if strings.Contains(out, "2e3") {
		t.Fatalf("rename wrote a number:\n%s", out)
	}
	if err := syntax.SameTree([]byte(src), []byte(out), map[string]string{"k": "e3"}); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
}

// The plot page is written only inside the workspace, never through a
// symbolic link, and atomically.
func TestPlotPageWriteConfined(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("stable.loop")
	victim := filepath.Join(t.TempDir(), "victim.txt")
	os.WriteFile(victim, []byte("keep me"), 0o644)
	if err := os.Symlink(victim, filepath.Join(c.root, "stable.html")); err != nil {
		t.Skip(err)
	}
	args := map[string]any{"command": plotCommand, "arguments": []any{map[string]any{"uri": uri, "write": true}}}
	err := c.call(protocol.MethodWorkspaceExecuteCommand, args, nil)
	if err == nil || !strings.Contains(err.Error(), "symbolic link") {
		t.Fatalf("write through a link: %v", err)
	}
	if b, _ := os.ReadFile(victim); string(b) != "keep me" {
		t.Fatalf("the link's target was overwritten: %q", b)
	}
	// A document outside every workspace folder gets no page beside it.
	outside := t.TempDir()
	out := filepath.Join(outside, "far.loop")
	os.WriteFile(out, []byte("sample 1 ms\nblock p = 0.5/(z-0.5)\nloop l {\n  forward p\n}\n"), 0o644)
	args["arguments"] = []any{map[string]any{"uri": pathURI(out), "write": true}}
	if err := c.call(protocol.MethodWorkspaceExecuteCommand, args, nil); err == nil || !strings.Contains(err.Error(), "outside the workspace") {
		t.Fatalf("write outside the workspace: %v", err)
	}
	if _, err := os.Stat(filepath.Join(outside, "far.html")); err == nil {
		t.Fatal("page written outside the workspace")
	}
	// A plain write works and leaves no temporary file.
	os.Remove(filepath.Join(c.root, "stable.html"))
	var res plotResult
	args["arguments"] = []any{map[string]any{"uri": uri, "write": true}}
	if err := c.call(protocol.MethodWorkspaceExecuteCommand, args, &res); err != nil || len(res.Written) != 1 {
		t.Fatalf("plain write: %v %v", err, res.Written)
	}
	entries, _ := os.ReadDir(c.root)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary file left: %s", e.Name())
		}
	}
}

// A FIFO reached by a request, or by a `use` in an open document, is
// refused at once and says so; later requests are answered.
func TestFIFONeverBlocks(t *testing.T) {
	c := newClient(t, clientOptions{})
	fifo := filepath.Join(c.root, "pipe.loop")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		err := c.call(protocol.MethodTextDocumentHover, tdp(pathURI(fifo), protocol.Position{}), nil)
		if err == nil || !strings.Contains(err.Error(), "FIFO") {
			t.Errorf("hover on a FIFO: %v", err)
		}
		uri := c.open("user.loop", "use \"pipe.loop\"\nsample 1 ms\n")
		ds := c.waitDiags(uri, hasCode("use-not-found"))
		if d := findCode(ds, "use-not-found"); !strings.Contains(d.Message, "FIFO") {
			t.Errorf("use of a FIFO: %s", d.Message)
		}
		var syms []protocol.SymbolInformation
		if err := c.call(protocol.MethodWorkspaceSymbol, map[string]any{"query": ""}, &syms); err != nil {
			t.Errorf("workspace symbols: %v", err)
		}
		var refs []protocol.Location
		if err := c.call(protocol.MethodTextDocumentReferences, map[string]any{"textDocument": map[string]any{"uri": c.uri("stable.loop")},
			"position": protocol.Position{Line: 0}, "context": map[string]any{"includeDeclaration": true}}, &refs); err != nil {
			t.Errorf("references: %v", err)
		}
	}()
	select {
	case <-done:
	case <-time.After(waitTimeout):
		t.Fatal("a FIFO held the server")
	}
}

// bigFile is n gain lines: a large document for the symbol requests.
func bigFile(n int) string {
	var b strings.Builder
	for i := range n {
		fmt.Fprintf(&b, "gain g%d = %d\n", i, i+1)
	}
	return b.String()
}

// A long request does not hold the read loop: a hover sent after the
// symbols of a large document is answered first.
func TestLongRequestDoesNotHoldReadLoop(t *testing.T) {
	c := newClient(t, clientOptions{})
	big := c.open("big.loop", bigFile(45000))
	small := c.open("stable.loop")
	// The symbols request holds once it has its snapshot, until the hover
	// is answered: were the read loop still held, the hover never would be.
	started, proceed := make(chan struct{}), make(chan struct{})
	release := sync.OnceFunc(func() { close(proceed) })
	defer release() // a failing check must not leave the request held
	c.server.afterSnapshot = holdFirst(started, proceed)
	order := make(chan string, 2)
	go func() {
		c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(big), nil)
		order <- "symbols"
	}()
	<-started
	hovered := make(chan struct{})
	go func() {
		c.call(protocol.MethodTextDocumentHover, tdp(small, c.posOf(small, "loop", 0, 6)), nil)
		close(hovered)
	}()
	select {
	case <-hovered:
	case <-time.After(waitTimeout):
		release()
		t.Fatal("no hover while the symbols request runs: the read loop was held")
	}
	release()
	if first := <-order; first != "symbols" {
		t.Fatalf("unexpected %s", first)
	}
}

// An edit of a document cancels the requests still working on it
// (ContentModified), rather than answering for text that is gone.
func TestEditSupersedesRequest(t *testing.T) {
	c := newClient(t, clientOptions{})
	text := bigFile(45000)
	big := c.open("big.loop", text)
	// The request holds at its snapshot until the edit has been taken in,
	// so the order does not depend on how fast either side runs.
	started, proceed := make(chan struct{}), make(chan struct{})
	release := sync.OnceFunc(func() { close(proceed) })
	defer release() // a failing check must not leave the request held
	c.server.afterSnapshot = holdFirst(started, proceed)
	errc := make(chan error, 1)
	go func() { errc <- c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(big), nil) }()
	<-started
	v := c.replace(big, "gain a = 1\n")
	c.waitVersion(big, v)
	release()
	err := <-errc
	var je *jsonrpc2.Error
	if err == nil || !asRPC(err, &je) || je.Code != -32801 {
		t.Fatalf("symbols of a document edited meanwhile: %v, want ContentModified", err)
	}
}

func asRPC(err error, je **jsonrpc2.Error) bool {
	e, ok := err.(*jsonrpc2.Error)
	*je = e
	return ok
}

// A refused setting is shown to the user and the old settings stay.
func TestBadSettingsShown(t *testing.T) {
	c := newClient(t, clientOptions{init: map[string]any{"initializationOptions": map[string]any{"gainMarginDb": "NaN"}}})
	select {
	case m := <-c.shown:
		if !strings.Contains(m, "gainMarginDb") {
			t.Errorf("message %q", m)
		}
	case <-time.After(waitTimeout):
		t.Fatal("no window/showMessage for a bad initializationOption")
	}
	for _, bad := range []map[string]any{{"phaseMarginDeg": 400}, {"tolerance": -1}, {"ringside": map[string]any{"trigger": "sometimes"}}} {
		c.notify(protocol.MethodWorkspaceDidChangeConfiguration, map[string]any{"settings": bad})
		select {
		case m := <-c.shown:
			if !strings.Contains(m, "stay") {
				t.Errorf("message %q", m)
			}
		case <-time.After(waitTimeout):
			t.Fatalf("no window/showMessage for %v", bad)
		}
	}
	c.mu.Lock()
	st := c.server.ses.settings
	c.mu.Unlock()
	if st != defaultSettings() {
		t.Errorf("settings changed to %+v", st)
	}
}

// A lone CR ends a line (LSP 3.17): an edit at line 1 of a CR-only
// document lands on line 1.
func TestCROnlyDocument(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("cr.loop", "sample 1 ms\rgain k = 0.5\rblock p = k/(z - 0.5)\rloop l {\r  forward p\r}\r")
	c.edit(uri, protocol.Range{Start: protocol.Position{Line: 1, Character: 9}, End: protocol.Position{Line: 1, Character: 12}}, "0.25")
	var doc json.RawMessage
	if err := c.call("ringside/documentText", map[string]any{"uri": uri}, &doc); err != nil {
		t.Fatal(err)
	}
	var got struct {
		Text string `json:"text"`
	}
	json.Unmarshal(doc, &got)
	if !strings.Contains(got.Text, "gain k = 0.25\r") {
		t.Fatalf("edit landed elsewhere: %q", got.Text)
	}
	ds := c.waitDiags(uri, anyDiags)
	for _, d := range ds {
		if d.Severity == protocol.DiagnosticSeverityError {
			t.Errorf("error in a CR-only file: %s", d.Message)
		}
	}
}

// An open buffer over the size limit is not served: memory stays bounded.
func TestOversizeBufferRefused(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("huge.loop", bigFile(70000))
	err := c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(uri), nil)
	if err == nil || !strings.Contains(err.Error(), "limit") {
		t.Fatalf("symbols of a 1.3 MB buffer: %v", err)
	}
}

// Formatting a CR-only document keeps its line breaks and edits only the
// lines that change.
func TestFormatCROnlyDocument(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("crf.loop", "sample 1 ms\rgain   k = 0.5\rblock p = k / (z - 0.5)\r")
	var edits []protocol.TextEdit
	if err := c.call(protocol.MethodTextDocumentFormatting, map[string]any{"textDocument": map[string]any{"uri": uri}, "options": map[string]any{"tabSize": 2, "insertSpaces": true}}, &edits); err != nil {
		t.Fatal(err)
	}
	if len(edits) != 1 || edits[0].Range.Start.Line != 1 {
		t.Fatalf("edits %+v, want one on line 1", edits)
	}
	c.applyEdit(&protocol.WorkspaceEdit{Changes: map[protocol.DocumentURI][]protocol.TextEdit{uri: edits}})
	if got := c.text(uri); got != "sample 1 ms\rgain k = 0.5\rblock p = k / (z - 0.5)\r" {
		t.Fatalf("formatted %q", got)
	}
}

// Many ranged changes in one notification are applied in order, each on
// the text the one before left, without copying and rescanning the whole
// text for every change (see BenchmarkManyChanges).
func TestManyChangesInOneNotification(t *testing.T) {
	c := newClient(t, clientOptions{})
	text := "a\r\nb\rc\nd"
	uri := c.open("many.loop", text)
	var changes []lspext.TextDocumentContentChangeEvent
	want := text
	for i, e := range []struct {
		l1, c1, l2, c2 uint32
		text           string
	}{{0, 1, 0, 1, "\r"}, {1, 0, 1, 0, "\n"}, {2, 0, 3, 1, "x\ny"}, {0, 0, 0, 0, "#"}} {
		r := protocol.Range{Start: protocol.Position{Line: e.l1, Character: e.c1}, End: protocol.Position{Line: e.l2, Character: e.c2}}
		changes = append(changes, lspext.TextDocumentContentChangeEvent{Range: &r, Text: e.text})
		next, err := applyChanges([]byte(want), changes[i:i+1], lspext.EncodingUTF16)
		if err != nil {
			t.Fatal(err)
		}
		want = string(next)
	}
	c.notify(protocol.MethodTextDocumentDidChange, lspext.DidChangeTextDocumentParams{TextDocument: protocol.VersionedTextDocumentIdentifier{TextDocumentIdentifier: protocol.TextDocumentIdentifier{URI: uri}, Version: 2}, ContentChanges: changes})
	var got struct {
		Text string `json:"text"`
	}
	if err := c.call("ringside/documentText", map[string]any{"uri": uri}, &got); err != nil {
		t.Fatal(err)
	}
	if got.Text != want {
		t.Fatalf("after %d changes: %q, want %q", len(changes), got.Text, want)
	}
}

// BenchmarkManyChanges applies 5,000 one-character changes in one
// notification to a 480 KB document (12 s when every change copied and
// re-indexed the whole text).
func BenchmarkManyChanges(b *testing.B) {
	text := []byte(bigFile(25000))
	var changes []lspext.TextDocumentContentChangeEvent
	for i := range 5000 {
		r := protocol.Range{Start: protocol.Position{Line: uint32(i), Character: 0}, End: protocol.Position{Line: uint32(i), Character: 0}}
		changes = append(changes, lspext.TextDocumentContentChangeEvent{Range: &r, Text: "#"})
	}
	for range b.N {
		if _, err := applyChanges(text, changes, lspext.EncodingUTF16); err != nil {
			b.Fatal(err)
		}
	}
}

// Renaming a realized block renames its realize line too, and the file
// reads back the same with the new name.
func TestRenameRealizedBlock(t *testing.T) {
	c := newClient(t, clientOptions{})
	src := "sample 1 ms\nblock n = 0.5/(z - 0.5)\nrealize n as sections in q1.14\nloop l {\n  forward n\n}\n"
	uri := c.open("rz.loop", src)
	var we protocol.WorkspaceEdit
	if err := c.call(protocol.MethodTextDocumentRename, protocol.RenameParams{TextDocumentPositionParams: tdp(uri, c.posOf(uri, "n =", 0, 0)), NewName: "notch"}, &we); err != nil {
		t.Fatal(err)
	}
	c.applyEdit(&we)
	if err := syntax.SameTree([]byte(src), []byte(c.text(uri)), map[string]string{"n": "notch"}); err != nil || !strings.Contains(c.text(uri), "realize notch as") {
		t.Fatalf("%v\n%s", err, c.text(uri))
	}
}

// holdFirst returns an afterSnapshot hook that holds the first request to
// reach it (closing started, then waiting for proceed) and lets every
// later one through.
func holdFirst(started, proceed chan struct{}) func() {
	var held atomic.Bool
	return func() {
		if held.CompareAndSwap(false, true) {
			close(started)
			<-proceed
		}
	}
}
