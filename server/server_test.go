package server

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/server/lspext"
	"ringside/syntax"
)

func syntaxPos(i int) syntax.Pos { return syntax.Pos(i) }

func TestLifecycle(t *testing.T) {
	c := newClient(t, clientOptions{})
	// unknown method: MethodNotFound; unknown notification: ignored
	if err := c.call("ringside/noSuchThing", map[string]any{}, nil); rpcCode(err) != jsonrpc2.MethodNotFound {
		t.Errorf("unknown method: got %v, want MethodNotFound", err)
	}
	c.notify("ringside/noSuchNotification", map[string]any{})
	if err := c.call(protocol.MethodInitialize, map[string]any{"capabilities": map[string]any{}}, nil); rpcCode(err) != jsonrpc2.InvalidRequest {
		t.Errorf("second initialize: got %v, want InvalidRequest", err)
	}
	uri := c.open("stable.loop")
	var syms []protocol.DocumentSymbol
	if err := c.call(protocol.MethodTextDocumentDocumentSymbol, map[string]any{"textDocument": map[string]any{"uri": uri}}, &syms); err != nil || len(syms) == 0 {
		t.Fatalf("documentSymbol: %v %v", syms, err)
	}
	if err := c.call(protocol.MethodShutdown, nil, nil); err != nil {
		t.Fatalf("shutdown: %v", err)
	}
	if err := c.call(protocol.MethodTextDocumentHover, map[string]any{"textDocument": map[string]any{"uri": uri}, "position": pos(0, 0)}, nil); rpcCode(err) != jsonrpc2.InvalidRequest {
		t.Errorf("request after shutdown: got %v, want InvalidRequest", err)
	}
	c.notify(protocol.MethodExit, nil)
	if err := c.wait(); err != nil {
		t.Errorf("Run after shutdown+exit = %v, want nil", err)
	}
}

func TestBeforeInitialize(t *testing.T) {
	sc, cc := netPipe()
	done := make(chan error, 1)
	go func() {
		done <- Run(context.Background(), sc, sc, Config{OnBug: func(r string) { t.Errorf("bug: %s", r) }})
	}()
	conn := jsonrpc2.NewConn(jsonrpc2.NewStream(cc))
	conn.Go(context.Background(), jsonrpc2.MethodNotFoundHandler)
	defer conn.Close()
	ctx, cancel := context.WithTimeout(context.Background(), waitTimeout)
	defer cancel()
	_, err := conn.Call(ctx, protocol.MethodTextDocumentHover, json.RawMessage(`{}`), nil)
	if rpcCode(err) != jsonrpc2.ServerNotInitialized {
		t.Errorf("hover before initialize: %v, want code -32002", err)
	}
	conn.Notify(ctx, protocol.MethodExit, nil)
	select {
	case err := <-done:
		if !errors.Is(err, ErrNoShutdown) {
			t.Errorf("exit without shutdown: Run = %v, want ErrNoShutdown", err)
		}
	case <-time.After(waitTimeout):
		t.Fatal("Run did not return")
	}
}

// frame builds one Content-Length framed message.
func frame(body string) string {
	return fmt.Sprintf("Content-Length: %d\r\n\r\n%s", len(body), body)
}

func TestMainExitStatus(t *testing.T) {
	init := frame(`{"jsonrpc":"2.0","id":1,"method":"initialize","params":{"capabilities":{}}}`)
	for _, tc := range []struct {
		name, input string
		want        int
	}{
		{"clean", init + frame(`{"jsonrpc":"2.0","id":2,"method":"shutdown"}`) + frame(`{"jsonrpc":"2.0","method":"exit"}`), 0},
		{"exit without shutdown", init + frame(`{"jsonrpc":"2.0","method":"exit"}`), 1},
		{"stream ends", init, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			got := Main([]string{"--stdio", "--log-level", "error"}, strings.NewReader(tc.input), &out, &errOut)
			if got != tc.want {
				t.Errorf("Main = %d, want %d (stderr %s)", got, tc.want, errOut.String())
			}
			if !strings.HasPrefix(out.String(), "Content-Length: ") {
				t.Errorf("stdout carries more than protocol: %q", out.String())
			}
		})
	}
	var errOut bytes.Buffer
	if got := Main([]string{"--log-level", "loud"}, strings.NewReader(""), &bytes.Buffer{}, &errOut); got != 2 || !strings.Contains(errOut.String(), "log-level") {
		t.Errorf("bad flag: %d %q", got, errOut.String())
	}
}

