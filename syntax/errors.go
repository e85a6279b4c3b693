package syntax

import (
	"fmt"
	"sort"
)

// Add appends an error covering span.
func (l *ErrorList) Add(span Span, msg string) { *l = append(*l, &Error{span, msg}) }

func (l ErrorList) Len() int      { return len(l) }
func (l ErrorList) Swap(i, j int) { l[i], l[j] = l[j], l[i] }
func (l ErrorList) Less(i, j int) bool {
	if l[i].From != l[j].From {
		return l[i].From < l[j].From
	}
	if l[i].To != l[j].To {
		return l[i].To < l[j].To
	}
	return l[i].Msg < l[j].Msg
}

// Sort orders the list by position (stable for equal positions).
func (l ErrorList) Sort() { sort.Stable(l) }

// Error is the first message, with a count of the rest.
func (l ErrorList) Error() string {
	switch len(l) {
	case 0:
		return "no errors"
	case 1:
		return l[0].Msg
	}
	return fmt.Sprintf("%s (and %d more errors)", l[0].Msg, len(l)-1)
}

// Err returns nil for an empty list, else the list itself.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}

// Format renders each error as "name:line:col: msg", one per line, with
// columns counted in code points.
func (l ErrorList) Format(name string, lines *Lines) string {
	s := ""
	for _, e := range l {
		ln, col := lines.LineCol(e.From)
		s += fmt.Sprintf("%s:%d:%d: %s\n", name, ln, col, e.Msg)
	}
	return s
}
