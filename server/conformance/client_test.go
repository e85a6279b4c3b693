package conformance

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"net/url"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// JSON-RPC and LSP error codes (JSON-RPC 2.0 specification, LSP 3.17
// specification).
const (
	codeParseError       = -32700
	codeInvalidRequest   = -32600
	codeMethodNotFound   = -32601
	codeInvalidParams    = -32602
	codeInternalError    = -32603
	codeNotInitialized   = -32002
	codeRequestFailed    = -32803
	codeRequestCancelled = -32800
)

// replyTimeout bounds every wait for an answer: far above any answer of a
// healthy server on a loaded 2-core machine, short enough to fail fast.
const replyTimeout = 10 * time.Second

// rpcError is a JSON-RPC error object.
type rpcError struct {
	Code    int             `json:"code"`
	Message string          `json:"message"`
	Data    json.RawMessage `json:"data,omitempty"`
}

// message is any message the server sent. For a batch answer, Batch holds
// its elements and the other fields are empty.
type message struct {
	JSONRPC string          `json:"jsonrpc"`
	ID      json.RawMessage `json:"id"`
	Method  string          `json:"method"`
	Params  json.RawMessage `json:"params"`
	Result  json.RawMessage `json:"result"`
	Error   *rpcError       `json:"error"`
	Batch   []message       `json:"-"`
	Raw     string          `json:"-"`
}

// isResponse reports whether m answers a request (it has no method).
func (m message) isResponse() bool { return m.Method == "" && m.Batch == nil }

// idKey is the compact text of m's id ("" when absent).
func (m message) idKey() string {
	if m.ID == nil {
		return ""
	}
	var b bytes.Buffer
	if json.Compact(&b, m.ID) != nil {
		return string(m.ID)
	}
	return b.String()
}

func (m message) String() string {
	if len(m.Raw) > 400 {
		return m.Raw[:400] + "…"
	}
	return m.Raw
}

// proc is one running `ringside serve` and the messages it sent.
type proc struct {
	t      testing.TB
	cmd    *exec.Cmd
	in     io.WriteCloser
	stderr *lockedBuffer

	mu      sync.Mutex
	cond    *sync.Cond
	msgs    []message
	readErr error // the framing error or EOF that ended the read loop
	done    bool  // the process has exited
	waitErr error
	nextID  int
	// badFrames counts frames that could not be read (reported as the
	// server's fault).
	badFrames []string
}

type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.b.Len() < 1<<20 {
		l.b.Write(p)
	}
	return len(p), nil
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// start runs the server (serve over stdio) in dir; extra arguments go
// before the binary, for wrappers such as strace.
func start(t testing.TB, dir string, wrapper ...string) *proc {
	t.Helper()
	args := append(append([]string(nil), wrapper...), binary, "serve")
	cmd := exec.Command(args[0], args[1:]...)
	cmd.Dir = dir
	p := &proc{t: t, cmd: cmd, stderr: &lockedBuffer{}, nextID: 1}
	p.cond = sync.NewCond(&p.mu)
	cmd.Stderr = p.stderr
	in, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	p.in = in
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go p.readLoop(out)
	t.Cleanup(p.kill)
	return p
}

// kill ends the process if it still runs (test clean-up).
func (p *proc) kill() {
	p.in.Close()
	if p.waitExit(2*time.Second) == nil {
		return
	}
	p.cmd.Process.Kill()
	p.waitExit(5 * time.Second)
}

// readLoop reads the server's frames until EOF, then reaps the process.
func (p *proc) readLoop(out io.Reader) {
	r := bufio.NewReaderSize(out, 1<<16)
	var err error
	for {
		var body []byte
		body, err = readFrame(r)
		if err != nil {
			break
		}
		m := message{Raw: string(body)}
		trimmed := bytes.TrimSpace(body)
		if len(trimmed) > 0 && trimmed[0] == '[' {
			var elems []json.RawMessage
			if json.Unmarshal(trimmed, &elems) == nil {
				m.Batch = []message{}
				for _, e := range elems {
					var em message
					json.Unmarshal(e, &em)
					em.Raw = string(e)
					m.Batch = append(m.Batch, em)
				}
			}
		} else if e := json.Unmarshal(body, &m); e != nil {
			p.mu.Lock()
			p.badFrames = append(p.badFrames, fmt.Sprintf("%v: %q", e, body))
			p.mu.Unlock()
			continue
		}
		if m.Method != "" && m.ID != nil {
			// A request from the server (progress tokens and the like):
			// accept it so that the server is never left waiting.
			p.write(frame(fmt.Sprintf(`{"jsonrpc":"2.0","id":%s,"result":null}`, m.ID)))
		}
		p.mu.Lock()
		p.msgs = append(p.msgs, m)
		p.cond.Broadcast()
		p.mu.Unlock()
	}
	werr := p.cmd.Wait()
	p.mu.Lock()
	p.readErr = err
	p.done = true
	p.waitErr = werr
	p.cond.Broadcast()
	p.mu.Unlock()
}

