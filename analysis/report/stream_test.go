package report

import (
	"bytes"
	"encoding/json"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// decode parses JSON into generic values for comparison.
func decode(t *testing.T, data []byte) any {
	t.Helper()
	var v any
	if err := json.Unmarshal(data, &v); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, data)
	}
	return v
}

// The streamed documents, compact and indented, with zero, one and many
// files, hold exactly what the whole-document builders hold.
func TestStreamsMatchDocuments(t *testing.T) {
	results, dir := buildRandom(t, 11, 6)
	display := func(p string) string { r, _ := filepath.Rel(dir, p); return r }
	for _, n := range []int{0, 1, len(results)} {
		rs := results[:n]
		wantJSON, _ := json.Marshal(Build(rs, display))
		wantSARIF, _ := json.Marshal(SARIF(rs, display, "test"))
		for _, indent := range []bool{false, true} {
			for format, want := range map[string][]byte{"json": wantJSON, "sarif": wantSARIF} {
				var b bytes.Buffer
				s := NewStream(format, &b, display, "test", indent)
				for _, r := range rs {
					s.Add(r)
				}
				if err := s.Close(); err != nil {
					t.Fatal(err)
				}
				if !reflect.DeepEqual(decode(t, b.Bytes()), decode(t, want)) {
					t.Errorf("%s, %d files, indent %v: the stream differs from the document", format, n, indent)
				}
				lines := strings.Count(b.String(), "\n")
				if indent != (lines > 1) {
					t.Errorf("%s, %d files, indent %v: %d lines", format, n, indent, lines)
				}
			}
		}
	}
}

// A failing writer's error comes back from Close.
func TestStreamWriteError(t *testing.T) {
	results, _ := buildRandom(t, 5, 1)
	s := NewStream("json", failWriter{}, filepath.Base, "test", false)
	s.Add(results[0])
	if err := s.Close(); err == nil {
		t.Error("write error lost")
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errFail }

var errFail = &json.UnsupportedValueError{Str: "disk full"}
