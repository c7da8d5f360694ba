package data

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
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

// MaxTableBytes bounds a table read from a file (a price list, catalogue, prior or assay): a few
// hundred rows are a few kilobytes, so anything past it is not such a table.
const MaxTableBytes = 1 << 20

// ErrTooLarge is returned by a reader made with [CapBytes] once its input passes the cap.
var ErrTooLarge = fmt.Errorf("larger than %d KiB: not a short table (a price list, catalogue, prior or assay is a few KiB)", MaxTableBytes>>10)

// CapBytes returns a reader over r that fails with [ErrTooLarge] past max bytes, so an endless
// stream is refused instead of filling memory.
func CapBytes(r io.Reader, max int64) io.Reader { return &capReader{r: r, left: max} }

type capReader struct {
	r    io.Reader
	left int64
}

func (c *capReader) Read(p []byte) (int, error) {
	if c.left < 0 {
		return 0, ErrTooLarge
	}
	if int64(len(p)) > c.left+1 {
		p = p[:c.left+1]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	if c.left < 0 {
		return 0, ErrTooLarge
	}
	return n, err
}

// CheckEncoding refuses text that is not UTF-8 by its first bytes: a UTF-16 or UTF-32
// byte-order mark, or the NUL bytes UTF-16 puts beside every ASCII character. Excel's "Unicode
// text" export writes UTF-16, which would otherwise read as one garbled column.
func CheckEncoding(br *bufio.Reader) error {
	b, _ := br.Peek(512)
	switch {
	case bytes.HasPrefix(b, []byte{0xFF, 0xFE, 0, 0}), bytes.HasPrefix(b, []byte{0, 0, 0xFE, 0xFF}):
		return errors.New("the file is UTF-32 text; save it as UTF-8 (CSV UTF-8)")
	case bytes.HasPrefix(b, []byte{0xFF, 0xFE}), bytes.HasPrefix(b, []byte{0xFE, 0xFF}):
		return errors.New("the file is UTF-16 text; save it as UTF-8 (CSV UTF-8)")
	}
	if nul := bytes.Count(b, []byte{0}); nul > 0 {
		if nul*4 >= len(b) {
			return errors.New("the file looks like UTF-16 text (a NUL byte beside every character); save it as UTF-8 (CSV UTF-8)")
		}
		return errors.New("the file holds NUL bytes: not a text file")
	}
	return nil
}

// ParseDecimal reads a plain decimal number: digits with an optional sign, one decimal point
// and an exponent. Unlike strconv.ParseFloat it refuses hex ("0x1p-1"), digit separators ("1_0"),
// Inf and NaN, so every table reads a number the same way the manifests do.
func ParseDecimal(s string) (float64, error) {
	if s == "" {
		return 0, errors.New("no number")
	}
	for i := range len(s) {
		c := s[i]
		if !(c >= '0' && c <= '9' || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E') {
			return 0, errors.New("not a plain decimal number")
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, errors.New("not a finite number")
	}
	return v, nil
}

// ErrorLine is the line a CSV parse error belongs to: for a quote left open, the line where it
// opened (encoding/csv reports the end of the input, perhaps thousands of lines on).
func ErrorLine(pe *csv.ParseError) int {
	if errors.Is(pe.Err, csv.ErrQuote) && pe.StartLine > 0 {
		return pe.StartLine
	}
	return pe.Line
}
