package conformance

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// quietPeriod is how long a case waits to see that a notification got no
// answer (after the probe's answer, which the server sends later in wire
// order, so this only guards answers that come late).
const quietPeriod = 100 * time.Millisecond

// caseEnv is the state of one malformed-protocol case.
type caseEnv struct {
	t        *testing.T
	p        *proc
	dir      string // workspace folder, with conveyor.loop in it
	uri      string // conveyor.loop, open after setup when the case initializes
	text     string // its text
	inited   bool
	failures []string
	noProbe  bool // the case checked liveness itself (after shutdown, exit)
}

func (c *caseEnv) fail(format string, args ...any) {
	c.failures = append(c.failures, fmt.Sprintf(format, args...))
}

// init initializes the server and opens conveyor.loop.
func (c *caseEnv) init() {
	c.p.initialize(c.dir, nil)
	c.p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": c.uri, "languageId": "loop", "version": 1, "text": c.text}})
	c.inited = true
}

// rawCall frames body, sends it and returns the answer with id (compact
// JSON text), or records a failure.
func (c *caseEnv) rawCall(body, id string) (message, bool) {
	c.p.write(frame(body))
	m, err := c.p.response(id, replyTimeout)
	if err != nil {
		c.fail("sent %s: %v", body, err)
		return message{}, false
	}
	return m, true
}

// wantError checks that m is an error with the given code.
func (c *caseEnv) wantError(what string, m message, code int) {
	if m.Error == nil {
		c.fail("%s: want error %d, got result %s", what, code, m)
		return
	}
	if m.Error.Code != code {
		c.fail("%s: want error %d, got %d %q", what, code, m.Error.Code, m.Error.Message)
	}
}

// nullIDError waits for an error answer with id null (what JSON-RPC 2.0
// prescribes when the id of a bad message cannot be read) and checks its
// code.
func (c *caseEnv) nullIDError(what string, from int, code int) {
	m, ok := c.p.waitFor(from, replyTimeout, func(m message) bool { return m.isResponse() && m.idKey() == "null" })
	if !ok {
		c.fail("%s: want an error %d with id null, got none (%s)", what, code, c.p.state())
		return
	}
	c.wantError(what, m, code)
}

// hover sends a hover request with the given params (any JSON value).
func (c *caseEnv) call(method string, params any) (message, bool) {
	m, err := c.p.call(method, params)
	if err != nil {
		c.fail("%s %v: %v", method, params, err)
		return message{}, false
	}
	return m, true
}

func (c *caseEnv) hoverAt(line, char int) (message, bool) {
	return c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": c.uri}, "position": map[string]any{"line": line, "character": char}})
}

// needDocText returns the server's text of uri, skipping the case when the
// binary lacks ringside/documentText.
func (c *caseEnv) needDocText(uri string) (string, bool) {
	text, _, m, err := c.p.docText(uri)
	if err != nil {
		c.fail("ringside/documentText: %v", err)
		return "", false
	}
	if m.Error != nil {
		if m.Error.Code == codeMethodNotFound {
			c.t.Skip("this binary lacks ringside/documentText (MethodNotFound); run against a build that has it")
		}
		return "", false
	}
	return text, true
}

// probe proves the server still answers a valid request; it returns the
// request's id.
func (c *caseEnv) probe() string {
	if !c.inited {
		c.init()
	}
	id := c.p.request("textDocument/documentSymbol", map[string]any{"textDocument": map[string]any{"uri": c.uri}})
	m, err := c.p.response(id, replyTimeout)
	if err != nil {
		c.fail("probe (documentSymbol) unanswered: %v", err)
	} else if m.Error != nil {
		c.fail("probe (documentSymbol): error %d %s", m.Error.Code, m.Error.Message)
	}
	return id
}

