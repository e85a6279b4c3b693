// Package server is the ringside language server: it speaks the Language
// Server Protocol over a JSON-RPC stream and answers from syntax and
// analysis.
//
// It is built on go.lsp.dev/jsonrpc2 (v0.10) and go.lsp.dev/protocol
// (LSP 3.16 types); lspext adds the few 3.17 types and ringside's own
// requests that package lacks, and stream.go frames messages without HTML
// escaping. Dispatch is the server's own: lifecycle checks, per-request
// contexts that $/cancelRequest cancels, and recovery from handler panics.
//
// Layering: protocol and lspext (LSP types) → Mapper (offsets ↔ positions)
// → session (open documents, settings, cached results) → one small file per
// feature.
// Handlers translate protocol values to byte offsets, call syntax or
// analysis, and map the answer back; they hold no analysis logic. The server
// never writes a file, except the plot page when a user asks for it.
package server

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"runtime/debug"
	"strconv"
	"sync"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"
	"go.uber.org/zap"

	"ringside/server/lspext"
)

// Config configures a server run.
type Config struct {
	// Logger receives the server's log; nil discards it.
	Logger *zap.Logger
	// Debounce is the delay between a change and its diagnostics: 0 means
	// DefaultDebounce, a negative value means none (benchmarks).
	Debounce time.Duration
	// OnBug is called with every internal error the server survives
	// (a recovered panic, a "can't happen"); tests make it fatal.
	OnBug func(report string)
	// Version is reported in serverInfo.
	Version string
}

// DefaultDebounce is how long the server waits after the last keystroke
// before checking: long enough to skip the intermediate states of a burst of
// typing, short enough to feel immediate.
const DefaultDebounce = 150 * time.Millisecond

// ErrNoShutdown is returned by Run when the client sent exit (or closed the
// stream) without a shutdown request first.
var ErrNoShutdown = errors.New("the client ended the session without shutdown")

// Run serves one client over in/out (Content-Length framed JSON-RPC) until
// exit or the end of in. It returns nil after shutdown then exit, and
// ErrNoShutdown otherwise.
func Run(ctx context.Context, in io.Reader, out io.Writer, cfg Config) error {
	if cfg.Logger == nil {
		cfg.Logger = zap.NewNop()
	}
	if cfg.Debounce == 0 {
		cfg.Debounce = DefaultDebounce
	}
	ctx, stop := context.WithCancel(ctx)
	defer stop()
	s := newServer(ctx, cfg)
	if testHookNewServer != nil {
		testHookNewServer(s)
	}
	stream := newStream(&rwc{r: in, w: out})
	conn := jsonrpc2.NewConn(stream)
	s.conn = conn
	conn.Go(ctx, s.handle)
	select {
	case <-s.exited:
	case <-conn.Done():
	case <-ctx.Done():
	}
	stop()
	s.stopAll()
	// Close closes the transport; the read loop then ends. Do not hold the
	// caller on a reader that its transport cannot interrupt.
	conn.Close()
	select {
	case <-conn.Done():
	case <-time.After(time.Second):
	}
	s.mu.Lock()
	clean := s.shutdown && s.exitSeen
	s.mu.Unlock()
	if !clean {
		return ErrNoShutdown
	}
	return nil
}

// testHookNewServer lets tests reach the server a Run creates.
var testHookNewServer func(*Server)

// rwc joins a reader and a writer into the stream jsonrpc2 wants; Close
// closes whichever of them can be closed.
type rwc struct {
	r io.Reader
	w io.Writer
}

func (c *rwc) Read(p []byte) (int, error)  { return c.r.Read(p) }
func (c *rwc) Write(p []byte) (int, error) { return c.w.Write(p) }
func (c *rwc) Close() error {
	var err error
	if cl, ok := c.r.(io.Closer); ok {
		err = cl.Close()
	}
	if cl, ok := c.w.(io.Closer); ok && any(c.w) != any(c.r) {
		if e := cl.Close(); err == nil {
			err = e
		}
	}
	return err
}

// Server is the state of one session.
type Server struct {
	cfg        Config
	log        *zap.Logger
	ctx        context.Context
	conn       jsonrpc2.Conn
	inflightMu sync.Mutex
	inflight   map[requestID]*inflightReq
	exited     chan struct{}
	exitOnce   sync.Once

	publishMu   sync.Mutex
	mu          sync.Mutex
	initialized bool // initialize answered
	shutdown    bool
	exitSeen    bool
	scanned     int // finished workspace scans
	ses         *session

	// afterSnapshot, when set (tests only), runs in a document request
	// once it holds its snapshot and has released the read loop: a test
	// can then edit the document while the request is known to be running.
	afterSnapshot func()
}