// readFrame reads one Content-Length framed body.
func readFrame(r *bufio.Reader) ([]byte, error) {
	length := -1
	for {
		line, err := r.ReadString('\n')
		if err != nil {
			return nil, err
		}
		line = strings.TrimRight(line, "\r\n")
		if line == "" {
			break
		}
		name, value, ok := strings.Cut(line, ":")
		if !ok {
			return nil, fmt.Errorf("bad header line %q", line)
		}
		if strings.EqualFold(strings.TrimSpace(name), "Content-Length") {
			n, err := strconv.Atoi(strings.TrimSpace(value))
			if err != nil || n < 0 {
				return nil, fmt.Errorf("bad Content-Length %q", value)
			}
			length = n
		}
	}
	if length < 0 {
		return nil, fmt.Errorf("frame without Content-Length")
	}
	body := make([]byte, length)
	_, err := io.ReadFull(r, body)
	return body, err
}

// frame wraps a body in the base protocol's header.
func frame(body string) []byte {
	return []byte(fmt.Sprintf("Content-Length: %d\r\n\r\n%s", len(body), body))
}

// write sends raw bytes; a closed pipe is not an error here (the tests
// check liveness themselves).
func (p *proc) write(b []byte) {
	p.in.Write(b)
}

// send frames and sends a message given as a Go value.
func (p *proc) send(v any) {
	b, err := json.Marshal(v)
	if err != nil {
		p.t.Fatal(err)
	}
	p.write(frame(string(b)))
}

// notify sends a notification.
func (p *proc) notify(method string, params any) {
	p.send(map[string]any{"jsonrpc": "2.0", "method": method, "params": params})
}

// request sends a request with a fresh numeric id and returns that id.
func (p *proc) request(method string, params any) string {
	p.mu.Lock()
	id := p.nextID
	p.nextID++
	p.mu.Unlock()
	m := map[string]any{"jsonrpc": "2.0", "id": id, "method": method}
	if params != nil {
		m["params"] = params
	}
	p.send(m)
	return strconv.Itoa(id)
}

// call sends a request and waits for its answer.
func (p *proc) call(method string, params any) (message, error) {
	return p.response(p.request(method, params), replyTimeout)
}

// mustCall is call that fails the test on a missing answer or an error.
func (p *proc) mustCall(method string, params any) json.RawMessage {
	p.t.Helper()
	m, err := p.call(method, params)
	if err != nil {
		p.t.Fatalf("%s: %v", method, err)
	}
	if m.Error != nil {
		p.t.Fatalf("%s: error %d %s", method, m.Error.Code, m.Error.Message)
	}
	return m.Result
}

// response waits for the answer with the given compact id text.
func (p *proc) response(id string, timeout time.Duration) (message, error) {
	m, ok := p.waitFor(0, timeout, func(m message) bool { return m.isResponse() && m.idKey() == id })
	if !ok {
		return message{}, fmt.Errorf("no answer to id %s within %v (%s)", id, timeout, p.state())
	}
	return m, nil
}

// waitFor returns the first message from index from on that satisfies ok,
// waiting up to timeout.
func (p *proc) waitFor(from int, timeout time.Duration, ok func(message) bool) (message, bool) {
	deadline := time.Now().Add(timeout)
	timer := time.AfterFunc(timeout, func() {
		p.mu.Lock()
		p.cond.Broadcast()
		p.mu.Unlock()
	})
	defer timer.Stop()
	p.mu.Lock()
	defer p.mu.Unlock()
	for i := from; ; {
		for ; i < len(p.msgs); i++ {
			if ok(p.msgs[i]) {
				return p.msgs[i], true
			}
		}
		if p.done || !time.Now().Before(deadline) {
			return message{}, false
		}
		p.cond.Wait()
	}
}

// mark is the number of messages received so far, for waitFor and since.
func (p *proc) mark() int {
	p.mu.Lock()
	defer p.mu.Unlock()
	return len(p.msgs)
}

// since returns the messages received from index from on.
func (p *proc) since(from int) []message {
	p.mu.Lock()
	defer p.mu.Unlock()
	return append([]message(nil), p.msgs[from:]...)
}

