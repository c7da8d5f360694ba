package data

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"io"
)

// SkipBOM returns a buffered reader over r with a leading UTF-8 byte-order mark removed
// (spreadsheet programs write one; encoding/csv would make it part of the first header).
func SkipBOM(r io.Reader) *bufio.Reader {
	br := bufio.NewReaderSize(r, 64<<10)
	if b, err := br.Peek(3); err == nil && bytes.Equal(b, []byte{0xEF, 0xBB, 0xBF}) {
		_, _ = br.Discard(3)
	}
	return br
}

// NewCSVReader returns the CSV reader every blackmass input uses: '#' starts a comment line,
// leading spaces of a field are dropped, and comma separates fields.
func NewCSVReader(r io.Reader, comma rune) *csv.Reader {
	cr := csv.NewReader(r)
	cr.Comma = comma
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	return cr
}
