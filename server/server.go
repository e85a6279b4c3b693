// Package server is the ringside language server: it speaks the Language
// Server Protocol over a JSON-RPC stream and answers from syntax and
// analysis.
//
// Layering: protocol (LSP types) → Mapper (offsets ↔ positions) → session
// (open documents, settings, cached results) → one small file per feature.
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
	"runtime/debug"
	"sync"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.uber.org/zap"

	"ringside/server/protocol"
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
	stream := jsonrpc2.NewHeaderStream(&rwc{r: in, w: out})
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
	// Close waits for handlers still running; do not hold the caller on a
	// reader that its transport cannot interrupt.
	closed := make(chan struct{})
	go func() { conn.Close(); close(closed) }()
	select {
	case <-closed:
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
	inflight   map[jsonrpc2.ID]context.CancelFunc
	exited     chan struct{}
	exitOnce   sync.Once

	publishMu   sync.Mutex
	mu          sync.Mutex
	initialized bool // initialize answered
	shutdown    bool
	exitSeen    bool
	scanned     int // finished workspace scans
	ses         *session
}

func newServer(ctx context.Context, cfg Config) *Server {
	return &Server{cfg: cfg, log: cfg.Logger, ctx: ctx, exited: make(chan struct{}), ses: newSession(), inflight: map[jsonrpc2.ID]context.CancelFunc{}}
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

// handle is the one entry point of every incoming message. It runs on the
// connection's read loop, so notifications (and the snapshot taken at the
// start of each request) are applied in wire order; slow requests then
// release the loop with jsonrpc2.Async.
func (s *Server) handle(ctx context.Context, req *jsonrpc2.Request) (result any, err error) {
	method := req.Method()
	defer func() {
		if r := recover(); r != nil {
			s.bug("panic handling %s: %v\n%s", method, r, debug.Stack())
			result = nil
			if req.IsCall() {
				err = errorf(jsonrpc2.InternalError, "internal error in %s (logged): %v", method, r)
			} else {
				err = nil
			}
		}
	}()
	if !req.IsCall() {
		s.notification(ctx, method, json.RawMessage(req.Params()))
		return nil, nil
	}
	s.mu.Lock()
	initialized, shutdown := s.initialized, s.shutdown
	s.mu.Unlock()
	switch {
	case shutdown:
		return nil, errorf(jsonrpc2.InvalidRequest, "%s after shutdown: the server only accepts exit now", method)
	case method == protocol.MethodInitialize:
		if initialized {
			return nil, errorf(jsonrpc2.InvalidRequest, "initialize was already received")
		}
		return s.initialize(json.RawMessage(req.Params()))
	case !initialized:
		return nil, errorf(protocol.CodeServerNotInitialized, "%s before initialize", method)
	case method == protocol.MethodShutdown:
		s.mu.Lock()
		s.shutdown = true
		s.mu.Unlock()
		s.stopAll()
		return nil, nil
	}
	h, ok := requestHandlers[method]
	if !ok {
		return nil, errorf(jsonrpc2.MethodNotFound, "method %q is not supported", method)
	}
	params := append(json.RawMessage(nil), req.Params()...)
	// The request's own context is pooled by jsonrpc2 and must not be the
	// parent of contexts that outlive it; the handler gets a server-lived
	// context that $/cancelRequest cancels, carrying the original only for
	// async.
	id := req.ID()
	rctx, cancel := context.WithCancel(s.ctx)
	defer cancel()
	s.inflightMu.Lock()
	s.inflight[id] = cancel
	s.inflightMu.Unlock()
	defer func() {
		s.inflightMu.Lock()
		delete(s.inflight, id)
		s.inflightMu.Unlock()
	}()
	ctx = context.WithValue(rctx, rpcCtxKey{}, ctx)
	res, err := h(s, ctx, params)
	if err != nil {
		return nil, err
	}
	if ctx.Err() != nil {
		return nil, errCancelled
	}
	return marshal(res)
}

type rpcCtxKey struct{}

// async releases the connection's read loop so that later messages are
// read while this request computes. Call it after taking the snapshot: the
// messages before the request are then applied, the ones after are not.
func async(ctx context.Context) {
	if rpc, ok := ctx.Value(rpcCtxKey{}).(context.Context); ok {
		jsonrpc2.Async(rpc)
	}
}

// cancel cancels the in-flight request id, if any.
func (s *Server) cancel(id jsonrpc2.ID) {
	s.inflightMu.Lock()
	c := s.inflight[id]
	s.inflightMu.Unlock()
	if c != nil {
		c()
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

// requestHandler answers one request method. It runs on the read loop until
// it calls jsonrpc2.Async(ctx) (after taking its snapshot).
type requestHandler func(s *Server, ctx context.Context, params json.RawMessage) (any, error)

var requestHandlers map[string]requestHandler

func init() {
	requestHandlers = map[string]requestHandler{
		protocol.MethodHover:              (*Server).hover,
		protocol.MethodCodeAction:         (*Server).codeAction,
		protocol.MethodDefinition:         (*Server).definition,
		protocol.MethodReferences:         (*Server).references,
		protocol.MethodRename:             (*Server).rename,
		protocol.MethodPrepareRename:      (*Server).prepareRename,
		protocol.MethodDocumentSymbol:     (*Server).documentSymbol,
		protocol.MethodWorkspaceSymbol:    (*Server).workspaceSymbol,
		protocol.MethodCompletion:         (*Server).completion,
		protocol.MethodFormatting:         (*Server).formatting,
		protocol.MethodRangeFormatting:    (*Server).rangeFormatting,
		protocol.MethodSemanticTokensFull: (*Server).semanticTokens,
		protocol.MethodFoldingRange:       (*Server).foldingRange,
		protocol.MethodCodeLens:           (*Server).codeLens,
		protocol.MethodInlayHint:          (*Server).inlayHint,
		protocol.MethodExecuteCommand:     (*Server).executeCommand,
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
			var n int64
			var str string
			if json.Unmarshal(p.ID, &n) == nil {
				s.cancel(jsonrpc2.NewNumberID(n))
			} else if json.Unmarshal(p.ID, &str) == nil {
				s.cancel(jsonrpc2.NewStringID(str))
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
	case protocol.MethodDidOpen:
		err = s.didOpen(params)
	case protocol.MethodDidChange:
		err = s.didChange(params)
	case protocol.MethodDidSave:
		err = s.didSave(params)
	case protocol.MethodDidClose:
		err = s.didClose(params)
	case protocol.MethodDidChangeConfiguration:
		err = s.didChangeConfiguration(params)
	case protocol.MethodDidChangeWorkspaceFolders:
		err = s.didChangeWorkspaceFolders(params)
	case protocol.MethodDidChangeWatchedFiles:
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
