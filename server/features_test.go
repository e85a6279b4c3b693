package server

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/server/lspext"
	"ringside/syntax"
)

func tdp(uri protocol.DocumentURI, p protocol.Position) protocol.TextDocumentPositionParams {
	return protocol.TextDocumentPositionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Position: p}
}

func docParams(uri protocol.DocumentURI) map[string]any {
	return map[string]any{"textDocument": map[string]any{"uri": uri}}
}

func TestIncrementalSyncUTF16(t *testing.T) {
	c := newClient(t, clientOptions{})
	// CRLF and non-ASCII before the edited spots; a syntax error shows where
	// the server thinks the text is.
	uri := c.open("sync.loop", "# Réglage 😀 du tapis\r\nsample 1 ms\r\ngain kp = 0.5 # café\r\n")
	c.waitDiags(uri, func(ds []protocol.Diagnostic) bool { return len(ds) == 0 })
	// Insert a bad token after "café" on line 2 (col 20 in UTF-16), then
	// fix the value "0.5" → "0.25".
	c.edit(uri, protocol.Range{Start: pos(2, 20), End: pos(2, 20)}, "!")
	c.edit(uri, protocol.Range{Start: pos(2, 10), End: pos(2, 13)}, "0.25")
	last := c.edit(uri, protocol.Range{Start: pos(0, 2), End: pos(0, 9)}, "Tuning")
	want := "# Tuning 😀 du tapis\r\nsample 1 ms\r\ngain kp = 0.25 # café!\r\n"
	if got := c.text(uri); got != want {
		t.Fatalf("client text %q", got)
	}
	// The last edit's own diagnostics: an earlier publication may still be
	// on its way, and the server's text is read only once it is current.
	c.waitDiagsFrom(uri, last, func(ds []protocol.Diagnostic) bool { return len(ds) == 0 })
	c.server.mu.Lock()
	got := string(c.server.ses.docs[filepath.Join(c.root, "sync.loop")].text)
	c.server.mu.Unlock()
	if got != want {
		t.Errorf("server text %q, want %q", got, want)
	}
	// a real error after the non-ASCII comment: its range is in UTF-16
	c.edit(uri, protocol.Range{Start: pos(0, 0), End: pos(0, 0)}, "gain 😀x = 1 ")
	ds := c.waitDiags(uri, hasCode(analysis.CodeSyntax))
	if ds[0].Range.Start.Line != 0 || ds[0].Range.Start.Character != 5 {
		t.Errorf("syntax error at %+v: %s", ds[0].Range, ds[0].Message)
	}
}

func TestPositionEncodingNegotiated(t *testing.T) {
	text := "use \"plänts/none.loop\"\n"
	var ends []uint32
	for _, enc := range []string{"utf-8", "utf-16", "utf-32"} {
		c := newClient(t, clientOptions{caps: map[string]any{"general": map[string]any{"positionEncodings": []string{enc, "utf-16"}}}})
		if c.encoding != enc {
			t.Fatalf("negotiated %q, want %q", c.encoding, enc)
		}
		uri := c.open("enc.loop", text)
		ds := c.waitDiags(uri, hasCode(analysis.CodeUseNotFound))
		ends = append(ends, findCode(ds, analysis.CodeUseNotFound).Range.End.Character)
	}
	// `"plänts/none.loop"` ends after 23 bytes, 22 UTF-16 units, 22 code points
	if ends[0] != 23 || ends[1] != 22 || ends[2] != 22 {
		t.Errorf("range ends %v, want [23 22 22]", ends)
	}
	c := newClient(t, clientOptions{})
	if c.encoding != lspext.EncodingUTF16 {
		t.Errorf("default encoding %q", c.encoding)
	}
}