// checkFile runs analysis the way `ringside check` does, for comparison.
func checkFile(t *testing.T, root, rel string, quick bool, opts ...analysis.Options) *analysis.Result {
	t.Helper()
	path := filepath.Join(root, rel)
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	o := analysis.DefaultOptions()
	if len(opts) > 0 {
		o = opts[0]
	}
	o.Quick = quick
	return analysis.Check(context.Background(), path, src, analysis.Env{Roots: []string{root}, Options: o})
}

// wantDiagnostics converts a result's diagnostics the way the server must.
func wantDiagnostics(t *testing.T, res *analysis.Result) []string {
	var out []string
	m := NewMapper(res.File.Src, lspext.EncodingUTF16)
	for _, d := range res.Diagnostics {
		if analysis.SummaryCode(d.Code) {
			continue
		}
		r, err := m.SpanRange(d.Span)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, fmt.Sprintf("%d:%d-%d:%d %d %s %s", r.Start.Line, r.Start.Character, r.End.Line, r.End.Character, int(severity(d.Severity)), d.Code, d.Message))
	}
	return out
}

func gotDiagnostics(ds []protocol.Diagnostic) []string {
	var out []string
	for _, d := range ds {
		out = append(out, fmt.Sprintf("%d:%d-%d:%d %d %s %s", d.Range.Start.Line, d.Range.Start.Character, d.Range.End.Line, d.Range.End.Character, int(d.Severity), d.Code, d.Message))
	}
	return out
}

// TestDiagnosticsFullOnOpen: opening a file publishes the full analysis
// (the unstable loop's error before any save); with the setting trigger
// "save" an edit publishes the quick one, and the save the full one again.
func TestDiagnosticsFullOnOpen(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("unstable.loop")
	full := c.waitDiags(uri, anyDiags)
	if got, want := strings.Join(gotDiagnostics(full), "\n"), strings.Join(wantDiagnostics(t, checkFile(t, c.root, "unstable.loop", false)), "\n"); got != want {
		t.Errorf("diagnostics on open:\n%s\nwant (as ringside check):\n%s", got, want)
	}
	for _, d := range full {
		if d.Source != "ringside" || d.Code == analysis.CodeLoopVerdict || d.Code == analysis.CodeGainLimits {
			t.Errorf("diagnostic %s: source %q (summary codes must not be published)", d.Code, d.Source)
		}
	}
	c.notify(protocol.MethodWorkspaceDidChangeConfiguration, map[string]any{"settings": map[string]any{"trigger": "save"}})
	c.replace(uri, c.text(uri)+"\n")
	quick := c.waitDiags(uri, lacksCode(analysis.CodePoleOutside))
	if got, want := strings.Join(gotDiagnostics(quick), "\n"), strings.Join(wantDiagnostics(t, checkFile(t, c.root, "unstable.loop", true)), "\n"); got != want {
		t.Errorf("quick diagnostics:\n%s\nwant (as ringside check, quick):\n%s", got, want)
	}
	c.save(uri)
	full = c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
	po := findCode(full, analysis.CodePoleOutside)
	if po.Severity != protocol.DiagnosticSeverityError || len(po.RelatedInformation) == 0 || !strings.HasSuffix(string(po.RelatedInformation[0].Location.URI), "plants/belt.loop") {
		t.Errorf("pole-outside: severity %d related %+v", int(po.Severity), po.RelatedInformation)
	}
	var actions []protocol.CodeAction
	if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: po.Range,
		Context: protocol.CodeActionContext{Diagnostics: []protocol.Diagnostic{*po}}}, &actions); err != nil || len(actions) == 0 || !strings.Contains(actions[0].Title, "11.4") {
		t.Errorf("pole-outside actions: %+v (%v)", actions, err)
	}
	if w := findCode(full, analysis.CodeBlockOnCircle); w == nil || w.Severity != protocol.DiagnosticSeverityWarning {
		t.Errorf("block-pole-on-circle missing or not a warning: %+v", w)
	}
}

func TestTriggerChangeRunsFullWhileTyping(t *testing.T) {
	c := newClient(t, clientOptions{init: map[string]any{"initializationOptions": map[string]any{"trigger": "change"}}})
	uri := c.open("unstable.loop")
	c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
	// switch back to save through didChangeConfiguration (under "ringside")
	c.notify(protocol.MethodWorkspaceDidChangeConfiguration, map[string]any{"settings": map[string]any{"ringside": map[string]any{"trigger": "save"}}})
	c.waitDiags(uri, lacksCode(analysis.CodePoleOutside))
	c.replace(uri, c.text(uri)+"\n")
	c.waitDiags(uri, lacksCode(analysis.CodePoleOutside))
}

