// Package lspext holds the few Language Server Protocol (3.17) types and
// names the ringside server speaks that go.lsp.dev/protocol v0.12.0 (which
// follows LSP 3.16) lacks or models too loosely to keep the wire behaviour:
// position-encoding negotiation, inlay hints, semantic-token options with a
// legend, ranged changes that can be told from whole-text changes, a
// diagnostics version that may be 0, and ringside's own requests. Each type
// embeds or reuses the protocol package's types wherever it can. The package
// knows nothing of .loop files.
package lspext

import (
	"bytes"
	"encoding/json"
	"errors"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"
)

// Method names the protocol package has no constant for.
const (
	// MethodInlayHint is textDocument/inlayHint (3.17).
	MethodInlayHint = "textDocument/inlayHint"
	// MethodDocumentText is ringside/documentText: the server's current copy
	// of an open document (DocumentTextParams → DocumentText).
	MethodDocumentText = "ringside/documentText"
)

// CodeRequestFailed is the LSP 3.17 error code for a request that was valid
// but could not be carried out.
const CodeRequestFailed jsonrpc2.Code = -32803

// Position encodings (3.17).
const (
	EncodingUTF8  = "utf-8"
	EncodingUTF16 = "utf-16"
	EncodingUTF32 = "utf-32"
)

// ---- lifecycle ----

// InitializeParams is protocol.InitializeParams with capabilities that carry
// the 3.17 position encodings.
type InitializeParams struct {
	protocol.InitializeParams
	Capabilities ClientCapabilities `json:"capabilities"`
}

// ClientCapabilities adds general.positionEncodings (3.17) to the protocol
// package's capabilities. Decoding is lenient: a capability whose JSON type
// differs from the 3.16 model (newer clients send some as objects where
// 3.16 had booleans) is skipped instead of failing initialize.
type ClientCapabilities struct {
	protocol.ClientCapabilities
	General *GeneralClientCapabilities `json:"general,omitempty"`
}

// GeneralClientCapabilities adds positionEncodings (3.17).
type GeneralClientCapabilities struct {
	protocol.GeneralClientCapabilities
	PositionEncodings []string `json:"positionEncodings,omitempty"`
}

// UnmarshalJSON decodes what it can of an object; fields of an unexpected
// JSON type inside it are left zero (encoding/json keeps decoding after a
// type mismatch). Anything but an object (or null) is an error.
func (c *ClientCapabilities) UnmarshalJSON(b []byte) error {
	if b = bytes.TrimSpace(b); len(b) == 0 || b[0] != '{' && string(b) != "null" {
		return errors.New("capabilities must be an object")
	}
	type plain ClientCapabilities
	err := json.Unmarshal(b, (*plain)(c))
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return nil
	}
	return err
}

// ServerCapabilities adds positionEncoding and inlayHintProvider (3.17) to
// the protocol package's capabilities.
type ServerCapabilities struct {
	protocol.ServerCapabilities
	PositionEncoding  string `json:"positionEncoding,omitempty"`
	InlayHintProvider bool   `json:"inlayHintProvider,omitempty"`
}

// InitializeResult answers initialize with the extended capabilities.
type InitializeResult struct {
	Capabilities ServerCapabilities   `json:"capabilities"`
	ServerInfo   *protocol.ServerInfo `json:"serverInfo,omitempty"`
}

// SemanticTokensOptions announces semantic tokens: the protocol package's
// options carry no legend and no full/range flags.
type SemanticTokensOptions struct {
	protocol.SemanticTokensOptions
	Legend protocol.SemanticTokensLegend `json:"legend"`
	Full   bool                          `json:"full"`
	Range  bool                          `json:"range"`
}

// ---- text synchronisation ----

// TextDocumentContentChangeEvent is a whole-text change (Range nil) or a
// ranged one. The protocol package's Range is not a pointer, so a change of
// the empty range at 0:0 could not be told from a whole-text change.
type TextDocumentContentChangeEvent struct {
	Range       *protocol.Range `json:"range,omitempty"`
	RangeLength uint32          `json:"rangeLength,omitempty"`
	Text        string          `json:"text"`
}

// DidChangeTextDocumentParams of textDocument/didChange with the change
// events above.
type DidChangeTextDocumentParams struct {
	TextDocument   protocol.VersionedTextDocumentIdentifier `json:"textDocument"`
	ContentChanges []TextDocumentContentChangeEvent         `json:"contentChanges"`
}

// ---- diagnostics ----

// PublishDiagnosticsParams of textDocument/publishDiagnostics. The protocol
// package's Version is an omitempty uint32, which drops version 0 and
// cannot say "no version"; LSP's version is an optional integer.
type PublishDiagnosticsParams struct {
	URI         protocol.DocumentURI  `json:"uri"`
	Version     *int32                `json:"version,omitempty"`
	Diagnostics []protocol.Diagnostic `json:"diagnostics"`
}

// ---- inlay hints (3.17) ----

// InlayHintParams of textDocument/inlayHint.
type InlayHintParams struct {
	TextDocument protocol.TextDocumentIdentifier `json:"textDocument"`
	Range        protocol.Range                  `json:"range"`
}

// Inlay hint kinds.
const (
	InlayHintKindType      = 1
	InlayHintKindParameter = 2
)

// InlayHint is a label shown inline.
type InlayHint struct {
	Position    protocol.Position `json:"position"`
	Label       string            `json:"label"`
	Kind        int               `json:"kind,omitempty"`
	PaddingLeft bool              `json:"paddingLeft,omitempty"`
}

// ---- ringside's own requests ----

// DocumentTextParams of ringside/documentText.
type DocumentTextParams struct {
	URI protocol.DocumentURI `json:"uri"`
}

// DocumentText is the server's copy of an open document.
type DocumentText struct {
	URI     protocol.DocumentURI `json:"uri"`
	Version int32                `json:"version"`
	Text    string               `json:"text"`
}

// DidSaveTextDocumentParams of textDocument/didSave. The protocol package's
// Text is a plain string, which cannot tell "no text sent" from "the saved
// text is empty".
type DidSaveTextDocumentParams struct {
	TextDocument protocol.TextDocumentIdentifier `json:"textDocument"`
	Text         *string                         `json:"text,omitempty"`
}