func TestDefinitionReferencesRename(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("unstable.loop")
	belt := c.uri("plants/belt.loop")
	var locs []protocol.Location
	if err := c.call(protocol.MethodTextDocumentDefinition, tdp(uri, c.posOf(uri, "belt\n", 0, 2)), &locs); err != nil || len(locs) != 1 {
		t.Fatalf("definition: %v %v", locs, err)
	}
	if locs[0].URI != belt || locs[0].Range != (protocol.Range{Start: pos(3, 6), End: pos(3, 10)}) {
		t.Errorf("definition of belt = %+v", locs[0])
	}
	// kp: declared in belt.loop, used in unstable.loop's speed block
	var refs []protocol.Location
	p := protocol.ReferenceParams{TextDocumentPositionParams: tdp(uri, c.posOf(uri, "kp +", 0, 1))}
	p.Context.IncludeDeclaration = true
	if err := c.call(protocol.MethodTextDocumentReferences, p, &refs); err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, r := range refs {
		got = append(got, filepath.Base(string(r.URI))+":"+itoa(int(r.Range.Start.Line)))
	}
	sort.Strings(got)
	if strings.Join(got, " ") != "belt.loop:2 unstable.loop:4" {
		t.Errorf("references of kp: %v", got)
	}
	// rename ki (own) and kp (used file)
	var we protocol.WorkspaceEdit
	if err := c.call(protocol.MethodTextDocumentRename, protocol.RenameParams{TextDocumentPositionParams: tdp(uri, c.posOf(uri, "kp +", 0, 0)), NewName: "k_prop"}, &we); err != nil {
		t.Fatal(err)
	}
	if len(we.Changes[uri]) != 1 || len(we.Changes[belt]) != 1 || we.Changes[belt][0].NewText != "k_prop" {
		t.Errorf("rename edits %+v", we.Changes)
	}
	for _, bad := range []struct{ name, want string }{{"gain", "keyword"}, {"z", "transform variable"}, {"ki", "already declared"}, {"belt_speed", "loop"}, {"2x", "not a name"}} {
		err := c.call(protocol.MethodTextDocumentRename, protocol.RenameParams{TextDocumentPositionParams: tdp(uri, c.posOf(uri, "kp +", 0, 0)), NewName: bad.name}, nil)
		if err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("rename to %q: %v, want error with %q", bad.name, err, bad.want)
		}
	}
	// rename applied, then re-checked: still the same diagnostics
	c.open("plants/belt.loop")
	c.applyEdit(&we)
	c.waitDiags(uri, anyDiags)
	if !strings.Contains(c.text(uri), "k_prop + ki") || !strings.Contains(c.text(belt), "gain k_prop = 0.8") {
		t.Errorf("after rename:\n%s\n%s", c.text(uri), c.text(belt))
	}
	c.save(uri)
	ds := c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
	if findCode(ds, analysis.CodeUnknownName) != nil {
		t.Errorf("rename left an unknown name: %v", gotDiagnostics(ds))
	}
}

func itoa(i int) string { b, _ := json.Marshal(i); return string(b) }

func TestSymbols(t *testing.T) {
	c := newClient(t, clientOptions{caps: map[string]any{"window": map[string]any{"workDoneProgress": true}}})
	uri := c.open("unstable.loop")
	var syms []protocol.DocumentSymbol
	if err := c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(uri), &syms); err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, s := range syms {
		names = append(names, s.Name+"/"+itoa(int(s.Kind)))
	}
	if strings.Join(names, " ") != "ki/14 speed/12 enc/12 belt_speed/2" || len(syms[3].Children) != 2 {
		t.Errorf("outline %v %+v", names, syms)
	}
	// the start-up scan reports progress begin … end
	var kinds []string
	for len(kinds) == 0 || kinds[len(kinds)-1] != "end" {
		select {
		case raw := <-c.progress:
			var p struct {
				Value struct{ Kind string } `json:"value"`
			}
			json.Unmarshal(raw, &p)
			kinds = append(kinds, p.Value.Kind)
		case <-timeoutCh():
			t.Fatalf("progress %v", kinds)
		}
	}
	if kinds[0] != "begin" {
		t.Errorf("progress kinds %v", kinds)
	}
	var ws []protocol.SymbolInformation
	if err := c.call(protocol.MethodWorkspaceSymbol, protocol.WorkspaceSymbolParams{Query: "BELT"}, &ws); err != nil {
		t.Fatal(err)
	}
	names = nil
	for _, s := range ws {
		names = append(names, s.ContainerName+":"+s.Name)
	}
	sort.Strings(names)
	if strings.Join(names, " ") != "belt.loop:belt stable.loop:belt unstable.loop:belt_speed" {
		t.Errorf("workspace symbols %v", names)
	}
}

