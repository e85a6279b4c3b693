package server

import (
	"bytes"
	"context"
	"io"
	"testing"
	"time"
)

// FuzzProtocol feeds arbitrary bytes (framed, truncated or not) to the
// server's reader: it must neither panic (bug reports are fatal) nor hang
// (Run must return once the input ends).
func FuzzProtocol(f *testing.F) {
	f.Add([]byte(frame(`{"jsonrpc":"2.0","id":1,"method":"initialize","params":{"capabilities":{}}}`) +
		frame(`{"jsonrpc":"2.0","method":"textDocument/didOpen","params":{"textDocument":{"uri":"file:///tmp/f.loop","languageId":"loop","version":1,"text":"sample 1 ms\ngain k = 2\nblock c = k * z^-1\nloop l {\n  forward c\n}\n"}}}`) +
		frame(`{"jsonrpc":"2.0","id":2,"method":"textDocument/hover","params":{"textDocument":{"uri":"file:///tmp/f.loop"},"position":{"line":2,"character":6}}}`) +
		frame(`{"jsonrpc":"2.0","method":"textDocument/didChange","params":{"textDocument":{"uri":"file:///tmp/f.loop","version":2},"contentChanges":[{"range":{"start":{"line":9,"character":0},"end":{"line":0,"character":0}},"text":"x"}]}}`) +
		frame(`{"jsonrpc":"2.0","id":3,"method":"shutdown"}`) + frame(`{"jsonrpc":"2.0","method":"exit"}`)))
	f.Add([]byte("Content-Length: 10\r\n\r\n{\"jsonrpc\""))
	f.Add([]byte("Content-Length: -1\r\n\r\n"))
	f.Add([]byte(frame(`[]`) + frame(`{"id":null}`) + frame(`{"jsonrpc":"2.0","id":1,"method":"initialize","params":null}`)))
	f.Fuzz(func(t *testing.T, data []byte) {
		done := make(chan error, 1)
		cfg := Config{Debounce: -1, OnBug: func(r string) { t.Errorf("bug report: %s", r) }}
		go func() { done <- Run(context.Background(), bytes.NewReader(data), io.Discard, cfg) }()
		select {
		case <-done:
		case <-time.After(10 * time.Second):
			t.Fatalf("Run did not return on %q", data)
		}
	})
}
