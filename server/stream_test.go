package server

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"
	"testing"

	"go.lsp.dev/jsonrpc2"
)

type bufCloser struct{ bytes.Buffer }

func (*bufCloser) Close() error { return nil }

// TestStreamWritesReadableJSON: results keep '<' and '&' (no HTML
// escaping), and what the writer frames, jsonrpc2's reader reads back.
func TestStreamWritesReadableJSON(t *testing.T) {
	var b bufCloser
	st := newStream(&b)
	raw, err := marshal(map[string]string{"svg": `<svg a="1">&</svg>`})
	if err != nil {
		t.Fatal(err)
	}
	resp, _ := jsonrpc2.NewResponse(jsonrpc2.NewNumberID(7), raw, nil)
	call, _ := jsonrpc2.NewCall(jsonrpc2.NewStringID("x"), "m", raw)
	note, _ := jsonrpc2.NewNotification("n", raw)
	fail, _ := jsonrpc2.NewResponse(jsonrpc2.NewNumberID(8), nil, jsonrpc2.NewError(jsonrpc2.InvalidParams, "bad <params>"))
	for _, m := range []jsonrpc2.Message{resp, call, note, fail} {
		if _, err := st.Write(context.Background(), m); err != nil {
			t.Fatal(err)
		}
	}
	if s := b.String(); !strings.Contains(s, `"result":{"svg":"<svg a=\"1\">&</svg>"}`) || strings.Contains(s, `\u003c`) {
		t.Errorf("wire form escapes or loses the result:\n%s", s)
	}
	for i := 0; i < 4; i++ {
		m, _, err := st.Read(context.Background())
		if err != nil {
			t.Fatalf("message %d: %v", i, err)
		}
		switch m := m.(type) {
		case *jsonrpc2.Response:
			if m.Err() != nil {
				if e, ok := m.Err().(*jsonrpc2.Error); !ok || e.Code != jsonrpc2.InvalidParams || e.Message != "bad <params>" {
					t.Errorf("error response read back as %v", m.Err())
				}
			} else if string(m.Result()) != string(raw) || m.ID() != jsonrpc2.NewNumberID(7) {
				t.Errorf("response read back as %s", m.Result())
			}
		case *jsonrpc2.Call:
			if m.Method() != "m" || m.ID() != jsonrpc2.NewStringID("x") || string(m.Params()) != string(raw) {
				t.Errorf("call read back as %s %s", m.Method(), m.Params())
			}
		case *jsonrpc2.Notification:
			if m.Method() != "n" || string(m.Params()) != string(raw) {
				t.Errorf("notification read back as %s %s", m.Method(), m.Params())
			}
		}
	}
}

func TestUnescapeHTML(t *testing.T) {
	for in, want := range map[string]string{
		`"\u003csvg\u003e \u0026amp;"`: `"<svg> &amp;"`,
		`"\\u003c"`:                    `"\\u003c"`, // an escaped backslash, then text
		`"\\\u003c"`:                   `"\\<"`,
		`"\u00e9 \n \u2028"`:           `"\u00e9 \n \u2028"`,
		`{"a":1}`:                      `{"a":1}`,
	} {
		if got := string(unescapeHTML([]byte(in))); got != want {
			t.Errorf("unescapeHTML(%s) = %s, want %s", in, got, want)
		}
	}
}

// TestMalformedMessageIsAnsweredAndSurvived: a frame that is not JSON-RPC
// gets an error of id null (JSON-RPC 2.0, section 5) and the session goes on.
func TestMalformedMessageIsAnsweredAndSurvived(t *testing.T) {
	in := frame(`{"jsonrpc":"2.0","id":1,"method":"initialize","params":{"capabilities":{}}}`) +
		frame(`{"jsonrpc":"2.0","id":`) + frame(`{"jsonrpc":"2.0"}`) +
		frame(`{"jsonrpc":"2.0","id":2,"method":"shutdown"}`) + frame(`{"jsonrpc":"2.0","method":"exit"}`)
	var out, errOut bytes.Buffer
	if got := Main([]string{"--log-level", "error"}, strings.NewReader(in), &out, &errOut); got != 0 {
		t.Errorf("Main = %d, want 0 (stderr %s)", got, errOut.String())
	}
	for _, want := range []string{`"id":null,"error":{"code":-32700`, `"id":null,"error":{"code":-32600`, `"id":2,"result":null`} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %s:\n%s", want, out.String())
		}
	}
}

// appendWire writes what encoding/json writes for the same message with
// HTML escaping off (the encoder the stream used before): requests,
// notifications, results, errors with HTML characters, and empty fields
// left out.
func TestAppendWireMatchesEncoder(t *testing.T) {
	msgs := []wireMessage{
		{JSONRPC: "2.0", ID: json.RawMessage(`7`), Method: "textDocument/hover", Params: json.RawMessage(`{"a":"<b> & c","n":[1,2.5e-7]}`)},
		{JSONRPC: "2.0", Method: "textDocument/publishDiagnostics", Params: json.RawMessage(`{"uri":"file:///x.loop","diagnostics":[]}`)},
		{JSONRPC: "2.0", ID: json.RawMessage(`"abc"`), Result: json.RawMessage(`null`)},
		{JSONRPC: "2.0", ID: json.RawMessage(`12345678901234567890`), Result: json.RawMessage(`{"k":"é\u2028"}`)},
		{JSONRPC: "2.0", ID: json.RawMessage(`null`), Error: jsonrpc2.NewError(jsonrpc2.ParseError, `bad <json> & "quotes"`)},
		{JSONRPC: "2.0"},
	}
	for i, m := range msgs {
		var want bytes.Buffer
		enc := json.NewEncoder(&want)
		enc.SetEscapeHTML(false)
		if err := enc.Encode(m); err != nil {
			t.Fatal(err)
		}
		got, err := appendWire(m)
		if err != nil {
			t.Fatal(err)
		}
		if w := bytes.TrimSuffix(want.Bytes(), []byte("\n")); !bytes.Equal(got, w) {
			t.Errorf("message %d:\n got %s\nwant %s", i, got, w)
		}
	}
}
