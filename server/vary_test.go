package server

import (
	"encoding/json"
	"fmt"
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
	if g := hover(c.posOf(uri, "kflow = 1", 0, 1)); !strings.Contains(g, "varies 0.6 to 1.4") || strings.Contains(g, "Keeps the required gain margin") {
		t.Errorf("gain hover (a varying gain has no safe value):\n%s", g)
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

// varyDoc is one pump loop l0 whose plant gain, leakage and pole vary (the
// first n of them), with the controller gain kp0 that the latency harness
// edits.
func varyDoc(n int) string {
	ranges := []string{" vary 30 to 50", " vary 0 to 2", " vary 0.93 to 0.97"}
	var b strings.Builder
	b.WriteString("sample 1 ms\n")
	for i, g := range []string{"k = 40", "c = 1", "a = 0.95"} {
		b.WriteString("gain " + g)
		if i < n {
			b.WriteString(ranges[i])
		}
		b.WriteString("\n")
	}
	b.WriteString("gain kp0 = 0.5\nblock plant = (k * 0.001z + c * 0.0001) / (z * (z - a))\nblock ctrl = kp0 * z / (z - 1)\nloop l0 {\n  forward ctrl plant\n}\n")
	return b.String()
}

// BenchmarkVaryLatency: the editor's round trip (a gain edit to its full
// diagnostics) for one loop with no and with three varying gains; the
// difference is what the range analysis adds in the editor. Run with
// `go test -run ^$ -bench VaryLatency ./server/`.
func BenchmarkVaryLatency(b *testing.B) {
	for _, n := range []int{0, 3} {
		b.Run(fmt.Sprintf("varying=%d/editGain", n), func(b *testing.B) {
			benchLatency(b, varyDoc(n), 1, "editGain")
		})
	}
}