func newServer(ctx context.Context, cfg Config) *Server {
	return &Server{cfg: cfg, log: cfg.Logger, ctx: ctx, exited: make(chan struct{}), ses: newSession(), inflight: map[requestID]*inflightReq{}}
}

// bug records an internal error the server survives.
func (s *Server) bug(format string, args ...any) {
	msg := fmt.Sprintf(format, args...)
	s.log.Error("internal error (please report)", zap.String("report", msg))
	if s.cfg.OnBug != nil {
		s.cfg.OnBug(msg)
	}
}

// errorf builds a JSON-RPC error.
func errorf(code jsonrpc2.Code, format string, args ...any) error {
	return jsonrpc2.Errorf(code, format, args...)
}

var errCancelled = jsonrpc2.NewError(protocol.CodeRequestCancelled, "request cancelled")

// requestID is a request id in its canonical JSON form (a number or a
// quoted string), so that the id of a call and the id named by
// $/cancelRequest compare equal.
type requestID string

// idOf gives the canonical form of a jsonrpc2 id.
func idOf(id jsonrpc2.ID) requestID {
	b, err := json.Marshal(&id)
	if err != nil {
		return ""
	}
	return requestID(b)
}

// idOfValue gives the canonical form of a decoded JSON id (float64 or string).
func idOfValue(v any) (requestID, bool) {
	switch x := v.(type) {
	case float64:
		if x != math.Trunc(x) || math.Abs(x) > math.MaxInt32 {
			return "", false
		}
		return requestID(strconv.FormatInt(int64(x), 10)), true
	case string:
		b, _ := json.Marshal(x)
		return requestID(b), true
	}
	return "", false
}

// Number gives the id as a number, when it is one.
func (id requestID) Number() (int64, bool) {
	n, err := strconv.ParseInt(string(id), 10, 64)
	return n, err == nil
}

// handle is the one entry point of every incoming message. jsonrpc2 calls
// it on the connection's read loop, so notifications (and the snapshot taken
// at the start of each request) are applied in wire order. A request runs on
// its own goroutine while the read loop waits; the handler releases the loop
// with async once it has its snapshot (or by returning), and replies from
// its goroutine. The error returned to jsonrpc2 would end the connection, so
// it is always nil.
func (s *Server) handle(ctx context.Context, reply jsonrpc2.Replier, req jsonrpc2.Request) error {
	method := req.Method()
	call, isCall := req.(*jsonrpc2.Call)
	if !isCall {
		func() {
			defer func() {
				if r := recover(); r != nil {
					s.bug("panic handling %s: %v\n%s", method, r, debug.Stack())
				}
			}()
			s.notification(ctx, method, json.RawMessage(req.Params()))
		}()
		return nil
	}
	send := func(result any, err error) {
		if err := reply(ctx, result, err); err != nil && ctx.Err() == nil {
			s.log.Warn("reply failed", zap.String("method", method), zap.Error(err))
		}
	}
	h, result, err := s.lifecycle(method, json.RawMessage(req.Params()))
	if h == nil {
		send(result, err)
		return nil
	}
	params := append(json.RawMessage(nil), req.Params()...)
	// The handler gets a server-lived context that $/cancelRequest cancels
	// and that carries the release of the read loop.
	id := idOf(call.ID())
	rctx, cancel := context.WithCancel(s.ctx)
	ir := &inflightReq{cancel: cancel}
	s.inflightMu.Lock()
	s.inflight[id] = ir
	s.inflightMu.Unlock()
	released := make(chan struct{})
	var once sync.Once
	release := func() { once.Do(func() { close(released) }) }
	hctx := context.WithValue(context.WithValue(rctx, releaseKey{}, release), inflightKey{}, ir)
	go func() {
		defer release()
		res, err := s.runRequest(hctx, method, h, params)
		s.inflightMu.Lock()
		delete(s.inflight, id)
		superseded := ir.superseded
		s.inflightMu.Unlock()
		cancel()
		if superseded {
			res, err = nil, errContentModified
		}
		send(res, err)
	}()
	<-released
	return nil
}

// inflightReq is a request being answered: its cancel, and the document it
// reads (set by docRequest), so that an edit of that document cancels it.
type inflightReq struct {
	cancel     context.CancelFunc
	path       string // guarded by Server.inflightMu
	superseded bool   // guarded by Server.inflightMu
}

type inflightKey struct{}