// noAnswers checks that no answer arrived from index from on except those
// to the listed ids.
func (c *caseEnv) noAnswers(from int, allowed ...string) {
	time.Sleep(quietPeriod)
	for _, m := range c.p.since(from) {
		if !m.isResponse() {
			continue
		}
		ok := false
		for _, id := range allowed {
			ok = ok || m.idKey() == id
		}
		if !ok {
			c.fail("unexpected answer %s", m)
		}
	}
}

// noDiagnostics checks that nothing was published for uri from index from on.
func (c *caseEnv) noDiagnostics(from int, uri string) {
	time.Sleep(quietPeriod)
	if pp, ok := c.p.diagnosticsFor(from, uri, -1, 0); ok {
		c.fail("diagnostics published for %s, which should not be open: %+v", uri, pp)
	}
}

// protoCase is one malformed or edge-case exchange.
type protoCase struct {
	name   string
	noInit bool // run against a server that has not been initialized
	run    func(c *caseEnv)
	// bug names a server bug the lead is to fix: the case still runs its
	// assertions, and skips (naming the bug and what came back) when they
	// fail; RINGSIDE_STRICT=1 makes it fail instead. A marked case that
	// passes fails, so that the mark is removed.
	bug string
}

func req(id, method, params string) string {
	return fmt.Sprintf(`{"jsonrpc":"2.0","id":%s,"method":%q,"params":%s}`, id, method, params)
}

func (c *caseEnv) symbolsReq(id string) string {
	return req(id, "textDocument/documentSymbol", fmt.Sprintf(`{"textDocument":{"uri":%q}}`, c.uri))
}

