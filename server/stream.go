package server

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"sync"

	"go.lsp.dev/jsonrpc2"
)

// stream is jsonrpc2's Content-Length framed stream with its own writer:
// jsonrpc2 encodes params and results with HTML escaping, which turns every
// '<', '>' and '&' (of an svg, of a message such as "|p| < 1") into \u003c
// and the like; this writer undoes those escapes and encodes the same wire
// messages without them, so text travels readable.
//
// Its reader frames like jsonrpc2's, but a frame whose body is not a
// JSON-RPC message is answered with a ParseError (or InvalidRequest) of id
// null, as JSON-RPC 2.0 asks, and reading goes on; jsonrpc2's reader would
// end the connection. A broken header still ends it: the stream cannot be
// resynchronised.
type stream struct {
	rwc     io.ReadWriteCloser
	in      *bufio.Reader
	writeMu sync.Mutex
}

func newStream(rwc io.ReadWriteCloser) *stream {
	return &stream{rwc: rwc, in: bufio.NewReader(rwc)}
}

// maxFrame bounds a message body: far above any .loop document, low enough
// that a corrupt header cannot make the server allocate gigabytes.
const maxFrame = 256 << 20

// Read implements jsonrpc2.Stream. A frame that is not a JSON-RPC 2.0
// message is answered (ParseError or InvalidRequest, as JSON-RPC 2.0 says)
// and reading goes on; a broken header is answered with a ParseError and
// reading resumes at the next Content-Length header.
func (s *stream) Read(ctx context.Context) (jsonrpc2.Message, int64, error) {
	var total int64
	for {
		if err := ctx.Err(); err != nil {
			return nil, total, err
		}
		data, n, err := s.readFrame()
		total += n
		var fe *frameError
		if errors.As(err, &fe) {
			if err := s.writeWire(wireMessage{JSONRPC: "2.0", ID: json.RawMessage("null"), Error: jsonrpc2.NewError(jsonrpc2.ParseError, fe.Error())}); err != nil {
				return nil, total, err
			}
			if fe.resync {
				if err := s.skipToHeader(); err != nil {
					return nil, total, err
				}
			}
			continue
		}
		if err != nil {
			return nil, total, err
		}
		data, bad := checkEnvelope(data)
		if bad != nil {
			if err := s.writeWire(*bad); err != nil {
				return nil, total, err
			}
			continue
		}
		msg, err := jsonrpc2.DecodeMessage(data)
		if err == nil {
			return msg, total, nil
		}
		code, text := jsonrpc2.ParseError, "parse error: "+err.Error()
		if errors.Is(err, jsonrpc2.ErrInvalidRequest) {
			code, text = jsonrpc2.InvalidRequest, "invalid request: neither a request nor a response"
		}
		if err := s.writeWire(wireMessage{JSONRPC: "2.0", ID: json.RawMessage("null"), Error: jsonrpc2.NewError(code, text)}); err != nil {
			return nil, total, err
		}
	}
}

// frameError is a header or body that cannot be read as a frame; resync
// says the body's length is unknown, so the stream must look for the next
// header.
type frameError struct {
	msg    string
	resync bool
}

func (e *frameError) Error() string { return e.msg }

// contentLength is the header that starts every frame in practice; after a
// broken header the reader skips to the next one.
const contentLength = "content-length:"

// skipToHeader discards input up to the next line that starts a
// Content-Length header, which it leaves unread.
func (s *stream) skipToHeader() error {
	for {
		b, err := s.in.Peek(len(contentLength))
		if err != nil {
			return fmt.Errorf("resynchronising after a broken header: %w", err)
		}
		if strings.EqualFold(string(b), contentLength) {
			return nil
		}
		if _, err := s.in.ReadByte(); err != nil {
			return err
		}
	}
}

// bigID marks a numeric id outside jsonrpc2's 32-bit range: it is carried
// inside as a string with this prefix and written back as the number.
const bigID = "\x00ringside-number-id:"