// errContentModified answers a request cancelled because its document
// changed while it ran (LSP 3.17: ContentModified).
var errContentModified = jsonrpc2.NewError(-32801, "the document changed while the request ran; ask again")

// reads records that the request of ctx reads the document at path.
func (s *Server) reads(ctx context.Context, path string) {
	if ir, ok := ctx.Value(inflightKey{}).(*inflightReq); ok {
		s.inflightMu.Lock()
		ir.path = path
		s.inflightMu.Unlock()
	}
}

// supersede cancels every request reading path: an edit made its answer
// stale.
func (s *Server) supersede(path string) {
	s.inflightMu.Lock()
	defer s.inflightMu.Unlock()
	for _, ir := range s.inflight {
		if ir.path == path && !ir.superseded {
			ir.superseded = true
			ir.cancel()
		}
	}
}

// lifecycle answers what the session state decides alone (initialize,
// shutdown, requests out of order, unknown methods); otherwise it returns
// the method's handler.
func (s *Server) lifecycle(method string, params json.RawMessage) (h requestHandler, result any, err error) {
	defer func() {
		if r := recover(); r != nil {
			s.bug("panic handling %s: %v\n%s", method, r, debug.Stack())
			h, result, err = nil, nil, errorf(jsonrpc2.InternalError, "internal error in %s (logged): %v", method, r)
		}
	}()
	s.mu.Lock()
	initialized, shutdown := s.initialized, s.shutdown
	s.mu.Unlock()
	switch {
	case shutdown:
		return nil, nil, errorf(jsonrpc2.InvalidRequest, "%s after shutdown: the server only accepts exit now", method)
	case method == protocol.MethodInitialize:
		if initialized {
			return nil, nil, errorf(jsonrpc2.InvalidRequest, "initialize was already received")
		}
		result, err = s.initialize(params)
		return nil, result, err
	case !initialized:
		return nil, nil, errorf(jsonrpc2.ServerNotInitialized, "%s before initialize", method)
	case method == protocol.MethodShutdown:
		s.mu.Lock()
		s.shutdown = true
		s.mu.Unlock()
		s.stopAll()
		return nil, nil, nil
	}
	h, ok := requestHandlers[method]
	if !ok {
		return nil, nil, errorf(jsonrpc2.MethodNotFound, "method %q is not supported", method)
	}
	return h, nil, nil
}

// runRequest runs a request handler, turning a panic into a bug report and
// an InternalError, and a cancelled context into RequestCancelled.
func (s *Server) runRequest(ctx context.Context, method string, h requestHandler, params json.RawMessage) (result any, err error) {
	defer func() {
		if r := recover(); r != nil {
			s.bug("panic handling %s: %v\n%s", method, r, debug.Stack())
			result, err = nil, errorf(jsonrpc2.InternalError, "internal error in %s (logged): %v", method, r)
		}
	}()
	res, err := h(s, ctx, params)
	if err != nil {
		return nil, err
	}
	if ctx.Err() != nil {
		return nil, errCancelled
	}
	return marshal(res)
}

type releaseKey struct{}

// async releases the connection's read loop so that later messages are
// read while this request computes. Call it after taking the snapshot: the
// messages before the request are then applied, the ones after are not.
func async(ctx context.Context) {
	if release, ok := ctx.Value(releaseKey{}).(func()); ok {
		release()
	}
}

// cancel cancels the in-flight request id, if any.
func (s *Server) cancel(id requestID) {
	s.inflightMu.Lock()
	ir := s.inflight[id]
	s.inflightMu.Unlock()
	if ir != nil {
		ir.cancel()
	}
}

// marshal encodes a result with encoding/json (escaping no HTML, so an
// svg travels readable); nil becomes JSON null.
func marshal(v any) (json.RawMessage, error) {
	if v == nil {
		return json.RawMessage("null"), nil
	}
	var b jsonBuffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, errorf(jsonrpc2.InternalError, "encoding the result: %v", err)
	}
	return json.RawMessage(b.trimmed()), nil
}

type jsonBuffer struct{ b []byte }

func (j *jsonBuffer) Write(p []byte) (int, error) { j.b = append(j.b, p...); return len(p), nil }
func (j *jsonBuffer) trimmed() []byte {
	if n := len(j.b); n > 0 && j.b[n-1] == '\n' {
		return j.b[:n-1]
	}
	return j.b
}

// remarshal converts a decoded JSON value (an interface{} field of a
// protocol type) into v through its JSON form.
func remarshal(val any, v any) error {
	b, err := json.Marshal(val)
	if err != nil {
		return err
	}
	return json.Unmarshal(b, v)
}