func TestSettingsReachAnalysis(t *testing.T) {
	// stable.loop has PM 89.1° (see ringside check); requiring 95° must fail it.
	c := newClient(t, clientOptions{init: map[string]any{"initializationOptions": map[string]any{"ringside": map[string]any{"phaseMarginDeg": 95, "trigger": "change"}}}})
	uri := c.open("stable.loop")
	c.waitDiags(uri, hasCode(analysis.CodePhaseMarginLow))
	c.notify(protocol.MethodWorkspaceDidChangeConfiguration, map[string]any{"settings": map[string]any{"phaseMarginDeg": 30}})
	// every check is full (trigger change): the next publication has the
	// figures and no longer misses the phase margin
	if ds := c.waitDiags(uri, anyDiags); findCode(ds, analysis.CodePhaseMarginLow) != nil {
		t.Errorf("phase margin 30° still missed: %v", gotDiagnostics(ds))
	}
	// a bad value is refused and changes nothing
	if _, err := parseSettings(defaultSettings(), json.RawMessage(`{"tolerance": 5}`)); err == nil || !strings.Contains(err.Error(), "tolerance") {
		t.Errorf("bad tolerance accepted: %v", err)
	}
}

func TestDependentFileRechecked(t *testing.T) {
	c := newClient(t, clientOptions{init: map[string]any{"initializationOptions": map[string]any{"trigger": "change"}}})
	uri := c.open("unstable.loop")
	c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
	belt := c.open("plants/belt.loop")
	c.waitDiags(belt, anyDiags)
	// Break the used file: unstable.loop must be re-checked and say so.
	c.replace(belt, strings.Replace(c.text(belt), "gain kp = 0.8", "gain kp = (", 1))
	c.waitDiags(uri, hasCode(analysis.CodeUseErrors))
}

func TestHover(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("unstable.loop")
	hover := func(p protocol.Position) (string, bool) {
		t.Helper()
		var raw json.RawMessage
		if err := c.call(protocol.MethodTextDocumentHover, protocol.TextDocumentPositionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Position: p}, &raw); err != nil {
			t.Fatalf("hover: %v", err)
		}
		if string(raw) == "null" {
			return "", false
		}
		var h protocol.Hover
		if err := json.Unmarshal(raw, &h); err != nil {
			t.Fatal(err)
		}
		if h.Contents.Kind != "markdown" {
			t.Errorf("hover kind %q", h.Contents.Kind)
		}
		return h.Contents.Value, true
	}
	// block used in a path, declared in the used file
	belt, ok := hover(c.posOf(uri, "belt\n", 0, 1))
	for _, want := range []string{"**block belt**", "zero-order hold", "T = 1 ms", "H(s) = 40 / (s^2 + 9 s + 40)", "H(z) = ", "pole                radius  angle   ζ      ωn                    τ       mode\n", "decaying, oscillating",
		"zero    radius  angle  frequency  where\n-0.997  0.997   180°   500 Hz     inside (minimum-phase)\n", "DC gain H(1) = 1"} {
		if !ok || !strings.Contains(belt, want) {
			t.Errorf("hover on belt lacks %q:\n%s", want, belt)
		}
	}
	// Tables read as plain text: no Markdown table rows; a zero has no mode.
	if strings.Contains(belt, "|") || strings.Contains(belt[strings.Index(belt, "zero "):], "decaying") {
		t.Errorf("hover on belt has a Markdown table or a zero with a mode:\n%s", belt)
	}
	// the loop name
	loop, ok := hover(c.posOf(uri, "belt_speed", 0, 2))
	if strings.Contains(loop, "|") {
		t.Errorf("hover on loop has a Markdown table:\n%s", loop)
	}
	for _, want := range []string{"UNSTABLE", "closed-loop pole", "```\nmargin            value            at\ngain              -32.9 dB         1.01 Hz\n", "\nphase             -67.7°           4.01 Hz\n", "✗ gain_margin >= 6 dB", "missed"} {
		if !ok || !strings.Contains(loop, want) {
			t.Errorf("hover on loop lacks %q:\n%s", want, loop)
		}
	}
	// a gain, at its declaration
	gain, ok := hover(c.posOf(uri, "ki = 400", 0, 0))
	for _, want := range []string{"**gain ki** = 400", "**unstable**", "0 < ki < 15.9706 (exact)", "up to ki = 11.4"} {
		if !ok || !strings.Contains(gain, want) {
			t.Errorf("hover on gain lacks %q:\n%s", want, gain)
		}
	}
	// null on a comment, a blank line, a keyword, a number
	for _, p := range []protocol.Position{pos(0, 3), pos(2, 0), c.posOf(uri, "gain ki", 0, 1), c.posOf(uri, "400", 0, 1), c.posOf(uri, "forward", 0, 2)} {
		if h, ok := hover(p); ok {
			t.Errorf("hover at %v = %q, want null", p, h)
		}
	}
}