func TestCompletion(t *testing.T) {
	c := newClient(t, clientOptions{})
	base := "use \"plants/belt.loop\"\ngain ki = 4\nblock d = z^-1\nloop l {\n  forward d\n}\n"
	for _, tc := range []struct {
		line, want, not string
	}{
		{"", "block", "forward"},
		{"block p = 1 / (s + 1) via ", "zoh foh tustin matched", "block"},
		{"sample 1 ", "ms", "dB"},
		{"gain k2 = 1 ", "min max vary", ""},
		{"gain k2 = 1 vary 0.5 ", "to", "max"},
		{"gain k2 = 1 max 3 ", "min", "vary"},
		{"block q = ki * ", "belt d kp s z", "zoh"},
		{"block q = 2 / (s + 1) via tustin ", "prewarp", ""},
		{"realize ", "d", "forward"},
		{"realize d as ", "direct sections delta", "zoh"},
		{"realize d as sections in ", "float64 float32 q15 q31 q1.14", "zoh"},
	} {
		text := base + tc.line
		uri := c.open("comp.loop", text)
		var list protocol.CompletionList
		if err := c.call(protocol.MethodTextDocumentCompletion, tdp(uri, pos(6, len(tc.line))), &list); err != nil {
			t.Fatal(err)
		}
		checkItems(t, tc.line, list, tc.want, tc.not)
	}
	// inside the loop
	for _, tc := range []struct {
		line, want, not string
	}{
		{"  ", "forward feedback sign require", "block"},
		{"  sign ", "negative positive", ""},
		{"  require ", "gain_margin phase_margin delay_margin radius damping peak_sensitivity overshoot settling disk_margin", ""},
		{"  require overshoot <= 10 ", "%", "ms"},
		{"  feedback ", "belt d ki kp", "s"},
	} {
		text := "use \"plants/belt.loop\"\ngain ki = 4\nblock d = z^-1\nloop l {\n" + tc.line + "\n}\n"
		uri := c.open("comp2.loop", text)
		var list protocol.CompletionList
		if err := c.call(protocol.MethodTextDocumentCompletion, tdp(uri, pos(4, len(tc.line))), &list); err != nil {
			t.Fatal(err)
		}
		checkItems(t, tc.line, list, tc.want, tc.not)
	}
}

func checkItems(t *testing.T, ctx string, list protocol.CompletionList, want, not string) {
	t.Helper()
	have := map[string]bool{}
	for _, it := range list.Items {
		have[it.Label] = true
	}
	for _, w := range strings.Fields(want) {
		if !have[w] {
			t.Errorf("completion after %q lacks %q (got %v)", ctx, w, list.Items)
		}
	}
	for _, w := range strings.Fields(not) {
		if have[w] {
			t.Errorf("completion after %q offers %q", ctx, w)
		}
	}
}

