package lspext

import (
	"encoding/json"
	"testing"
)

// TestClientCapabilitiesLenient: a capability of an unexpected JSON type
// (an object where the 3.16 model has a boolean) does not hide the rest.
func TestClientCapabilitiesLenient(t *testing.T) {
	raw := `{"processId":null,"capabilities":{
		"workspace":{"workspaceFolders":{"supported":true}},
		"window":{"workDoneProgress":true},
		"general":{"positionEncodings":["utf-32","utf-8"]},
		"textDocument":{"documentSymbol":{"hierarchicalDocumentSymbolSupport":true}}}}`
	var p InitializeParams
	if err := json.Unmarshal([]byte(raw), &p); err != nil {
		t.Fatal(err)
	}
	c := p.Capabilities
	if c.General == nil || len(c.General.PositionEncodings) != 2 || c.General.PositionEncodings[0] != EncodingUTF32 {
		t.Errorf("positionEncodings lost: %+v", c.General)
	}
	if c.Window == nil || !c.Window.WorkDoneProgress {
		t.Errorf("window.workDoneProgress lost: %+v", c.Window)
	}
	if c.TextDocument == nil || c.TextDocument.DocumentSymbol == nil || !c.TextDocument.DocumentSymbol.HierarchicalDocumentSymbolSupport {
		t.Errorf("documentSymbol capability lost")
	}
	if err := json.Unmarshal([]byte(`{"capabilities":[1]}`), &p); err == nil {
		t.Errorf("capabilities that are not an object: no error")
	}
}

// TestServerCapabilitiesFlatten: the 3.17 fields sit beside the protocol
// package's, not under a nested object.
func TestServerCapabilitiesFlatten(t *testing.T) {
	var sc ServerCapabilities
	sc.PositionEncoding = EncodingUTF8
	sc.InlayHintProvider = true
	sc.HoverProvider = true
	b, err := json.Marshal(sc)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := string(b), `{"hoverProvider":true,"positionEncoding":"utf-8","inlayHintProvider":true}`; got != want {
		t.Errorf("got %s, want %s", got, want)
	}
}
