package server

import (
	"encoding/json"
	"os"
	"strings"
	"testing"

	"go.lsp.dev/protocol"

	"ringside/analysis"
)

// TestVaryInEditor walks the dosing demo in the editor: the range error on
// the loop names the worst point, the loop hover shows the verdict over the
// range, its worst point and the disk margin, the gain hover the range, and
// the quick-fix narrowing the controller gain makes the whole range stable.
func TestVaryInEditor(t *testing.T) {
	src, err := os.ReadFile("../testdata/demo/dosing.loop")
	if err != nil {
		t.Fatal(err)
	}
	c := newClient(t, changeTrigger)
	uri := c.open("dosing.loop", string(src))
	ds := c.waitDiags(uri, hasCode(analysis.CodeRangeUnstable))
	d := findCode(ds, analysis.CodeRangeUnstable)
	if d.Severity != protocol.DiagnosticSeverityError || !strings.Contains(d.Message, "at a = 0.98, kflow = 1.4") {
		t.Errorf("range diagnostic: %+v", d)
	}
	hover := func(p protocol.Position) string {
		t.Helper()
		var h protocol.Hover
		if err := c.call(protocol.MethodTextDocumentHover, protocol.TextDocumentPositionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Position: p}, &h); err != nil {
			t.Fatalf("hover: %v", err)
		}
		return h.Contents.Value
	}
	loop := hover(c.posOf(uri, "loop residual", 0, 7))
	for _, want := range []string{"Over the range a 0.9 to 0.98, kflow 0.6 to 1.4: **NOT stable**", "edge theorem", "Worst point: a = 0.98, kflow = 1.4, largest closed-loop pole radius 1.043", "Disk margin: α = 0.178"} {
		if !strings.Contains(loop, want) {
			t.Errorf("loop hover lacks %q:\n%s", want, loop)
		}
	}
	if g := hover(c.posOf(uri, "kflow = 1", 0, 1)); !strings.Contains(g, "varies 0.6 to 1.4") {
		t.Errorf("gain hover:\n%s", g)
	}
	var actions []protocol.CodeAction
	if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: d.Range,
		Context: protocol.CodeActionContext{Diagnostics: []protocol.Diagnostic{*d}}}, &actions); err != nil {
		t.Fatal(err)
	}
	var fix *protocol.CodeAction
	for i := range actions {
		if strings.HasPrefix(actions[i].Title, "Set kp to ") {
			fix = &actions[i]
		}
	}
	if fix == nil {
		b, _ := json.Marshal(actions)
		t.Fatalf("no narrowing fix among %s", b)
	}
	v := c.applyEdit(fix.Edit)
	after := c.waitDiagsFrom(uri, v, anyDiags)
	if findCode(after, analysis.CodeRangeUnstable) != nil {
		t.Errorf("range still unstable after %q: %v", fix.Title, gotDiagnostics(after))
	}
	if loop := hover(c.posOf(uri, "loop residual", 0, 7)); !strings.Contains(loop, "stable for every value") {
		t.Errorf("after the fix the loop hover says:\n%s", loop)
	}
}
