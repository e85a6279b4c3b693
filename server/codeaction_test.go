package server

import (
	"testing"

	"go.lsp.dev/protocol"

	"ringside/analysis"
)

// A fix attached to two diagnostics at one place (the loop on the circle
// and its missed gain margin) is offered once, listing both.
func TestCodeActionEachFixOnce(t *testing.T) {
	c := newClient(t, changeTrigger)
	uri := c.open("pan.loop", "sample 2 ms\ngain krate = 1.5\nblock pan_stage = 1 / (z - 0.5)\nloop pan_rate {\n  forward krate pan_stage\n}\n")
	ds := c.waitDiags(uri, hasCode(analysis.CodeGainMarginLow))
	var ctxDiags []protocol.Diagnostic
	for _, d := range ds {
		if d.Code == analysis.CodePoleOnCircle || d.Code == analysis.CodeGainMarginLow {
			ctxDiags = append(ctxDiags, d)
		}
	}
	if len(ctxDiags) != 2 {
		t.Fatalf("diagnostics %v", gotDiagnostics(ds))
	}
	var actions []protocol.CodeAction
	if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: ctxDiags[0].Range,
		Context: protocol.CodeActionContext{Diagnostics: ctxDiags}}, &actions); err != nil {
		t.Fatal(err)
	}
	titles := map[string]int{}
	for _, a := range actions {
		titles[a.Title]++
		if titles[a.Title] > 1 {
			t.Errorf("action %q offered twice", a.Title)
		}
	}
	if len(actions) == 0 {
		t.Fatal("no actions")
	}
	for _, a := range actions {
		if a.Title == actions[0].Title && len(a.Diagnostics) != 2 {
			t.Errorf("action %q lists %d diagnostics, want 2", a.Title, len(a.Diagnostics))
		}
	}
}
