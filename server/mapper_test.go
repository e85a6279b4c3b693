package server

import (
	"strings"
	"testing"

	"go.lsp.dev/protocol"

	"ringside/server/lspext"
	"ringside/syntax"
)

func TestMapper(t *testing.T) {
	// "é" is 2 bytes / 1 UTF-16 unit / 1 code point; "😀" is 4 / 2 / 1.
	src := []byte("gain é = 1\r\n# 😀x\r\nblock\n")
	for _, tc := range []struct {
		enc  string
		off  int
		line uint32
		char uint32
	}{
		{lspext.EncodingUTF16, 0, 0, 0},
		{lspext.EncodingUTF16, 7, 0, 6},   // after "gain é"
		{lspext.EncodingUTF8, 7, 0, 7},    // bytes
		{lspext.EncodingUTF32, 7, 0, 6},   // code points
		{lspext.EncodingUTF16, 12, 0, 10}, // the "\n" of CRLF: end of line 0
		{lspext.EncodingUTF16, 13, 1, 0},
		{lspext.EncodingUTF16, 19, 1, 4}, // after "# 😀"
		{lspext.EncodingUTF8, 19, 1, 6},
		{lspext.EncodingUTF32, 19, 1, 3},
		{lspext.EncodingUTF16, 20, 1, 5}, // after x
		{lspext.EncodingUTF16, len(src), 3, 0},
	} {
		m := NewMapper(src, tc.enc)
		p, err := m.OffsetPosition(syntax.Pos(tc.off))
		if err != nil || p.Line != tc.line || p.Character != tc.char {
			t.Errorf("%s OffsetPosition(%d) = %v %v, want %d:%d", tc.enc, tc.off, p, err, tc.line, tc.char)
		}
		if tc.off == 12 {
			continue // inside CRLF: maps back to the line end, offset 11
		}
		off, err := m.PositionOffset(p)
		if err != nil || int(off) != tc.off {
			t.Errorf("%s PositionOffset(%v) = %d %v, want %d", tc.enc, p, off, err, tc.off)
		}
	}
	m := NewMapper(src, "")
	for _, tc := range []struct {
		p    protocol.Position
		want string
	}{
		{pos(9, 0), "invalid line 9 (want 0-3)"},
		{pos(1, 3), "column 3 on line 1 falls inside a character"},
	} {
		if _, err := m.PositionOffset(tc.p); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("PositionOffset(%v) error %v, want %q", tc.p, err, tc.want)
		}
	}
	// A column past the line's end is the line's end (LSP 3.17).
	if off, err := m.PositionOffset(pos(0, 12)); err != nil || off != m.lines.LineEnd(0) {
		t.Errorf("PositionOffset(0:12) = %d %v, want the end of line 0 (%d)", off, err, m.lines.LineEnd(0))
	}
	if _, err := m.OffsetPosition(99); err == nil || err.Error() != "invalid offset 99 (want 0-28)" {
		t.Errorf("OffsetPosition(99) error %v", err)
	}
	// invalid UTF-8 counts as one unit and never panics
	bad := NewMapper([]byte("a\xffb"), lspext.EncodingUTF16)
	if p, err := bad.OffsetPosition(2); err != nil || p.Character != 2 {
		t.Errorf("invalid byte: %v %v", p, err)
	}
}

func TestApplyChanges(t *testing.T) {
	text := []byte("gain ké = 1\r\nblock 😀 = 2\r\n")
	// replace "1" (UTF-16 col 10 on line 0) and, after it, the 😀 (cols 6-8 on line 1)
	got, err := applyChanges(text, []lspext.TextDocumentContentChangeEvent{
		{Range: &protocol.Range{Start: pos(0, 10), End: pos(0, 11)}, Text: "0.5"},
		{Range: &protocol.Range{Start: pos(1, 6), End: pos(1, 8)}, Text: "b"},
		{Range: &protocol.Range{Start: pos(2, 0), End: pos(2, 0)}, Text: "# end"},
	}, lspext.EncodingUTF16)
	if err != nil || string(got) != "gain ké = 0.5\r\nblock b = 2\r\n# end" {
		t.Errorf("applyChanges = %q, %v", got, err)
	}
	if string(text) != "gain ké = 1\r\nblock 😀 = 2\r\n" {
		t.Errorf("input modified: %q", text)
	}
	got, err = applyChanges(text, []lspext.TextDocumentContentChangeEvent{{Range: &protocol.Range{Start: pos(0, 40), End: pos(0, 41)}, Text: "x"}}, lspext.EncodingUTF16)
	if err != nil || string(got) != "gain ké = 1x\r\nblock 😀 = 2\r\n" {
		t.Errorf("change past the line end (clamped to it): %q %v", got, err)
	}
	_, err = applyChanges(text, []lspext.TextDocumentContentChangeEvent{{Range: &protocol.Range{Start: pos(7, 0), End: pos(7, 1)}, Text: "x"}}, lspext.EncodingUTF16)
	if err == nil || !strings.Contains(err.Error(), "want 0-2") {
		t.Errorf("bad range error: %v", err)
	}
}
