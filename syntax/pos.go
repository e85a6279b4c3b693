package syntax

import (
	"fmt"
	"slices"
	"sort"
	"unicode/utf8"
)

// Pos is a byte offset into a file's source, starting at 0. Nodes store only
// offsets; lines and columns are computed on demand from a Lines table.
type Pos int

// NoPos marks a missing position.
const NoPos Pos = -1

// Span is the half-open byte range [From, To).
type Span struct {
	From, To Pos
}

// Contains reports whether p lies inside s (To inclusive, so a cursor just
// after the last character of a name still counts as on it).
func (s Span) Contains(p Pos) bool { return s.From <= p && p <= s.To }

// Lines maps byte offsets to line/column pairs. A line ends at "\n",
// "\r\n" or a lone "\r" (LSP 3.17 counts all three); the line break
// belongs to no column a client can address. A leading byte order mark is
// part of nothing: LineCol (the command line's columns) skips it. UTF16
// counts it, as an editor that sent it counts it in its own text.
type Lines struct {
	src    []byte
	starts []int // byte offset of the first byte of each line
	bom    int   // length of a leading byte order mark
}

// NewLines indexes src.
func NewLines(src []byte) *Lines {
	starts := []int{0}
	for i, b := range src {
		if b == '\n' || b == '\r' && (i+1 == len(src) || src[i+1] != '\n') {
			starts = append(starts, i+1)
		}
	}
	return &Lines{src: src, starts: starts, bom: BOMLen(src)}
}

// BOMLen is the length of src's leading UTF-8 byte order mark (3), or 0.
// Every edit at the start of a file goes after it.
func BOMLen(src []byte) int {
	if len(src) >= 3 && src[0] == 0xEF && src[1] == 0xBB && src[2] == 0xBF {
		return 3
	}
	return 0
}

// Edit updates l, the index of a text, to index src, that text after
// replacing its bytes [from, to) by n new bytes (src[from:from+n]). It
// costs the lines after the change (a shift), not the bytes of the text:
// only the line starts next to the change are looked at again (whether a
// byte begins a line depends on it and the byte before, so a "\r" and a
// "\n" joining into one break across the edge are seen). l must be the
// caller's own: it is changed in place.
func (l *Lines) Edit(src []byte, from, to Pos, n int) {
	a, b := int(from), int(to)
	delta := n - (b - a)
	lo := sort.SearchInts(l.starts, max(a, 1)) // starts before a are kept
	hi := sort.SearchInts(l.starts, b+1)       // starts from b+1 on move by delta
	var mid []int
	for p := max(a, 1); p <= a+n && p <= len(src); p++ {
		if c := src[p-1]; c == '\n' || c == '\r' && (p == len(src) || src[p] != '\n') {
			mid = append(mid, p)
		}
	}
	l.starts = slices.Replace(l.starts, lo, hi, mid...)
	for i := lo + len(mid); i < len(l.starts); i++ {
		l.starts[i] += delta
	}
	l.src, l.bom = src, BOMLen(src)
}

// Count is the number of lines (a file always has at least one).
func (l *Lines) Count() int { return len(l.starts) }

// line returns the 0-based line holding offset p (clamped into the file).
func (l *Lines) line(p Pos) int {
	off := l.clamp(p)
	return sort.Search(len(l.starts), func(i int) bool { return l.starts[i] > off }) - 1
}

func (l *Lines) clamp(p Pos) int {
	switch {
	case p < 0:
		return 0
	case int(p) > len(l.src):
		return len(l.src)
	}
	return int(p)
}

// LineCol converts an offset to a 1-based line and a 1-based column counted
// in Unicode code points, the unit the command line reports. A stray byte
// that is not valid UTF-8 counts as one column.
func (l *Lines) LineCol(p Pos) (line, col int) {
	ln := l.line(p)
	from := l.starts[ln]
	if ln == 0 {
		from = l.bom // the mark has no column
	}
	off := max(min(l.clamp(p), int(l.LineEnd(ln))), from) // a line break has no column
	return ln + 1, utf8.RuneCount(l.src[from:off]) + 1
}

// UTF16 converts an offset to a 0-based line and a 0-based column counted in
// UTF-16 code units, the LSP's default position encoding.
func (l *Lines) UTF16(p Pos) (line, col int) {
	ln := l.line(p)
	off := min(l.clamp(p), int(l.LineEnd(ln)))
	return ln, utf16Len(l.src[l.starts[ln]:off])
}

// LineEnd is the offset of the end of 0-based line ln, before its "\n",
// "\r\n" or "\r".
func (l *Lines) LineEnd(ln int) Pos {
	end := len(l.src)
	if ln+1 < len(l.starts) {
		end = l.starts[ln+1] - 1
		if l.src[end] == '\n' && end > l.starts[ln] && l.src[end-1] == '\r' {
			end--
		}
	}
	return Pos(end)
}

// LineStart is the offset of the first byte of 0-based line ln.
func (l *Lines) LineStart(ln int) Pos { return Pos(l.starts[ln]) }

// OffsetUTF16 converts a 0-based line and UTF-16 column back to an offset.
// A column past the end of the line is an error naming the valid range, as
// is a line past the end of the file, or a column inside a surrogate pair.
func (l *Lines) OffsetUTF16(line, col int) (Pos, error) {
	if line < 0 || line >= len(l.starts) {
		return NoPos, fmt.Errorf("invalid line %d (want 0-%d)", line, len(l.starts)-1)
	}
	if col < 0 {
		return NoPos, fmt.Errorf("invalid column %d on line %d", col, line)
	}
	start, end := l.starts[line], int(l.LineEnd(line))
	units := 0
	for off := start; off < end; {
		if units == col {
			return Pos(off), nil
		}
		r, size := utf8.DecodeRune(l.src[off:end])
		n := 1
		if r >= 0x10000 {
			n = 2
		}
		if units+n > col {
			return NoPos, fmt.Errorf("column %d on line %d falls inside a character", col, line)
		}
		units += n
		off += size
	}
	if units == col {
		return Pos(end), nil
	}
	return NoPos, fmt.Errorf("invalid column %d on line %d (want 0-%d)", col, line, units)
}

// utf16Len counts the UTF-16 code units of b; an invalid byte counts as one
// unit (it decodes to U+FFFD).
func utf16Len(b []byte) int {
	n := 0
	for len(b) > 0 {
		r, size := utf8.DecodeRune(b)
		if r >= 0x10000 {
			n += 2
		} else {
			n++
		}
		b = b[size:]
	}
	return n
}
