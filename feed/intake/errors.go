package intake

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
)

// Error is a bad manifest value: file, line, column and the value as typed.
type Error struct {
	File   string
	Line   int
	Column string
	Value  string
	Reason string
}

func (e *Error) Error() string {
	file := Printable(e.File, 120)
	switch {
	case e.Line == 0:
		return fmt.Sprintf("%s: %s", file, e.Reason)
	case e.Column == "":
		return fmt.Sprintf("%s:%d: %s", file, e.Line, e.Reason)
	}
	return fmt.Sprintf("%s:%d: %s %s: %s", file, e.Line, Printable(e.Column, 60), strconv.Quote(Printable(e.Value, 80)), e.Reason)
}

// Printable returns s with control characters escaped and shortened to at most max runes (an
// ellipsis marks the cut), so echoing user text cannot drive a terminal or flood it.
func Printable(s string, max int) string {
	var b strings.Builder
	n := 0
	for _, r := range s {
		if n >= max {
			b.WriteString("…")
			break
		}
		if unicode.IsControl(r) || r == unicode.ReplacementChar {
			q := strconv.QuoteRune(r)
			b.WriteString(q[1 : len(q)-1])
		} else {
			b.WriteRune(r)
		}
		n++
	}
	return b.String()
}