func TestFormatting(t *testing.T) {
	c := newClient(t, clientOptions{})
	src := "sample 1 ms\ngain  kp=0.5\ngain ki2 = 3  # integral\n\n\n\nblock c = kp+ki2*z/(z-1)\nloop l {\n forward c\n}\n"
	uri := c.open("fmt.loop", src)
	var edits []protocol.TextEdit
	if err := c.call(protocol.MethodTextDocumentFormatting, docParams(uri), &edits); err != nil {
		t.Fatal(err)
	}
	want, err := syntax.Format([]byte(src))
	if err != nil {
		t.Fatal(err)
	}
	if len(edits) == 0 || len(edits) > 5 {
		t.Errorf("%d edits: %+v", len(edits), edits)
	}
	for _, e := range edits {
		if e.Range.Start.Line == 0 {
			t.Errorf("edit touches the already formatted first line: %+v", e)
		}
	}
	c.applyEdit(&protocol.WorkspaceEdit{Changes: map[protocol.DocumentURI][]protocol.TextEdit{uri: edits}})
	if got := c.text(uri); got != string(want) {
		t.Errorf("formatted:\n%q\nwant:\n%q", got, want)
	}
	// again: nothing to do
	if err := c.call(protocol.MethodTextDocumentFormatting, docParams(uri), &edits); err != nil || len(edits) != 0 {
		t.Errorf("second format: %v %v", edits, err)
	}
	// syntax errors: no edits
	bad := c.open("bad.loop", "gain  kp = (\n")
	if err := c.call(protocol.MethodTextDocumentFormatting, docParams(bad), &edits); err != nil || len(edits) != 0 {
		t.Errorf("format with syntax errors: %v %v", edits, err)
	}
	// range: only the block line changes; CRLF kept
	crlf := c.open("crlf.loop", "gain  kp=0.5\r\nblock c = kp*z^-1\r\ngain x=1\r\n")
	p := map[string]any{"textDocument": map[string]any{"uri": crlf}, "range": protocol.Range{Start: pos(1, 0), End: pos(1, 3)}}
	if err := c.call(protocol.MethodTextDocumentRangeFormatting, p, &edits); err != nil {
		t.Fatal(err)
	}
	c.applyEdit(&protocol.WorkspaceEdit{Changes: map[protocol.DocumentURI][]protocol.TextEdit{crlf: edits}})
	if got := c.text(crlf); got != "gain  kp=0.5\r\nblock c = kp * z^-1\r\ngain x=1\r\n" {
		t.Errorf("range formatted: %q", got)
	}
}

func TestSemanticTokens(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("sem.loop", "# é\nsample 1 ms\ngain kp = 2\nblock c = kp * z^-1 via zoh\nloop l {\n  forward c\n  require overshoot <= 5 %\n}\nrealize c as sections in q1.14\n")
	var st protocol.SemanticTokens
	if err := c.call(protocol.MethodSemanticTokensFull, docParams(uri), &st); err != nil {
		t.Fatal(err)
	}
	if len(st.Data)%5 != 0 {
		t.Fatalf("data length %d", len(st.Data))
	}
	var got []string
	line, col := uint32(0), uint32(0)
	text := strings.Split(c.text(uri), "\n")
	for i := 0; i < len(st.Data); i += 5 {
		if st.Data[i] > 0 {
			line += st.Data[i]
			col = st.Data[i+1]
		} else {
			col += st.Data[i+1]
		}
		r := []rune(text[line]) // ASCII or BMP only: UTF-16 units = runes
		got = append(got, string(r[col:col+st.Data[i+2]])+"="+tokenTypes[st.Data[i+3]])
	}
	joined := strings.Join(got, " ")
	for _, want := range []string{"# é=comment", "sample=keyword", "1=number", "ms=type", "kp=parameter", "c=function", "z=keyword", "zoh=enumMember", "l=variable", "forward=keyword", "overshoot=property", "<==operator", "%=type",
		"realize=keyword", "as=keyword", "sections=enumMember", "in=keyword", "q1.14=type"} {
		if !strings.Contains(" "+joined+" ", " "+want+" ") {
			t.Errorf("semantic tokens lack %q:\n%s", want, joined)
		}
	}
}