// TestMalformedProtocol sends each case to a fresh server, then a valid
// request, and checks the answers (JSON-RPC 2.0 and LSP 3.17 base protocol)
// and that the process still runs.
func TestMalformedProtocol(t *testing.T) {
	conveyor, err := os.ReadFile(filepath.Join(moduleRoot, "testdata", "demo", "conveyor.loop"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range protoCases {
		t.Run(strings.ReplaceAll(tc.name, " ", "_"), func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			path := filepath.Join(dir, "conveyor.loop")
			if err := os.WriteFile(path, conveyor, 0o644); err != nil {
				t.Fatal(err)
			}
			c := &caseEnv{t: t, p: start(t, dir), dir: dir, uri: fileURI(path), text: string(conveyor)}
			if !tc.noInit {
				c.init()
			}
			tc.run(c)
			if !c.noProbe {
				c.probe()
				if !c.p.alive() {
					c.fail("the server is no longer running: %s", c.p.state())
				}
			}
			if len(c.p.badFrames) > 0 {
				c.fail("the server sent unreadable frames: %q", c.p.badFrames)
			}
			report := strings.Join(c.failures, "\n")
			switch {
			case tc.bug != "" && report != "" && os.Getenv("RINGSIDE_STRICT") != "1":
				t.Skipf("known server bug: %s\n%s", tc.bug, report)
			case report != "":
				t.Errorf("%s", report)
			case tc.bug != "":
				t.Errorf("marked as bug %q but the case passes: remove the mark", tc.bug)
			}
		})
	}
}

var protoCases = []protoCase{
	// ---- framing ----
	{name: "missing Content-Length", run: func(c *caseEnv) {
		c.p.write([]byte("Content-Type: application/vscode-jsonrpc; charset=utf-8\r\n\r\n" + c.symbolsReq("100") + "\r\n"))
	}},
	{name: "Content-Length not a number", run: func(c *caseEnv) {
		c.p.write([]byte("Content-Length: abc\r\n\r\n" + c.symbolsReq("100") + "\r\n"))
	}},
	{name: "negative Content-Length", run: func(c *caseEnv) {
		c.p.write([]byte("Content-Length: -5\r\n\r\n" + c.symbolsReq("100") + "\r\n"))
	}},
	{name: "Content-Length larger than what has arrived", run: func(c *caseEnv) {
		// The body comes in two writes: the server must wait for the rest.
		body := c.symbolsReq("100")
		c.p.write([]byte(fmt.Sprintf("Content-Length: %d\r\n\r\n%s", len(body), body[:len(body)/2])))
		time.Sleep(200 * time.Millisecond)
		c.p.write([]byte(body[len(body)/2:]))
		if m, err := c.p.response("100", replyTimeout); err != nil {
			c.fail("split body: %v", err)
		} else if m.Error != nil {
			c.fail("split body: error %s", m)
		}
	}},
	{name: "Content-Length smaller than the body", run: func(c *caseEnv) {
		from := c.p.mark()
		body := c.symbolsReq("100")
		c.p.write([]byte(fmt.Sprintf("Content-Length: %d\r\n\r\n%s\r\n", len(body)-10, body)))
		// The first len-10 bytes are not JSON: a parse error, id null.
		c.nullIDError("truncated body", from, codeParseError)
	}},
	{name: "Content-Length zero", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write([]byte("Content-Length: 0\r\n\r\n"))
		c.nullIDError("empty body", from, codeParseError)
	}},
	{name: "unknown header", run: func(c *caseEnv) {
		body := c.symbolsReq("100")
		c.p.write([]byte(fmt.Sprintf("X-Ringside-Trace: 1\r\nContent-Length: %d\r\n\r\n%s", len(body), body)))
		if m, err := c.p.response("100", replyTimeout); err != nil || m.Error != nil {
			c.fail("request with an unknown header: %v %s", err, m)
		}
	}},
	{name: "Content-Type header before and after", run: func(c *caseEnv) {
		body := c.symbolsReq("100")
		c.p.write([]byte(fmt.Sprintf("Content-Type: application/vscode-jsonrpc; charset=utf-8\r\nContent-Length: %d\r\nContent-Type: application/vscode-jsonrpc\r\n\r\n%s", len(body), body)))
		if m, err := c.p.response("100", replyTimeout); err != nil || m.Error != nil {
			c.fail("request with Content-Type headers: %v %s", err, m)
		}
	}},

	// ---- JSON ----
	{name: "invalid JSON", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`{"jsonrpc":"2.0","id":7,"method":`))
		c.nullIDError("invalid JSON", from, codeParseError)
	}},
	{name: "JSON number instead of an object", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`42`))
		c.nullIDError("42", from, codeInvalidRequest)
	}},
	{name: "JSON string instead of an object", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`"initialize"`))
		c.nullIDError(`"initialize"`, from, codeInvalidRequest)
	}},
	{name: "JSON null instead of an object", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`null`))
		c.nullIDError("null", from, codeInvalidRequest)
	}},
	{name: "batch array", run: func(c *caseEnv) {
		// LSP has no batches; JSON-RPC 2.0 lets a server answer the batch
		// or reject it as an invalid request. Either is accepted.
		from := c.p.mark()
		c.p.write(frame("[" + c.symbolsReq("101") + "," + c.symbolsReq("102") + "]"))
		m, ok := c.p.waitFor(from, replyTimeout, func(m message) bool {
			return m.Batch != nil || (m.isResponse() && (m.idKey() == "null" || m.idKey() == "101"))
		})
		switch {
		case !ok:
			c.fail("batch: no answer (%s)", c.p.state())
		case m.Batch != nil:
			if len(m.Batch) != 2 {
				c.fail("batch answer with %d elements: %s", len(m.Batch), m)
			}
		case m.idKey() == "null":
			c.wantError("batch", m, codeInvalidRequest)
		default:
			c.fail("batch element answered alone: %s", m)
		}
	}},
	{name: "empty batch", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`[]`))
		c.nullIDError("[]", from, codeInvalidRequest)
	}},
	{name: "wrong jsonrpc version", run: func(c *caseEnv) {
		if m, ok := c.rawCall(fmt.Sprintf(`{"jsonrpc":"1.0","id":10,"method":"textDocument/documentSymbol","params":{"textDocument":{"uri":%q}}}`, c.uri), "10"); ok {
			c.wantError("jsonrpc 1.0", m, codeInvalidRequest)
		}
	}},
	{name: "missing jsonrpc member", run: func(c *caseEnv) {
		if m, ok := c.rawCall(fmt.Sprintf(`{"id":12,"method":"textDocument/documentSymbol","params":{"textDocument":{"uri":%q}}}`, c.uri), "12"); ok {
			c.wantError("no jsonrpc member", m, codeInvalidRequest)
		}
	}},
	{name: "missing method", run: func(c *caseEnv) {
		if m, ok := c.rawCall(`{"jsonrpc":"2.0","id":11,"params":{}}`, "11"); ok {
			c.wantError("no method", m, codeInvalidRequest)
		}
	}},
	{name: "method not a string", run: func(c *caseEnv) {
		if m, ok := c.rawCall(`{"jsonrpc":"2.0","id":13,"method":5}`, "13"); ok {
			c.wantError("method 5", m, codeInvalidRequest)
		}
	}},
	{name: "unknown method", run: func(c *caseEnv) {
		if m, ok := c.rawCall(req("14", "textDocument/ringsideNoSuchThing", `{}`), "14"); ok {
			c.wantError("unknown method", m, codeMethodNotFound)
		}
	}},
	{name: "unknown dollar request", run: func(c *caseEnv) {
		// LSP: a $/ request the server does not know gets MethodNotFound.
		if m, ok := c.rawCall(req("15", "$/ringsideNoSuchThing", `{}`), "15"); ok {
			c.wantError("unknown $/ request", m, codeMethodNotFound)
		}
	}},
	{name: "unknown notifications ignored", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.notify("ringside/noSuchNotification", map[string]any{})
		c.p.notify("$/noSuchNotification", map[string]any{})
		c.p.notify("$/setTrace", map[string]any{"value": "off"})
		c.noAnswers(from, c.probe())
	}},

	// ---- ids ----
	{name: "string id", run: func(c *caseEnv) {
		if m, ok := c.rawCall(c.symbolsReq(`"ab\"c"`), `"ab\"c"`); ok && m.Error != nil {
			c.fail("string id: %s", m)
		}
	}},
	{name: "large number id", run: func(c *caseEnv) {
		if m, ok := c.rawCall(c.symbolsReq(`9007199254740991`), `9007199254740991`); ok && m.Error != nil {
			c.fail("number id 2^53-1: %s", m)
		}
	}},
	{name: "null id", run: func(c *caseEnv) {
		// JSON-RPC 2.0 allows a null id and answers with id null; LSP
		// allows only numbers and strings. Either an answer or an Invalid
		// Request error is right, but with id null and never silence.
		from := c.p.mark()
		c.p.write(frame(c.symbolsReq(`null`)))
		// The probe after it is answered at once, so 2 s is ample.
		m, ok := c.p.waitFor(from, 2*time.Second, func(m message) bool { return m.isResponse() && m.idKey() == "null" })
		if !ok {
			c.fail("id null: no answer (%s)", c.p.state())
		} else if m.Error != nil && m.Error.Code != codeInvalidRequest {
			c.fail("id null: %s", m)
		}
	}},
	{name: "boolean id", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(c.symbolsReq(`true`)))
		c.nullIDError("id true", from, codeInvalidRequest)
	}},
	{name: "object id", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(c.symbolsReq(`{"n":1}`)))
		c.nullIDError("id object", from, codeInvalidRequest)
	}},
	{name: "array id", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(c.symbolsReq(`[1]`)))
		c.nullIDError("id array", from, codeInvalidRequest)
	}},

	// ---- parameter types ----
	{name: "initialize with string params", noInit: true, run: func(c *caseEnv) {
		if m, ok := c.rawCall(req("1", "initialize", `"root"`), "1"); ok {
			c.wantError("initialize string", m, codeInvalidParams)
		}
		c.p.nextID = 2
	}},
	{name: "initialize with number rootUri", noInit: true, run: func(c *caseEnv) {
		if m, ok := c.rawCall(req("1", "initialize", `{"processId":null,"rootUri":42,"capabilities":{}}`), "1"); ok {
			c.wantError("rootUri 42", m, codeInvalidParams)
		}
		c.p.nextID = 2
	}},
	{name: "didOpen with string params", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`{"jsonrpc":"2.0","method":"textDocument/didOpen","params":"conveyor.loop"}`))
		c.noAnswers(from, c.probe())
	}},
	{name: "didOpen with number uri", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(`{"jsonrpc":"2.0","method":"textDocument/didOpen","params":{"textDocument":{"uri":42,"languageId":"loop","version":1,"text":"sample 1 ms\n"}}}`))
		c.noAnswers(from, c.probe())
	}},
	{name: "didChange with string changes", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.write(frame(fmt.Sprintf(`{"jsonrpc":"2.0","method":"textDocument/didChange","params":{"textDocument":{"uri":%q,"version":2},"contentChanges":"x"}}`, c.uri)))
		c.noAnswers(from, c.probe())
		if text, ok := c.needDocText(c.uri); ok && text != c.text {
			c.fail("a malformed didChange changed the document to %q", text)
		}
	}},
	{name: "hover with string params", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/hover", "conveyor.loop"); ok {
			c.wantError("hover string", m, codeInvalidParams)
		}
	}},
	{name: "hover with number uri", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": 42}, "position": map[string]any{"line": 0, "character": 0}}); ok {
			c.wantError("hover uri 42", m, codeInvalidParams)
		}
	}},
	{name: "hover with params array", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/hover", []any{c.uri, 0, 0}); ok {
			c.wantError("hover array", m, codeInvalidParams)
		}
	}},
	{name: "codeAction with string params", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/codeAction", "fix it"); ok {
			c.wantError("codeAction string", m, codeInvalidParams)
		}
	}},
	{name: "codeAction with number range", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/codeAction", map[string]any{"textDocument": map[string]any{"uri": c.uri}, "range": 3, "context": map[string]any{"diagnostics": []any{}}}); ok {
			c.wantError("codeAction range 3", m, codeInvalidParams)
		}
	}},
	{name: "completion with string position", run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/completion", map[string]any{"textDocument": map[string]any{"uri": c.uri}, "position": "3:4"}); ok {
			c.wantError("completion position string", m, codeInvalidParams)
		}
	}},

	// ---- lifecycle ----
	{name: "request before initialize", noInit: true, run: func(c *caseEnv) {
		if m, ok := c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": c.uri}, "position": map[string]any{"line": 0, "character": 0}}); ok {
			c.wantError("hover before initialize", m, codeNotInitialized)
		}
	}},
	{name: "shutdown before initialize", noInit: true, run: func(c *caseEnv) {
		if m, ok := c.call("shutdown", nil); ok {
			c.wantError("shutdown before initialize", m, codeNotInitialized)
		}
	}},
	{name: "notifications before initialize ignored", noInit: true, run: func(c *caseEnv) {
		from := c.p.mark()
		ghost := fileURI(filepath.Join(c.dir, "ghost.loop"))
		c.p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": ghost, "languageId": "loop", "version": 1, "text": "sample 1 ms\n"}})
		c.init()
		c.noDiagnostics(from, ghost)
		if m, ok := c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": ghost}, "position": map[string]any{"line": 0, "character": 0}}); ok && m.Error == nil && string(m.Result) != "null" {
			c.fail("a document opened before initialize is served: %s", m)
		}
		c.noAnswers(from, "1", "2")
	}},
	{name: "second initialize", run: func(c *caseEnv) {
		if m, ok := c.call("initialize", map[string]any{"processId": nil, "rootUri": fileURI(c.dir), "capabilities": map[string]any{}}); ok {
			c.wantError("second initialize", m, codeInvalidRequest)
		}
	}},
	{name: "requests after shutdown", run: func(c *caseEnv) {
		c.noProbe = true
		if m, ok := c.call("shutdown", nil); !ok || m.Error != nil {
			c.fail("shutdown: %s", m)
		}
		for _, method := range []string{"textDocument/documentSymbol", "shutdown", "initialize"} {
			if m, ok := c.call(method, map[string]any{"textDocument": map[string]any{"uri": c.uri}}); ok {
				c.wantError(method+" after shutdown", m, codeInvalidRequest)
			}
		}
		c.p.notify("exit", nil)
		if code, err := c.p.exitCode(replyTimeout); err != nil || code != 0 {
			c.fail("exit after shutdown: status %d %v", code, err)
		}
	}},
	{name: "exit without shutdown", run: func(c *caseEnv) {
		c.noProbe = true
		c.p.notify("exit", nil)
		if code, err := c.p.exitCode(replyTimeout); err != nil || code != 1 {
			c.fail("exit without shutdown: status %d %v (want 1)", code, err)
		}
	}},
	{name: "cancel unknown ids", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.notify("$/cancelRequest", map[string]any{"id": 999})
		c.p.notify("$/cancelRequest", map[string]any{"id": "nobody"})
		c.p.notify("$/cancelRequest", map[string]any{"id": nil})
		c.noAnswers(from, c.probe())
	}},

	// ---- positions and documents ----
	{name: "hover past the end of a line", run: func(c *caseEnv) {
		// LSP 3.17, Position: a character past the line length defaults
		// back to the line length.
		if m, ok := c.hoverAt(1, 500); ok && m.Error != nil {
			c.fail("hover at 1:500: %s", m)
		}
	}},
	{name: "hover past the end of the file", run: func(c *caseEnv) {
		// The protocol does not say; an InvalidParams error or no hover,
		// never an internal error.
		if m, ok := c.hoverAt(10000, 0); ok && m.Error != nil && m.Error.Code != codeInvalidParams {
			c.fail("hover at 10000:0: %s", m)
		}
	}},
	{name: "negative position", run: func(c *caseEnv) {
		// Position members are uinteger.
		if m, ok := c.hoverAt(-1, -3); ok {
			c.wantError("hover at -1:-3", m, codeInvalidParams)
		}
	}},
	{name: "codeAction range end before start", run: func(c *caseEnv) {
		m, ok := c.call("textDocument/codeAction", map[string]any{"textDocument": map[string]any{"uri": c.uri},
			"range": map[string]any{"start": map[string]any{"line": 5, "character": 3}, "end": map[string]any{"line": 2, "character": 0}}, "context": map[string]any{"diagnostics": []any{}}})
		if ok && m.Error != nil && m.Error.Code != codeInvalidParams {
			c.fail("reversed codeAction range: %s", m)
		}
	}},
	{name: "didChange range end before start", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": c.uri, "version": 2}, "contentChanges": []any{
			map[string]any{"range": map[string]any{"start": map[string]any{"line": 3, "character": 2}, "end": map[string]any{"line": 1, "character": 0}}, "text": "X"}}})
		c.noAnswers(from, c.probe())
		if text, ok := c.needDocText(c.uri); ok && text != c.text {
			c.fail("a reversed range changed the document to %q", text)
		}
	}},
	{name: "didChange past the end of a line", run: func(c *caseEnv) {
		// LSP 3.17, Position: clamp to the line length, so the insertion
		// lands at the end of line 1.
		c.p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": c.uri, "version": 2}, "contentChanges": []any{
			map[string]any{"range": map[string]any{"start": map[string]any{"line": 1, "character": 900}, "end": map[string]any{"line": 1, "character": 900}}, "text": " # end"}}})
		lines := strings.SplitAfter(c.text, "\n")
		lines[1] = strings.TrimSuffix(lines[1], "\n") + " # end\n"
		want := strings.Join(lines, "")
		if text, ok := c.needDocText(c.uri); ok && text != want {
			c.fail("insertion past line end: server text\n%q\nwant\n%q", text, want)
		}
	}},
	{name: "hover on a never opened file", run: func(c *caseEnv) {
		m, ok := c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": fileURI(filepath.Join(c.dir, "nowhere.loop"))}, "position": map[string]any{"line": 0, "character": 0}})
		if ok && m.Error != nil && m.Error.Code != codeRequestFailed && m.Error.Code != codeInvalidParams {
			c.fail("hover on an unknown file: %s", m)
		}
	}},
	{name: "didChange for an unopened document", run: func(c *caseEnv) {
		from := c.p.mark()
		ghost := fileURI(filepath.Join(c.dir, "ghost.loop"))
		c.p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": ghost, "version": 2}, "contentChanges": []any{map[string]any{"text": "sample 1 ms\n"}}})
		c.noAnswers(from, c.probe())
		c.noDiagnostics(from, ghost)
	}},
	{name: "huge didOpen", run: func(c *caseEnv) {
		// 5 MB of comments: over the analysis' file-size limit, which must
		// be said in a diagnostic, soon.
		from := c.p.mark()
		big := fileURI(filepath.Join(c.dir, "big.loop"))
		text := strings.Repeat("# "+strings.Repeat("x", 97)+"\n", 50000) + "sample 1 ms\n"
		c.p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": big, "languageId": "loop", "version": 1, "text": text}})
		pp, ok := c.p.diagnosticsFor(from, big, 1, replyTimeout)
		if !ok {
			c.fail("no diagnostics for a 5 MB file within %v (%s)", replyTimeout, c.p.state())
			return
		}
		found := false
		for _, d := range pp.Diagnostics {
			found = found || (d.Severity == 1 && strings.Contains(d.Message, "limit"))
		}
		if !found {
			c.fail("5 MB file: no error about the size limit in %+v", pp.Diagnostics)
		}
	}},
	{name: "invalid UTF-8 in text", run: func(c *caseEnv) {
		from := c.p.mark()
		bad := fileURI(filepath.Join(c.dir, "bad.loop"))
		// Raw bytes that are not UTF-8 inside the JSON string: a stray
		// 0xff 0xfe, a truncated é and an encoded surrogate.
		text := `sample 1 ms\n# ` + "\xff\xfe caf\xc3 \xed\xa0\x80" + `\ngain k = 1\n`
		c.p.write(frame(fmt.Sprintf(`{"jsonrpc":"2.0","method":"textDocument/didOpen","params":{"textDocument":{"uri":%q,"languageId":"loop","version":1,"text":"%s"}}}`, bad, text)))
		if _, ok := c.p.diagnosticsFor(from, bad, 1, replyTimeout); !ok {
			c.fail("no diagnostics for a file with invalid UTF-8 (%s)", c.p.state())
		}
		if m, ok := c.call("textDocument/hover", map[string]any{"textDocument": map[string]any{"uri": bad}, "position": map[string]any{"line": 1, "character": 3}}); ok && m.Error != nil {
			c.fail("hover in invalid UTF-8: %s", m)
		}
	}},
	{name: "lone surrogate escape in text", run: func(c *caseEnv) {
		from := c.p.mark()
		bad := fileURI(filepath.Join(c.dir, "surrogate.loop"))
		c.p.write(frame(fmt.Sprintf(`{"jsonrpc":"2.0","method":"textDocument/didOpen","params":{"textDocument":{"uri":%q,"languageId":"loop","version":1,"text":"sample 1 ms\n# \ud800 and \udc00\n"}}}`, bad)))
		if _, ok := c.p.diagnosticsFor(from, bad, 1, replyTimeout); !ok {
			c.fail("no diagnostics for a file with lone surrogates (%s)", c.p.state())
		}
	}},
	{name: "non-file URI", run: func(c *caseEnv) {
		from := c.p.mark()
		c.p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": "untitled:Untitled-1", "languageId": "loop", "version": 1, "text": "sample 1 ms\n"}})
		c.noAnswers(from, c.probe())
	}},
}
