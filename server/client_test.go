package server

import (
	"context"
	"encoding/json"
	"errors"
	"io/fs"
	"net"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/server/lspext"
)

// waitTimeout bounds every wait for an asynchronous message: far above the
// debounce and any check of the test files, so only a real hang fails.
const waitTimeout = 20 * time.Second

// testClient is a fake editor connected to an in-process server through a
// real jsonrpc2 connection over net.Pipe.
type testClient struct {
	t        testing.TB
	conn     jsonrpc2.Conn
	root     string
	server   *Server
	runDone  chan error
	diags    chan lspext.PublishDiagnosticsParams
	progress chan json.RawMessage
	shown    chan string // window/showMessage texts
	mu       sync.Mutex
	texts    map[protocol.DocumentURI]string
	versions map[protocol.DocumentURI]int32
	bugs     []string
	encoding string
	ended    bool
	// lastVersion is the version of the publication waitDiags looks at.
	lastVersion int32
}

type clientOptions struct {
	init        map[string]any // extra initialize params (merged)
	caps        map[string]any
	bugsOK      bool // record bug reports instead of failing
	noWorkspace bool
	debounce    time.Duration // 0: 20 ms
}

var hookMu sync.Mutex

// newClient copies testdata/ws to a temp folder, starts a server on it and
// initializes it.
func newClient(t testing.TB, o clientOptions) *testClient {
	t.Helper()
	root := t.TempDir()
	copyDir(t, "testdata/ws", root)
	root, _ = filepath.EvalSymlinks(root)
	c := &testClient{t: t, root: root, runDone: make(chan error, 1),
		diags: make(chan lspext.PublishDiagnosticsParams, 1000), progress: make(chan json.RawMessage, 1000), shown: make(chan string, 100),
		texts: map[protocol.DocumentURI]string{}, versions: map[protocol.DocumentURI]int32{}, encoding: lspext.EncodingUTF16}
	sc, cc := net.Pipe()
	if o.debounce == 0 {
		o.debounce = 20 * time.Millisecond
	}
	cfg := Config{Debounce: o.debounce, OnBug: func(r string) {
		c.mu.Lock()
		c.bugs = append(c.bugs, r)
		c.mu.Unlock()
		if !o.bugsOK {
			t.Errorf("server bug report: %s", r)
		}
	}}
	hookMu.Lock()
	got := make(chan *Server, 1)
	testHookNewServer = func(s *Server) { got <- s }
	go func() { c.runDone <- Run(context.Background(), sc, sc, cfg) }()
	c.server = <-got
	testHookNewServer = nil
	hookMu.Unlock()
	c.conn = jsonrpc2.NewConn(jsonrpc2.NewStream(cc))
	c.conn.Go(context.Background(), c.handle)
	t.Cleanup(func() {
		if !c.ended {
			c.shutdownExit()
		}
		c.conn.Close()
	})
	params := map[string]any{
		"processId":    nil,
		"capabilities": o.caps,
	}
	if !o.noWorkspace {
		params["rootUri"] = pathURI(root)
		params["workspaceFolders"] = []map[string]any{{"uri": pathURI(root), "name": "ws"}}
	}
	for k, v := range o.init {
		params[k] = v
	}
	var res lspext.InitializeResult
	if err := c.call(protocol.MethodInitialize, params, &res); err != nil {
		t.Fatalf("initialize: %v", err)
	}
	if res.Capabilities.PositionEncoding != "" {
		c.encoding = res.Capabilities.PositionEncoding
	}
	c.notify(protocol.MethodInitialized, map[string]any{})
	return c
}

func (c *testClient) shutdownExit() {
	c.call(protocol.MethodShutdown, nil, nil)
	c.conn.Notify(context.Background(), protocol.MethodExit, nil)
	c.wait()
}

// wait waits for Run to return and gives its error.
func (c *testClient) wait() error {
	c.ended = true
	select {
	case err := <-c.runDone:
		return err
	case <-time.After(waitTimeout):
		c.t.Errorf("server did not return after exit")
		return nil
	}
}

// handle answers the server's requests and queues its notifications.
func (c *testClient) handle(ctx context.Context, reply jsonrpc2.Replier, req jsonrpc2.Request) error {
	if _, ok := req.(*jsonrpc2.Call); ok {
		// Answer from another goroutine so the read loop keeps reading: over
		// net.Pipe (no buffer) a read loop blocked writing would deadlock
		// against a server doing the same.
		go func() {
			res, err := c.answer(req)
			reply(ctx, res, err)
		}()
		return nil
	}
	c.answer(req)
	return nil
}