func TestFoldingLensInlay(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("stable.loop", "# one\n# two\n"+readFile(t, c.root, "stable.loop"))
	var folds []protocol.FoldingRange
	if err := c.call(protocol.MethodTextDocumentFoldingRange, docParams(uri), &folds); err != nil {
		t.Fatal(err)
	}
	if len(folds) != 2 || folds[0] != (protocol.FoldingRange{StartLine: 7, EndLine: 9, Kind: "region"}) || folds[1] != (protocol.FoldingRange{StartLine: 0, EndLine: 1, Kind: "comment"}) {
		t.Errorf("folding %+v", folds)
	}
	res := checkFile(t, c.root, "stable.loop", false)
	var lenses []protocol.CodeLens
	if err := c.call(protocol.MethodTextDocumentCodeLens, docParams(uri), &lenses); err != nil {
		t.Fatal(err)
	}
	if len(lenses) != 2 || lenses[0].Command.Title != res.Loops[0].Verdict() || !strings.HasPrefix(lenses[0].Command.Title, "stable, GM 54 dB, PM 89.1°") ||
		lenses[1].Command.Command != plotCommand || lenses[0].Range.Start.Line != 7 {
		t.Errorf("lenses %+v (verdict %q)", lenses, res.Loops[0].Verdict())
	}
	var hints []lspext.InlayHint
	if err := c.call(lspext.MethodInlayHint, lspext.InlayHintParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: protocol.Range{Start: pos(0, 0), End: pos(10, 0)}}, &hints); err != nil {
		t.Fatal(err)
	}
	want := []string{}
	for _, b := range res.Blocks {
		want = append(want, " |p|max "+maxRadiusText(b))
	}
	// the stable loop shows its verdict too
	want = append(want, res.Loops[0].Verdict())
	var labels []string
	for _, h := range hints {
		labels = append(labels, h.Label)
	}
	if strings.Join(labels, ",") != strings.Join(want, ",") || len(hints) != 3 || hints[0].Position != pos(4, 41) || hints[2].Position.Line != 7 {
		t.Errorf("inlay hints %+v, want labels %v", hints, want)
	}
	// belt's poles: 40/(s²+9s+40) has |s| = √40 rad/s, so the ZOH poles
	// have radius e^{-4.5·T} = e^{-0.0045} ≈ 0.99551 (z = e^{sT}, Re s = −4.5).
	if labels[0] != " |p|max 0.9955" {
		t.Errorf("belt radius label %q", labels[0])
	}
}

func TestPlotCommand(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("stable.loop")
	var res plotResult
	arg := map[string]any{"uri": uri, "write": false}
	if err := c.call(protocol.MethodWorkspaceExecuteCommand, map[string]any{"command": plotCommand, "arguments": []any{arg}}, &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Loops) != 1 || res.Loops[0].Name != "speed" || !strings.Contains(res.Loops[0].SVG, "<svg") || !strings.HasPrefix(strings.ToLower(res.HTML), "<!doctype html>") || len(res.Written) != 0 {
		t.Errorf("plot: %d loops, html %.40q, written %v", len(res.Loops), res.HTML, res.Written)
	}
	html := filepath.Join(c.root, "stable.html")
	if _, err := os.Stat(html); err == nil {
		t.Fatalf("write=false wrote %s", html)
	}
	arg["write"] = true
	arg["loop"] = "speed"
	if err := c.call(protocol.MethodWorkspaceExecuteCommand, map[string]any{"command": plotCommand, "arguments": []any{arg}}, &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Written) != 1 || res.Written[0] != html {
		t.Errorf("written %v", res.Written)
	}
	if b, err := os.ReadFile(html); err != nil || string(b) != res.HTML {
		t.Errorf("written page differs: %v", err)
	}
	arg["loop"] = "nope"
	if err := c.call(protocol.MethodWorkspaceExecuteCommand, map[string]any{"command": plotCommand, "arguments": []any{arg}}, nil); err == nil || !strings.Contains(err.Error(), `no loop "nope"`) {
		t.Errorf("unknown loop: %v", err)
	}
}