// changeTrigger makes every check full, so that any publication after an
// edit shows the loop figures (a quick one would lack them trivially).
var changeTrigger = clientOptions{init: map[string]any{"initializationOptions": map[string]any{"trigger": "change"}}}

func TestCodeActionFixesGain(t *testing.T) {
	c := newClient(t, changeTrigger)
	uri := c.open("unstable.loop")
	ds := c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
	d := findCode(ds, analysis.CodePoleOutside)
	var actions []protocol.CodeAction
	if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: d.Range,
		Context: protocol.CodeActionContext{Diagnostics: []protocol.Diagnostic{*d}}}, &actions); err != nil {
		t.Fatal(err)
	}
	var fix *protocol.CodeAction
	for i := range actions {
		if actions[i].Kind != protocol.QuickFix {
			t.Errorf("action kind %q", actions[i].Kind)
		}
		if strings.HasPrefix(actions[i].Title, "Set ki to 11.4") {
			fix = &actions[i]
		}
	}
	if fix == nil {
		t.Fatalf("no gain fix among %+v", actions)
	}
	v := c.applyEdit(fix.Edit)
	if !strings.Contains(c.text(uri), "gain ki = 11.4\n") {
		t.Fatalf("edit gave:\n%s", c.text(uri))
	}
	after := c.waitDiagsFrom(uri, v, anyDiags)
	if findCode(after, analysis.CodePoleOutside) != nil || findCode(after, analysis.CodeBlockOnCircle) == nil {
		t.Errorf("after the fix: %v", gotDiagnostics(after))
	}
	if findCode(after, analysis.CodeGainMarginLow) != nil {
		t.Errorf("gain margin still low after the fix: %v", gotDiagnostics(after))
	}
}

// TestQuickFixes applies the first fix of each diagnostic kind and checks
// the diagnostic is gone.
func TestQuickFixes(t *testing.T) {
	for _, tc := range []struct {
		name, code, title, text, want string
	}{
		{"sign", analysis.CodeBadSign, "Change to `sign negative`", "sample 1 ms\nblock c = 0.5 / (z - 0.5)\nloop l {\n  forward c\n  sign negativ\n}\n", "sign negative"},
		{"metric", analysis.CodeUnknownMetric, "Change to gain_margin", "sample 1 ms\nblock c = 0.5 / (z - 0.5)\nloop l {\n  forward c\n  require gain_margn >= 6 dB\n}\n", "require gain_margin >= 6 dB"},
		{"via", analysis.CodeNoVia, "Add `via zoh`", "sample 1 ms\nblock p = 1 / (s + 1)\nloop l {\n  forward p\n}\n", "via zoh"},
		{"sample", analysis.CodeNoSample, "Add `sample 1 ms`", "block p = 1 / (s + 1) via zoh\nloop l {\n  forward p\n}\n", "sample 1 ms\n"},
		{"cap", analysis.CodePoleOutside, "Cap ki", "sample 1 ms\ngain ki = 3\nblock c = ki * z^-1\nloop l {\n  forward c\n}\n", " max "},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := newClient(t, changeTrigger)
			uri := c.open("fix.loop", tc.text)
			ds := c.waitDiags(uri, hasCode(tc.code))
			d := findCode(ds, tc.code)
			var actions []protocol.CodeAction
			if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: d.Range,
				Context: protocol.CodeActionContext{Diagnostics: []protocol.Diagnostic{*d}}}, &actions); err != nil {
				t.Fatal(err)
			}
			var fix *protocol.CodeAction
			for i := range actions {
				if strings.HasPrefix(actions[i].Title, tc.title) {
					fix = &actions[i]
				}
			}
			if fix == nil {
				t.Fatalf("no action %q among %+v (diag %s)", tc.title, actions, d.Message)
			}
			v := c.applyEdit(fix.Edit)
			if !strings.Contains(c.text(uri), tc.want) {
				t.Fatalf("after the fix:\n%s", c.text(uri))
			}
			if ds := c.waitDiagsFrom(uri, v, anyDiags); findCode(ds, tc.code) != nil {
				t.Errorf("%s still reported: %v", tc.code, gotDiagnostics(ds))
			}
		})
	}
}