// answer gives the result of one message from the server.
func (c *testClient) answer(req jsonrpc2.Request) (any, error) {
	switch req.Method() {
	case protocol.MethodTextDocumentPublishDiagnostics:
		var p lspext.PublishDiagnosticsParams
		if err := json.Unmarshal(req.Params(), &p); err != nil {
			c.t.Errorf("bad publishDiagnostics: %v", err)
		}
		c.diags <- p
	case protocol.MethodProgress:
		c.progress <- append(json.RawMessage(nil), req.Params()...)
	case protocol.MethodWorkDoneProgressCreate:
		return nil, nil
	case protocol.MethodWindowShowMessage:
		var p protocol.ShowMessageParams
		json.Unmarshal(req.Params(), &p)
		c.shown <- p.Message
	}
	return nil, nil
}

func marshalParams(v any) json.RawMessage {
	if v == nil {
		return nil
	}
	b, err := json.Marshal(v)
	if err != nil {
		panic(err)
	}
	return b
}

// call sends a request; result may be nil, a *json.RawMessage or a value.
func (c *testClient) call(method string, params, result any) error {
	ctx, cancel := context.WithTimeout(context.Background(), waitTimeout)
	defer cancel()
	var raw json.RawMessage
	_, err := c.conn.Call(ctx, method, marshalParams(params), &raw)
	if err != nil {
		return err
	}
	if len(raw) == 0 {
		// jsonrpc2 hands a null result over as an empty one
		raw = json.RawMessage("null")
	}
	switch r := result.(type) {
	case nil:
		return nil
	case *json.RawMessage:
		*r = raw
		return nil
	}
	return json.Unmarshal(raw, result)
}

func (c *testClient) notify(method string, params any) {
	if err := c.conn.Notify(context.Background(), method, marshalParams(params)); err != nil {
		c.t.Fatalf("notify %s: %v", method, err)
	}
}

func (c *testClient) uri(rel string) protocol.DocumentURI {
	return pathURI(filepath.Join(c.root, filepath.FromSlash(rel)))
}

// open opens a workspace file (its disk text, or text when given).
func (c *testClient) open(rel string, text ...string) protocol.DocumentURI {
	c.t.Helper()
	uri := c.uri(rel)
	var body string
	if len(text) > 0 {
		body = text[0]
	} else {
		b, err := os.ReadFile(filepath.Join(c.root, rel))
		if err != nil {
			c.t.Fatal(err)
		}
		body = string(b)
	}
	c.mu.Lock()
	c.texts[uri] = body
	c.versions[uri] = 1
	c.mu.Unlock()
	c.notify(protocol.MethodTextDocumentDidOpen, protocol.DidOpenTextDocumentParams{TextDocument: protocol.TextDocumentItem{URI: uri, LanguageID: "loop", Version: 1, Text: body}})
	return uri
}

// replace sends the whole new text.
func (c *testClient) replace(uri protocol.DocumentURI, text string) int32 {
	c.mu.Lock()
	c.versions[uri]++
	v := c.versions[uri]
	c.texts[uri] = text
	c.mu.Unlock()
	c.notify(protocol.MethodTextDocumentDidChange, lspext.DidChangeTextDocumentParams{TextDocument: protocol.VersionedTextDocumentIdentifier{TextDocumentIdentifier: protocol.TextDocumentIdentifier{URI: uri}, Version: v},
		ContentChanges: []lspext.TextDocumentContentChangeEvent{{Text: text}}})
	return v
}

// edit sends one ranged change and applies it to the client's copy.
func (c *testClient) edit(uri protocol.DocumentURI, r protocol.Range, text string) int32 {
	c.t.Helper()
	c.mu.Lock()
	cur := c.texts[uri]
	c.versions[uri]++
	v := c.versions[uri]
	c.mu.Unlock()
	next, err := applyChanges([]byte(cur), []lspext.TextDocumentContentChangeEvent{{Range: &r, Text: text}}, c.encoding)
	if err != nil {
		c.t.Fatalf("edit: %v", err)
	}
	c.mu.Lock()
	c.texts[uri] = string(next)
	c.mu.Unlock()
	c.notify(protocol.MethodTextDocumentDidChange, lspext.DidChangeTextDocumentParams{TextDocument: protocol.VersionedTextDocumentIdentifier{TextDocumentIdentifier: protocol.TextDocumentIdentifier{URI: uri}, Version: v},
		ContentChanges: []lspext.TextDocumentContentChangeEvent{{Range: &r, Text: text}}})
	return v
}

func (c *testClient) save(uri protocol.DocumentURI) {
	c.notify(protocol.MethodTextDocumentDidSave, lspext.DidSaveTextDocumentParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}})
}

