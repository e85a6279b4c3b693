package server

import (
	"fmt"
	"unicode/utf8"

	"go.lsp.dev/protocol"

	"ringside/server/lspext"
	"ringside/syntax"
)

// Mapper converts between byte offsets into one version of a document's
// text (canonical, as everywhere in syntax and analysis) and LSP positions,
// whose columns count code units of the negotiated encoding: UTF-16 (the
// default), UTF-8 bytes or UTF-32 code points. It is the only place in the
// server that knows about columns. A line ends before "\n", "\r\n" or a
// lone "\r" (LSP 3.17); a line break has no column of its own. A leading
// byte order mark the client sent is a character of its text and counts
// like one, so an edit just after it (a fix inserting the first line)
// lands after it in the client's text too.
type Mapper struct {
	src      []byte
	lines    *syntax.Lines
	encoding string
}

// NewMapper indexes src for the given encoding ("" means UTF-16).
func NewMapper(src []byte, encoding string) *Mapper {
	if encoding == "" {
		encoding = lspext.EncodingUTF16
	}
	return &Mapper{src: src, lines: syntax.NewLines(src), encoding: encoding}
}

// fileMapper is a mapper over a parsed file's text, reusing the line
// table the parser built for it.
func fileMapper(f *syntax.File, encoding string) *Mapper {
	if f.Lines == nil {
		return NewMapper(f.Src, encoding)
	}
	m := NewMapper(nil, encoding)
	m.src, m.lines = f.Src, f.Lines
	return m
}

// edit updates m, a mapper its caller owns, to src: the text after the
// bytes of span were replaced by n new ones (see syntax.Lines.Edit).
func (m *Mapper) edit(src []byte, span syntax.Span, n int) {
	m.src = src
	m.lines.Edit(src, span.From, span.To, n)
}

// OffsetPosition converts a byte offset to a position. An offset inside a
// multi-byte character maps to the start of that character; an offset
// outside the text is an error naming the valid range.
func (m *Mapper) OffsetPosition(off syntax.Pos) (protocol.Position, error) {
	if off < 0 || int(off) > len(m.src) {
		return protocol.Position{}, fmt.Errorf("invalid offset %d (want 0-%d)", off, len(m.src))
	}
	line, _ := m.lines.UTF16(off)
	start := m.lines.LineStart(line)
	end := min(off, m.lines.LineEnd(line))
	for end > start && int(end) < len(m.src) && !utf8.RuneStart(m.src[end]) {
		end--
	}
	return protocol.Position{Line: uint32(line), Character: uint32(m.units(m.src[start:end]))}, nil
}

// units counts b in the mapper's code units.
func (m *Mapper) units(b []byte) int {
	switch m.encoding {
	case lspext.EncodingUTF8:
		return len(b)
	case lspext.EncodingUTF32:
		return utf8.RuneCount(b)
	}
	n := 0
	for len(b) > 0 {
		r, size := utf8.DecodeRune(b)
		n++
		if r >= 0x10000 {
			n++
		}
		b = b[size:]
	}
	return n
}

// PositionOffset converts a position to a byte offset. A column past the
// end of its line stands for the line's end (LSP 3.17, Position: "If the
// character value is greater than the line length it defaults back to the
// line length"). A line past the last, or a column inside a character, is
// an error naming the valid range. The position just past the last line
// (line = number of lines, column 0) is accepted as the end of the text,
// as clients send it for whole-document ranges.
func (m *Mapper) PositionOffset(p protocol.Position) (syntax.Pos, error) {
	line, col := int(p.Line), int(p.Character)
	n := m.lines.Count()
	if line == n && col == 0 {
		return syntax.Pos(len(m.src)), nil
	}
	if line >= n {
		return syntax.NoPos, fmt.Errorf("invalid line %d (want 0-%d)", line, n-1)
	}
	start, end := int(m.lines.LineStart(line)), int(m.lines.LineEnd(line))
	units := 0
	for off := start; off < end; {
		if units == col {
			return syntax.Pos(off), nil
		}
		_, size := utf8.DecodeRune(m.src[off:end])
		w := m.units(m.src[off : off+size])
		if units+w > col {
			return syntax.NoPos, fmt.Errorf("column %d on line %d falls inside a character (%s)", col, line, m.encoding)
		}
		units += w
		off += size
	}
	return syntax.Pos(end), nil
}

// SpanRange converts a byte span to a range.
func (m *Mapper) SpanRange(s syntax.Span) (protocol.Range, error) {
	a, err := m.OffsetPosition(s.From)
	if err != nil {
		return protocol.Range{}, err
	}
	b, err := m.OffsetPosition(s.To)
	if err != nil {
		return protocol.Range{}, err
	}
	return protocol.Range{Start: a, End: b}, nil
}

// RangeSpan converts a range to a byte span; a reversed range is an error.
func (m *Mapper) RangeSpan(r protocol.Range) (syntax.Span, error) {
	a, err := m.PositionOffset(r.Start)
	if err != nil {
		return syntax.Span{}, err
	}
	b, err := m.PositionOffset(r.End)
	if err != nil {
		return syntax.Span{}, err
	}
	if b < a {
		return syntax.Span{}, fmt.Errorf("range end %d:%d is before its start %d:%d", r.End.Line, r.End.Character, r.Start.Line, r.Start.Character)
	}
	return syntax.Span{From: a, To: b}, nil
}