// checkEnvelope checks what jsonrpc2's decoder takes on trust (JSON-RPC 2.0
// section 4 and 5): an object, "jsonrpc": "2.0", an id that is a number or a
// string, a string method, or a result or error. It returns the answer for
// a message that fails, else the data to decode (with a large numeric id
// rewritten, see bigID).
func checkEnvelope(data []byte) ([]byte, *wireMessage) {
	null := json.RawMessage("null")
	invalid := func(id json.RawMessage, why string) *wireMessage {
		return &wireMessage{JSONRPC: "2.0", ID: id, Error: jsonrpc2.NewError(jsonrpc2.InvalidRequest, "invalid request: "+why)}
	}
	parseError := &wireMessage{JSONRPC: "2.0", ID: null, Error: jsonrpc2.NewError(jsonrpc2.ParseError, "parse error: the body is not JSON")}
	body := bytes.TrimSpace(data)
	if len(body) == 0 || body[0] != '{' {
		switch {
		case len(body) == 0 || !json.Valid(body):
			return nil, parseError
		case body[0] == '[':
			return nil, invalid(null, "batches are not part of the Language Server Protocol; send one message per frame")
		}
		return nil, invalid(null, "a message must be a JSON object")
	}
	// One pass: any JSON object decodes into the map, so an error here
	// is one of JSON syntax.
	var env map[string]json.RawMessage
	if err := json.Unmarshal(body, &env); err != nil {
		return nil, parseError
	}
	id, hasID := env["id"]
	if hasID {
		switch t := bytes.TrimSpace(id); {
		case len(t) > 0 && t[0] == '"':
		case len(t) > 0 && (t[0] == '-' || (t[0] >= '0' && t[0] <= '9')):
			if n, err := strconv.ParseInt(string(t), 10, 32); err != nil || n != int64(int32(n)) {
				s, _ := json.Marshal(bigID + string(t))
				env["id"] = s
				data, _ = json.Marshal(env)
			}
		case string(t) == "null":
			return nil, invalid(null, "id null is not allowed: use a number or a string")
		default:
			return nil, invalid(null, "an id must be a number or a string")
		}
	}
	answerID := null
	if hasID {
		answerID = id
	}
	if v, ok := env["jsonrpc"]; !ok || string(bytes.TrimSpace(v)) != `"2.0"` {
		return nil, invalid(answerID, `"jsonrpc" must be "2.0"`)
	}
	m, hasMethod := env["method"]
	_, hasResult := env["result"]
	_, hasError := env["error"]
	switch {
	case hasMethod && (len(bytes.TrimSpace(m)) == 0 || bytes.TrimSpace(m)[0] != '"'):
		return nil, invalid(answerID, `"method" must be a string`)
	case !hasMethod && !hasResult && !hasError:
		if !hasID {
			return nil, invalid(null, "neither a request, a notification nor a response")
		}
		return nil, invalid(answerID, `a request needs a "method"`)
	}
	return data, nil
}

// readFrame reads one Content-Length framed body. A header it cannot use
// is a *frameError.
func (s *stream) readFrame() ([]byte, int64, error) {
	var total, length int64
	seen := false
	var bad *frameError
	for {
		line, err := s.in.ReadString('\n')
		total += int64(len(line))
		if err != nil {
			return nil, total, fmt.Errorf("reading a header: %w", err)
		}
		line = strings.TrimSpace(line)
		if line == "" {
			break
		}
		name, value, ok := strings.Cut(line, ":")
		if !ok {
			return nil, total, &frameError{fmt.Sprintf("parse error: invalid header line %q", truncate(line, 60)), true}
		}
		if strings.EqualFold(strings.TrimSpace(name), "Content-Length") {
			length, err = strconv.ParseInt(strings.TrimSpace(value), 10, 64)
			seen = true
			if err != nil || length < 0 || length > maxFrame {
				bad = &frameError{fmt.Sprintf("parse error: invalid Content-Length %q (want 0-%d)", strings.TrimSpace(value), maxFrame), true}
			}
		}
	}
	switch {
	case bad != nil:
		return nil, total, bad
	case !seen:
		return nil, total, &frameError{"parse error: missing Content-Length header", true}
	case length == 0:
		return nil, total, &frameError{"parse error: empty body (Content-Length: 0)", false}
	}
	data := make([]byte, length)
	n, err := io.ReadFull(s.in, data)
	total += int64(n)
	if err != nil {
		return nil, total, fmt.Errorf("reading a body: %w", err)
	}
	return data, total, nil
}

func truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n] + "…"
}

// Close implements jsonrpc2.Stream.
func (s *stream) Close() error { return s.rwc.Close() }

// wireMessage is a JSON-RPC 2.0 request, notification or response.
type wireMessage struct {
	JSONRPC string          `json:"jsonrpc"`
	ID      json.RawMessage `json:"id,omitempty"`
	Method  string          `json:"method,omitempty"`
	Params  json.RawMessage `json:"params,omitempty"`
	Result  json.RawMessage `json:"result,omitempty"`
	Error   *jsonrpc2.Error `json:"error,omitempty"`
}

