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

// Read implements jsonrpc2.Stream.
func (s *stream) Read(ctx context.Context) (jsonrpc2.Message, int64, error) {
	var total int64
	for {
		if err := ctx.Err(); err != nil {
			return nil, total, err
		}
		data, n, err := s.readFrame()
		total += n
		if err != nil {
			return nil, total, err
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

// readFrame reads one Content-Length framed body.
func (s *stream) readFrame() ([]byte, int64, error) {
	var total, length int64
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
			return nil, total, fmt.Errorf("invalid header line %q", line)
		}
		if strings.EqualFold(strings.TrimSpace(name), "Content-Length") {
			length, err = strconv.ParseInt(strings.TrimSpace(value), 10, 64)
			if err != nil || length <= 0 || length > maxFrame {
				return nil, total, fmt.Errorf("invalid Content-Length %q", value)
			}
		}
	}
	if length == 0 {
		return nil, total, errors.New("missing Content-Length header")
	}
	data := make([]byte, length)
	n, err := io.ReadFull(s.in, data)
	total += int64(n)
	if err != nil {
		return nil, total, fmt.Errorf("reading a body: %w", err)
	}
	return data, total, nil
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
	return s.writeWireN(m)
}

func (s *stream) writeWire(m wireMessage) error {
	_, err := s.writeWireN(m)
	return err
}

// writeWireN encodes and frames one message; writes are serialised.
func (s *stream) writeWireN(m wireMessage) (int64, error) {
	var body bytes.Buffer
	enc := json.NewEncoder(&body)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(m); err != nil {
		return 0, fmt.Errorf("encoding message: %w", err)
	}
	data := bytes.TrimSuffix(body.Bytes(), []byte("\n"))
	frame := append([]byte(fmt.Sprintf("Content-Length: %d\r\n\r\n", len(data))), data...)
	s.writeMu.Lock()
	defer s.writeMu.Unlock()
	n, err := s.rwc.Write(frame)
	return int64(n), err
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