// TestFixInUsedFile: a fix whose edit lands in the file reached by use is
// mapped with that file's text and URI. (analysis proposes fixes only for
// names declared in the checked file today, so the fix is built here.)
func TestFixInUsedFile(t *testing.T) {
	c := newClient(t, clientOptions{})
	uri := c.open("unstable.loop")
	belt := c.open("plants/belt.loop")
	sn := c.server.snapshot()
	res, err := sn.check(context.Background(), filepath.Join(c.root, "unstable.loop"), false)
	if err != nil {
		t.Fatal(err)
	}
	d := res.Scope["kp"]
	we, ok := sn.workspaceEdit(res, analysis.Fix{Title: "t", Edits: []analysis.Edit{{Path: d.Path, Span: d.Gain.Stmt.Value.Span, NewText: "0.4"}}})
	if !ok || len(we.Changes[belt]) != 1 || len(we.Changes[uri]) != 0 {
		t.Fatalf("edit %+v", we)
	}
	c.applyEdit(&we)
	if !strings.Contains(c.text(belt), "gain kp = 0.4\n") {
		t.Errorf("belt.loop after the edit:\n%s", c.text(belt))
	}
}

func readFile(t *testing.T, root, rel string) string {
	b, err := os.ReadFile(filepath.Join(root, rel))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestCodeActionEachFixOnce: two diagnostics of the gimbal demo's loop (not
// stable, gain margin low) share the fix that sets krate; asked for both,
// the server offers it once, addressing both.
func TestCodeActionEachFixOnce(t *testing.T) {
	src, err := os.ReadFile("../testdata/demo/gimbal.loop")
	if err != nil {
		t.Fatal(err)
	}
	c := newClient(t, clientOptions{})
	uri := c.open("gimbal.loop", string(src))
	ds := c.waitDiags(uri, hasCode(analysis.CodeGainMarginLow))
	var ctxDiags []protocol.Diagnostic
	for _, d := range ds {
		if d.Code == analysis.CodeGainMarginLow || d.Code == analysis.CodePoleOnCircle {
			ctxDiags = append(ctxDiags, d)
		}
	}
	if len(ctxDiags) != 2 {
		t.Fatalf("want pole-on-circle and gain-margin-low, got %v", gotDiagnostics(ds))
	}
	var actions []protocol.CodeAction
	if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: ctxDiags[0].Range,
		Context: protocol.CodeActionContext{Diagnostics: ctxDiags}}, &actions); err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	set := 0
	for _, a := range actions {
		if seen[a.Title] {
			t.Errorf("action %q offered twice", a.Title)
		}
		seen[a.Title] = true
		if strings.HasPrefix(a.Title, "Set krate to") {
			set++
			if len(a.Diagnostics) != 2 {
				t.Errorf("%q addresses %d diagnostics, want 2", a.Title, len(a.Diagnostics))
			}
		}
	}
	if set != 1 {
		t.Errorf("%d actions set krate, want 1: %+v", set, actions)
	}
}

// delayMs is read like the other settings: 0 is allowed (analyse at once),
// a negative, oversized or non-numeric value is refused and changes nothing.
func TestDelaySetting(t *testing.T) {
	st, err := parseSettings(defaultSettings(), json.RawMessage(`{"ringside": {"delayMs": 0}}`))
	if err != nil || st.DelayMs != 0 {
		t.Errorf("delayMs 0: %+v, %v", st, err)
	}
	if defaultSettings().Trigger != "change" {
		t.Errorf("default trigger %q, want change (the full analysis while typing)", defaultSettings().Trigger)
	}
	for _, bad := range []string{`-1`, `60001`, `"soon"`} {
		if _, err := parseSettings(defaultSettings(), json.RawMessage(`{"delayMs": `+bad+`}`)); err == nil || !strings.Contains(err.Error(), "delayMs") {
			t.Errorf("delayMs %s accepted (%v)", bad, err)
		}
	}
	s := &Server{cfg: Config{Debounce: DefaultDebounce}, ses: newSession()}
	if d := s.delay(); d != DefaultDebounce {
		t.Errorf("delay without the setting: %v", d)
	}
	s.ses.settings.DelayMs = 20
	if d := s.delay(); d != 20*time.Millisecond {
		t.Errorf("delay with delayMs 20: %v", d)
	}
}