func TestCancelRequest(t *testing.T) {
	started := make(chan struct{})
	requestHandlers["test/waitForCancel"] = func(s *Server, ctx context.Context, _ json.RawMessage) (any, error) {
		async(ctx)
		close(started)
		<-ctx.Done()
		return nil, errCancelled
	}
	defer delete(requestHandlers, "test/waitForCancel")
	c := newClient(t, clientOptions{})
	errc := make(chan error, 1)
	go func() { errc <- c.call("test/waitForCancel", map[string]any{}, nil) }()
	<-started
	// the pending call is the client's first id after initialize: find it by
	// cancelling every id the server holds (one).
	c.server.inflightMu.Lock()
	var ids []requestID
	for id := range c.server.inflight {
		ids = append(ids, id)
	}
	c.server.inflightMu.Unlock()
	if len(ids) != 1 {
		t.Fatalf("in flight: %v", ids)
	}
	n, _ := ids[0].Number()
	c.notify(protocol.MethodCancelRequest, map[string]any{"id": n})
	if err := <-errc; rpcCode(err) != protocol.CodeRequestCancelled {
		t.Errorf("cancelled request: %v, want -32800", err)
	}
	// analysis itself is cancellable: a cancelled context gives no result
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := c.server.snapshot().check(ctx, filepath.Join(c.root, "unstable.loop"), true); err != errCancelled {
		t.Errorf("check with a cancelled context: %v", err)
	}
}

func TestPanicIsReportedAndSurvived(t *testing.T) {
	requestHandlers["test/panic"] = func(s *Server, ctx context.Context, _ json.RawMessage) (any, error) {
		var none []int
		_ = none[len(none)] // index out of range: a panic on purpose
		return nil, nil
	}
	defer delete(requestHandlers, "test/panic")
	c := newClient(t, clientOptions{bugsOK: true})
	if err := c.call("test/panic", map[string]any{}, nil); rpcCode(err) != jsonrpc2.InternalError {
		t.Errorf("panicking handler: %v, want InternalError", err)
	}
	c.mu.Lock()
	n := len(c.bugs)
	c.mu.Unlock()
	if n != 1 {
		t.Errorf("%d bug reports, want 1", n)
	}
	uri := c.open("stable.loop")
	var syms []protocol.DocumentSymbol
	if err := c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(uri), &syms); err != nil || len(syms) == 0 {
		t.Errorf("server unusable after a panic: %v", err)
	}
}