// Write implements jsonrpc2.Stream.
func (s *stream) Write(ctx context.Context, msg jsonrpc2.Message) (int64, error) {
	if err := ctx.Err(); err != nil {
		return 0, err
	}
	m := wireMessage{JSONRPC: "2.0"}
	var err error
	switch msg := msg.(type) {
	case *jsonrpc2.Call:
		id := msg.ID()
		m.ID, err = json.Marshal(&id)
		m.Method, m.Params = msg.Method(), unescapeHTML(msg.Params())
	case *jsonrpc2.Notification:
		m.Method, m.Params = msg.Method(), unescapeHTML(msg.Params())
	case *jsonrpc2.Response:
		id := msg.ID()
		m.ID, err = json.Marshal(&id)
		if e := msg.Err(); e != nil {
			m.Error = wireError(e)
		} else {
			m.Result = unescapeHTML(msg.Result())
			if len(m.Result) == 0 {
				m.Result = json.RawMessage("null")
			}
		}
	default:
		return 0, fmt.Errorf("unknown message type %T", msg)
	}
	if err != nil {
		return 0, err
	}
	m.ID = restoreBigID(m.ID)
	return s.writeWireN(m)
}

// restoreBigID writes a numeric id carried as a bigID string back as the
// number the client sent.
func restoreBigID(id json.RawMessage) json.RawMessage {
	var s string
	if len(id) == 0 || id[0] != '"' || json.Unmarshal(id, &s) != nil || !strings.HasPrefix(s, bigID) {
		return id
	}
	return json.RawMessage(strings.TrimPrefix(s, bigID))
}

func (s *stream) writeWire(m wireMessage) error {
	_, err := s.writeWireN(m)
	return err
}

// writeWireN encodes and frames one message; writes are serialised.
func (s *stream) writeWireN(m wireMessage) (int64, error) {
	data, err := appendWire(m)
	if err != nil {
		return 0, fmt.Errorf("encoding message: %w", err)
	}
	frame := append([]byte(fmt.Sprintf("Content-Length: %d\r\n\r\n", len(data))), data...)
	s.writeMu.Lock()
	defer s.writeMu.Unlock()
	n, err := s.rwc.Write(frame)
	return int64(n), err
}

// appendWire encodes m as encoding/json does with HTML escaping off (the
// fields in order, the empty ones left out), but copies the raw id, params
// and result as they are: they come from a marshaller (compact and valid
// already), and checking and compacting a 250 KB diagnostics list again
// was a tenth of an edit's round trip.
func appendWire(m wireMessage) ([]byte, error) {
	b := make([]byte, 0, 64+len(m.ID)+len(m.Params)+len(m.Result))
	b = append(b, `{"jsonrpc":`...)
	b, err := appendPlain(b, m.JSONRPC)
	if len(m.ID) > 0 {
		b = append(append(b, `,"id":`...), m.ID...)
	}
	if m.Method != "" && err == nil {
		b, err = appendPlain(append(b, `,"method":`...), m.Method)
	}
	if len(m.Params) > 0 {
		b = append(append(b, `,"params":`...), m.Params...)
	}
	if len(m.Result) > 0 {
		b = append(append(b, `,"result":`...), m.Result...)
	}
	if m.Error != nil && err == nil {
		b, err = appendPlain(append(b, `,"error":`...), m.Error)
	}
	return append(b, '}'), err
}

// appendPlain appends v as JSON without HTML escaping.
func appendPlain(b []byte, v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return b, err
	}
	return append(b, bytes.TrimSuffix(buf.Bytes(), []byte("\n"))...), nil
}

// wireError keeps a JSON-RPC error as it is and turns any other error into
// one with its message (as jsonrpc2 does).
func wireError(err error) *jsonrpc2.Error {
	var e *jsonrpc2.Error
	if errors.As(err, &e) {
		return e
	}
	return &jsonrpc2.Error{Message: err.Error()}
}

// unescapeHTML turns the escapes \u003c, \u003e and \u0026 of JSON text
// back into '<', '>' and '&'. It steps over every other escape whole, so an
// escaped backslash followed by "u003c" stays as it is.
func unescapeHTML(b []byte) []byte {
	if !bytes.Contains(b, []byte(`\u00`)) {
		return b
	}
	out := make([]byte, 0, len(b))
	for i := 0; i < len(b); i++ {
		c := b[i]
		if c != '\\' || i+1 >= len(b) {
			out = append(out, c)
			continue
		}
		if b[i+1] == 'u' && i+6 <= len(b) {
			switch string(b[i+2 : i+6]) {
			case "003c", "003C":
				out = append(out, '<')
				i += 5
				continue
			case "003e", "003E":
				out = append(out, '>')
				i += 5
				continue
			case "0026":
				out = append(out, '&')
				i += 5
				continue
			}
		}
		out = append(out, c, b[i+1])
		i++
	}
	return out
}