// waitDiags waits for a publication for uri that satisfies ok.
func (c *testClient) waitDiags(uri protocol.DocumentURI, ok func([]protocol.Diagnostic) bool) []protocol.Diagnostic {
	c.t.Helper()
	deadline := time.After(waitTimeout)
	var last []protocol.Diagnostic
	for {
		select {
		case p := <-c.diags:
			if p.URI != uri {
				continue
			}
			c.lastVersion = -1
			if p.Version != nil {
				c.lastVersion = *p.Version
			}
			last = p.Diagnostics
			if ok(p.Diagnostics) {
				return p.Diagnostics
			}
		case <-deadline:
			c.t.Fatalf("no matching diagnostics for %s; last: %s", uri, marshalParams(last))
			return nil
		}
	}
}

// waitDiagsFrom waits for a publication of version v or later that
// satisfies ok.
func (c *testClient) waitDiagsFrom(uri protocol.DocumentURI, v int32, ok func([]protocol.Diagnostic) bool) []protocol.Diagnostic {
	c.t.Helper()
	return c.waitDiags(uri, func(ds []protocol.Diagnostic) bool { return c.lastVersion >= v && ok(ds) })
}

// anyDiags accepts any publication.
func anyDiags([]protocol.Diagnostic) bool { return true }

func hasCode(code string) func([]protocol.Diagnostic) bool {
	return func(ds []protocol.Diagnostic) bool { return findCode(ds, code) != nil }
}

func lacksCode(code string) func([]protocol.Diagnostic) bool {
	return func(ds []protocol.Diagnostic) bool { return findCode(ds, code) == nil }
}

func findCode(ds []protocol.Diagnostic, code string) *protocol.Diagnostic {
	for i := range ds {
		if ds[i].Code == code {
			return &ds[i]
		}
	}
	return nil
}

func (c *testClient) text(uri protocol.DocumentURI) string {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.texts[uri]
}

// applyEdit applies a workspace edit to the client's texts and sends the
// results as full changes; it returns the last new version.
func (c *testClient) applyEdit(we *protocol.WorkspaceEdit) int32 {
	c.t.Helper()
	var v int32
	for uri, edits := range we.Changes {
		text := []byte(c.text(uri))
		// apply from the end so earlier ranges stay valid
		m := NewMapper(text, c.encoding)
		type sp struct {
			from, to int
			s        string
		}
		var spans []sp
		for _, e := range edits {
			s, err := m.RangeSpan(e.Range)
			if err != nil {
				c.t.Fatalf("edit range: %v", err)
			}
			spans = append(spans, sp{int(s.From), int(s.To), e.NewText})
		}
		for i := len(spans) - 1; i >= 0; i-- {
			for j := 0; j < i; j++ {
				if spans[j].from > spans[j+1].from {
					spans[j], spans[j+1] = spans[j+1], spans[j]
				}
			}
		}
		for i := len(spans) - 1; i >= 0; i-- {
			s := spans[i]
			text = append(append(append([]byte{}, text[:s.from]...), s.s...), text[s.to:]...)
		}
		v = c.replace(uri, string(text))
	}
	return v
}

// rpcCode returns the JSON-RPC error code of err, or 0.
func rpcCode(err error) jsonrpc2.Code {
	var e *jsonrpc2.Error
	if errors.As(err, &e) {
		return e.Code
	}
	return 0
}

func copyDir(t testing.TB, from, to string) {
	t.Helper()
	err := filepath.WalkDir(from, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(from, p)
		dst := filepath.Join(to, rel)
		if d.IsDir() {
			return os.MkdirAll(dst, 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(dst, b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
}

func pos(line, char int) protocol.Position {
	return protocol.Position{Line: uint32(line), Character: uint32(char)}
}

// posOf finds the position of the n-th (0-based) occurrence of needle in
// the client's text of uri, plus off characters (ASCII text assumed).
func (c *testClient) posOf(uri protocol.DocumentURI, needle string, n, off int) protocol.Position {
	c.t.Helper()
	text := c.text(uri)
	i := -1
	for k := 0; k <= n; k++ {
		j := strings.Index(text[i+1:], needle)
		if j < 0 {
			c.t.Fatalf("%q not found %d times", needle, n+1)
		}
		i += j + 1
	}
	m := NewMapper([]byte(text), c.encoding)
	p, err := m.OffsetPosition(syntaxPos(i + off))
	if err != nil {
		c.t.Fatal(err)
	}
	return p
}

func netPipe() (net.Conn, net.Conn) { return net.Pipe() }

func timeoutCh() <-chan time.Time { return time.After(waitTimeout) }
