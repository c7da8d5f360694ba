package intake

import (
	"bytes"
	"errors"
	"io"
	"testing"
	"testing/iotest"
)

// overLimit is the definition lineLimit implements: some line, ended by '\n' or '\r' (or by
// the end of the input), is longer than max bytes. It returns the first such line's number,
// counted in newlines (0: none).
func overLimit(in []byte, max int) int {
	newlines, run := 0, 0
	for _, b := range in {
		switch b {
		case '\n', '\r':
			if run > max {
				return newlines + 1
			}
			run = 0
			if b == '\n' {
				newlines++
			}
		default:
			run++
		}
	}
	if run > max {
		return newlines + 1
	}
	return 0
}

// lineLimit refuses exactly the inputs with a line over its limit, however the reads are cut,
// and names the line.
func FuzzLineLimit(f *testing.F) {
	for _, s := range []string{"abc\ndef\n", "abcdef", "ab\rcd\ref\n", "abcd\r\nefgh", "\n\n\r\r", "abcdefghij\rab\n"} {
		f.Add([]byte(s), uint8(4), uint8(3))
	}
	f.Fuzz(func(t *testing.T, in []byte, max, chunk uint8) {
		limit := int(max%16) + 1
		var r io.Reader = bytes.NewReader(in)
		switch chunk % 3 {
		case 0:
			r = iotest.OneByteReader(r)
		case 1:
			r = iotest.HalfReader(r)
		}
		_, err := io.ReadAll(&lineLimit{r: r, max: limit})
		want := overLimit(in, limit)
		if got := errors.Is(err, errLineTooLong); got != (want > 0) {
			t.Fatalf("%q, limit %d: refused %v, want line %d (err %v)", in, limit, got, want, err)
		}
		var le *lineLengthError
		if errors.As(err, &le) && le.line != want {
			t.Fatalf("%q, limit %d: line %d named, want %d", in, limit, le.line, want)
		}
	})
}