// alive reports whether the process still runs.
func (p *proc) alive() bool {
	p.mu.Lock()
	defer p.mu.Unlock()
	return !p.done
}

// waitExit waits for the process to end and returns its wait error, or a
// timeout error.
func (p *proc) waitExit(timeout time.Duration) error {
	deadline := time.Now().Add(timeout)
	timer := time.AfterFunc(timeout, func() {
		p.mu.Lock()
		p.cond.Broadcast()
		p.mu.Unlock()
	})
	defer timer.Stop()
	p.mu.Lock()
	defer p.mu.Unlock()
	for !p.done {
		if !time.Now().Before(deadline) {
			return fmt.Errorf("still running after %v", timeout)
		}
		p.cond.Wait()
	}
	return p.waitErr
}

// exitCode waits for the process to end and returns its exit status.
func (p *proc) exitCode(timeout time.Duration) (int, error) {
	err := p.waitExit(timeout)
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok {
			return ee.ExitCode(), nil
		}
		return -1, err
	}
	return 0, nil
}

// state describes the process for failure messages.
func (p *proc) state() string {
	p.mu.Lock()
	defer p.mu.Unlock()
	s := "running"
	if p.done {
		s = fmt.Sprintf("exited (%v; read loop: %v)", p.waitErr, p.readErr)
	}
	if len(p.badFrames) > 0 {
		s += fmt.Sprintf("; unreadable frames: %q", p.badFrames)
	}
	if e := p.stderr.String(); e != "" {
		if len(e) > 600 {
			e = e[len(e)-600:]
		}
		s += "; stderr: " + e
	}
	return s
}

// initialize runs the handshake with the given initializationOptions (nil:
// none) and root folder.
func (p *proc) initialize(root string, options map[string]any) json.RawMessage {
	p.t.Helper()
	params := map[string]any{"processId": nil, "rootUri": fileURI(root), "capabilities": map[string]any{}}
	if options != nil {
		params["initializationOptions"] = options
	}
	res := p.mustCall("initialize", params)
	p.notify("initialized", map[string]any{})
	return res
}

// shutdownExit ends the session cleanly and checks the exit status 0.
func (p *proc) shutdownExit() {
	p.t.Helper()
	p.mustCall("shutdown", nil)
	p.notify("exit", nil)
	if code, err := p.exitCode(replyTimeout); err != nil || code != 0 {
		p.t.Errorf("exit after shutdown: status %d, %v (%s)", code, err, p.state())
	}
}

// fileURI is the file URI of an absolute path (RFC 8089).
func fileURI(path string) string {
	return (&url.URL{Scheme: "file", Path: filepath.ToSlash(path)}).String()
}

// diagnostic is a published diagnostic, reduced to what the tests compare.
type diagnostic struct {
	Range    lspRange `json:"range"`
	Severity int      `json:"severity"`
	Code     string   `json:"code"`
	Message  string   `json:"message"`
}

type lspRange struct {
	Start position `json:"start"`
	End   position `json:"end"`
}

type position struct {
	Line      int `json:"line"`
	Character int `json:"character"`
}

type publishParams struct {
	URI         string       `json:"uri"`
	Version     *int         `json:"version"`
	Diagnostics []diagnostic `json:"diagnostics"`
}

// diagnosticsFor waits for a publishDiagnostics of uri received at index
// from or later whose version (when given) is at least version (negative:
// any).
func (p *proc) diagnosticsFor(from int, uri string, version int, timeout time.Duration) (publishParams, bool) {
	var got publishParams
	_, ok := p.waitFor(from, timeout, func(m message) bool {
		if m.Method != "textDocument/publishDiagnostics" {
			return false
		}
		var pp publishParams
		if json.Unmarshal(m.Params, &pp) != nil || pp.URI != uri {
			return false
		}
		if version >= 0 && (pp.Version == nil || *pp.Version < version) {
			return false
		}
		got = pp
		return true
	})
	return got, ok
}

// docText asks the server for its copy of an open document
// (ringside/documentText).
func (p *proc) docText(uri string) (text string, version int, m message, err error) {
	m, err = p.call("ringside/documentText", map[string]any{"uri": uri})
	if err != nil || m.Error != nil {
		return "", 0, m, err
	}
	var r struct {
		URI     string `json:"uri"`
		Version int    `json:"version"`
		Text    string `json:"text"`
	}
	if err := json.Unmarshal(m.Result, &r); err != nil {
		return "", 0, m, fmt.Errorf("documentText result %s: %v", m.Result, err)
	}
	return r.Text, r.Version, m, nil
}
