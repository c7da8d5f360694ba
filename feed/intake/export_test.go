package intake

import (
	"bufio"
	"io"
	"slices"
)

// NewSplitSourceForTest exposes the splitter to the differential fuzz test.
func NewSplitSourceForTest(r io.Reader, sep byte) func() ([]string, int, error) {
	s := newSplitSource(bufio.NewReaderSize(r, 64<<10), sep)
	return func() ([]string, int, error) {
		rec, line, err := s.Read()
		return slices.Clone(rec), line, err
	}
}
