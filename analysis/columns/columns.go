// Package columns lays out small tables as aligned plain-text columns
// (read the same rendered or raw: terminals, hovers in clients without
// table rendering, CI logs) and as Markdown tables (review comments).
package columns

import (
	"strings"
	"unicode/utf8"
)

// Text returns rows (the first is the header) as lines of columns padded
// to a common width and separated by two spaces; widths count code
// points, so "°", "±" and "∞" line up. Trailing spaces are trimmed.
func Text(rows [][]string) []string {
	widths := widthsOf(rows)
	out := make([]string, 0, len(rows))
	for _, r := range rows {
		var b strings.Builder
		for i, cell := range r {
			b.WriteString(cell)
			if i < len(r)-1 {
				b.WriteString(strings.Repeat(" ", widths[i]-utf8.RuneCountInString(cell)+2))
			}
		}
		out = append(out, strings.TrimRight(b.String(), " "))
	}
	return out
}

// Markdown returns rows (the first is the header) as a Markdown table;
// '|' inside a cell is escaped.
func Markdown(rows [][]string) string {
	if len(rows) == 0 {
		return ""
	}
	var b strings.Builder
	line := func(cells []string) {
		b.WriteString("|")
		for _, c := range cells {
			b.WriteString(" " + strings.ReplaceAll(c, "|", `\|`) + " |")
		}
		b.WriteString("\n")
	}
	line(rows[0])
	sep := make([]string, len(rows[0]))
	for i := range sep {
		sep[i] = "---"
	}
	line(sep)
	for _, r := range rows[1:] {
		line(r)
	}
	return b.String()
}

func widthsOf(rows [][]string) []int {
	var w []int
	for _, r := range rows {
		for i, cell := range r {
			if i >= len(w) {
				w = append(w, 0)
			}
			w[i] = max(w[i], utf8.RuneCountInString(cell))
		}
	}
	return w
}
