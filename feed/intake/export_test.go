package intake

import (
	"bufio"
	"io"
	"slices"
)

// NewSplitSourceForTest exposes the splitter to the differential fuzz test. Each record comes
// with the line it was split from ("" when encoding/csv read it) and each field's offset in it.
func NewSplitSourceForTest(r io.Reader, sep byte) func() ([]string, int, string, []int, error) {
	s := newSplitSource(bufio.NewReaderSize(r, 64<<10), sep)
	return func() ([]string, int, string, []int, error) {
		rec, line, err := s.Read()
		raw, starts := s.rawLine()
		return slices.Clone(rec), line, raw, slices.Clone(starts), err
	}
}

// WithShapeForTest spreads the reading of opt over parsers working side by side, rows records
// per batch.
func WithShapeForTest(opt Options, parsers, rows int) Options {
	opt.shape = pipeShape{parsers: parsers, rows: rows}
	return opt
}
