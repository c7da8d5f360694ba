package intake

import (
	"bytes"
	"errors"
	"io"
	"testing"
	"testing/iotest"
)

// overLimit is the definition lineLimit implements: some line, ended by '\n' or '\r' (or by
// the end of the input), is longer than max bytes.
func overLimit(in []byte, max int) bool {
	for _, line := range bytes.FieldsFunc(in, func(r rune) bool { return r == '\n' || r == '\r' }) {
		if len(line) > max {
			return true
		}
	}
	return false
}

// lineLimit refuses exactly the inputs with a line over its limit, however the reads are cut.
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
		if got, want := errors.Is(err, errLineTooLong), overLimit(in, limit); got != want {
			t.Fatalf("%q, limit %d: refused %v, want %v (err %v)", in, limit, got, want, err)
		}
	})
}