// decode reads params into v; bad params are InvalidParams.
func decode(params json.RawMessage, v any) error {
	if len(params) == 0 {
		return errorf(jsonrpc2.InvalidParams, "missing params")
	}
	if err := json.Unmarshal(params, v); err != nil {
		return errorf(jsonrpc2.InvalidParams, "invalid params: %v", err)
	}
	return nil
}

// requestHandler answers one request method. The read loop waits for it until
// it calls async(ctx) (after taking its snapshot) or returns.
type requestHandler func(s *Server, ctx context.Context, params json.RawMessage) (any, error)

var requestHandlers map[string]requestHandler

func init() {
	requestHandlers = map[string]requestHandler{
		protocol.MethodTextDocumentHover:           (*Server).hover,
		protocol.MethodTextDocumentCodeAction:      (*Server).codeAction,
		protocol.MethodTextDocumentDefinition:      (*Server).definition,
		protocol.MethodTextDocumentReferences:      (*Server).references,
		protocol.MethodTextDocumentRename:          (*Server).rename,
		protocol.MethodTextDocumentPrepareRename:   (*Server).prepareRename,
		protocol.MethodTextDocumentDocumentSymbol:  (*Server).documentSymbol,
		protocol.MethodWorkspaceSymbol:             (*Server).workspaceSymbol,
		protocol.MethodTextDocumentCompletion:      (*Server).completion,
		protocol.MethodTextDocumentFormatting:      (*Server).formatting,
		protocol.MethodTextDocumentRangeFormatting: (*Server).rangeFormatting,
		protocol.MethodSemanticTokensFull:          (*Server).semanticTokens,
		protocol.MethodTextDocumentFoldingRange:    (*Server).foldingRange,
		protocol.MethodTextDocumentCodeLens:        (*Server).codeLens,
		lspext.MethodDocumentText:                  (*Server).documentText,
		lspext.MethodInlayHint:                     (*Server).inlayHint,
		protocol.MethodWorkspaceExecuteCommand:     (*Server).executeCommand,
	}
}

// notification applies a notification; errors are logged, never returned
// (a notification error would end the connection).
func (s *Server) notification(ctx context.Context, method string, params json.RawMessage) {
	if method == protocol.MethodExit {
		s.mu.Lock()
		s.exitSeen = true
		s.mu.Unlock()
		s.exitOnce.Do(func() { close(s.exited) })
		return
	}
	if method == protocol.MethodCancelRequest {
		var p protocol.CancelParams
		if json.Unmarshal(params, &p) == nil {
			if id, ok := idOfValue(p.ID); ok {
				s.cancel(id)
			}
		}
		return
	}
	s.mu.Lock()
	ready := s.initialized && !s.shutdown
	s.mu.Unlock()
	if !ready {
		s.log.Debug("notification ignored outside a session", zap.String("method", method))
		return
	}
	var err error
	switch method {
	case protocol.MethodInitialized:
		s.startScan()
	case protocol.MethodTextDocumentDidOpen:
		err = s.didOpen(params)
	case protocol.MethodTextDocumentDidChange:
		err = s.didChange(params)
	case protocol.MethodTextDocumentDidSave:
		err = s.didSave(params)
	case protocol.MethodTextDocumentDidClose:
		err = s.didClose(params)
	case protocol.MethodWorkspaceDidChangeConfiguration:
		err = s.didChangeConfiguration(params)
	case protocol.MethodWorkspaceDidChangeWorkspaceFolders:
		err = s.didChangeWorkspaceFolders(params)
	case protocol.MethodWorkspaceDidChangeWatchedFiles:
		s.filesChanged()
	default:
		s.log.Debug("notification ignored", zap.String("method", method))
	}
	if err != nil {
		s.log.Warn("notification failed", zap.String("method", method), zap.Error(err))
	}
}

// notify sends a notification to the client.
func (s *Server) notify(method string, params any) {
	raw, err := marshal(params)
	if err != nil {
		s.bug("encoding %s: %v", method, err)
		return
	}
	if err := s.conn.Notify(s.ctx, method, raw); err != nil && s.ctx.Err() == nil {
		s.log.Warn("notify failed", zap.String("method", method), zap.Error(err))
	}
}

// call sends a request to the client and waits (never from the read loop).
func (s *Server) call(ctx context.Context, method string, params any) error {
	raw, err := marshal(params)
	if err != nil {
		return err
	}
	_, err = s.conn.Call(ctx, method, raw, nil)
	return err
}