func TestLayering(t *testing.T) {
	// analysis and syntax must not import the server (the layering of
	// STYLE.md); the server's protocol package must not know .loop files.
	for _, dir := range []string{"../analysis", "../syntax", "lspext"} {
		err := filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
			if err != nil || info.IsDir() || !strings.HasSuffix(p, ".go") {
				return err
			}
			b, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			s := string(b)
			if strings.Contains(s, "\"ringside/server") && !strings.HasPrefix(dir, "lspext") ||
				dir == "lspext" && (strings.Contains(s, "\"ringside/analysis") || strings.Contains(s, "\"ringside/syntax")) {
				t.Errorf("%s imports across the layering", p)
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
	}
}

func TestDocumentText(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("stable.loop")
	c.edit(uri, protocol.Range{Start: pos(0, 0), End: pos(0, 0)}, "# first\n")
	v := c.edit(uri, protocol.Range{Start: pos(1, 2), End: pos(1, 4)}, "é")
	var got lspext.DocumentText
	if err := c.call(lspext.MethodDocumentText, map[string]any{"uri": uri}, &got); err != nil {
		t.Fatalf("documentText: %v", err)
	}
	if got.URI != uri || got.Version != v || got.Text != c.text(uri) {
		t.Errorf("documentText = %+v, want version %d text %q", got, v, c.text(uri))
	}
	if err := c.call(lspext.MethodDocumentText, map[string]any{"uri": c.uri("unstable.loop")}, nil); rpcCode(err) != jsonrpc2.InvalidParams {
		t.Errorf("documentText of a closed file: %v, want InvalidParams", err)
	}
	if err := c.call(lspext.MethodDocumentText, map[string]any{"uri": "untitled:x"}, nil); rpcCode(err) != jsonrpc2.InvalidParams {
		t.Errorf("documentText of a non-file URI: %v, want InvalidParams", err)
	}
}

// Hover on a realize line shows the rounded coefficients, the pole shift
// and the headroom computed by the analysis.
func TestRealizeHover(t *testing.T) {
	c := newClient(t, clientOptions{})
	text := "sample 1 ms\nblock lp = 0.02 / (z^2 - 1.8z + 0.82)\nrealize lp as direct in q1.14\n"
	uri := c.open("rz.loop", text)
	var h protocol.Hover
	if err := c.call(protocol.MethodTextDocumentHover, tdp(uri, pos(2, 3)), &h); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"realize lp", "direct in q1.14", "0.0200195", "-1.79999", "max pole shift", "no overflow for inputs up to"} {
		if !strings.Contains(h.Contents.Value, want) {
			t.Errorf("hover lacks %q:\n%s", want, h.Contents.Value)
		}
	}
	// The block's own hover carries the pole shift too. In q1.14, a1 = −1.8
	// rounds to −29491/16384 and a2 = 0.82 to 13435/16384, so the poles
	// 0.9 ± 0.1j move to a1/−2 ± j·√(a2 − a1²/4) = 0.8999939 ± 0.1000915j:
	// a shift of 9.17e-5 (quadratic formula).
	if err := c.call(protocol.MethodTextDocumentHover, tdp(uri, pos(1, 7)), &h); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(h.Contents.Value, "**realized** as direct in q1.14: max pole shift 9.1714e-5, rounded poles inside the unit circle; no overflow for inputs up to |x| = 1.7717") {
		t.Errorf("block hover:\n%s", h.Contents.Value)
	}
}

// The loop hover adds the loop's figures with its realized blocks in place.
func TestRealizedLoopHover(t *testing.T) {
	c := newClient(t, clientOptions{})
	text := "sample 1 ms\nblock lp = 0.1 / (z - 0.9)\nrealize lp as direct in q0.3\nloop coarse {\n  forward lp\n}\n"
	uri := c.open("rzl.loop", text)
	var h protocol.Hover
	if err := c.call(protocol.MethodTextDocumentHover, tdp(uri, pos(3, 6)), &h); err != nil {
		t.Fatal(err)
	}
	// q0.3: z − 0.875 + 0.125 closes at z = 0.75.
	if !strings.Contains(h.Contents.Value, "**realized** (lp as direct in q0.3): stable, largest pole radius 0.75") {
		t.Errorf("loop hover:\n%s", h.Contents.Value)
	}
}

// A loop whose closed-loop poles cannot be decided (a five-fold pole at
// z = 1 beside 1/4, expanded: (z − 1)^5 (z − 1/4) = 0 with binary
// coefficients) is not called unstable in the hover, and shows no step.
func TestUndecidedLoopHover(t *testing.T) {
	c := newClient(t, clientOptions{})
	text := "sample 1 ms\nblock n = (-5.25z^5 + 11.25z^4 - 12.5z^3 + 7.5z^2 - 2.25z + 0.25) / z^6\nloop l {\n  forward n\n}\n"
	uri := c.open("undecided.loop", text)
	var h protocol.Hover
	if err := c.call(protocol.MethodTextDocumentHover, tdp(uri, pos(2, 6)), &h); err != nil {
		t.Fatal(err)
	}
	v := h.Contents.Value
	if !strings.Contains(v, "UNDECIDED") || !strings.Contains(v, "Step: none (stability undecided") || strings.Contains(v, "not stable)") {
		t.Errorf("loop hover:\n%s", v)
	}
}
