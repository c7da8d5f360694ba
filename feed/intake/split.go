package intake

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"io"
	"strings"
	"unicode"
	"unicode/utf8"
	"unsafe"

	"blackmass/data"
)

// splitSource reads CSV records the way encoding/csv does with the settings of a manifest
// (leading spaces trimmed, any number of fields, no comment character: readRows decides which
// '#' lines are comments, so a data row whose id starts with '#' is kept), but splits lines that
// hold no quote itself, which is most of a manifest and several times faster. At the first line
// holding a quote it hands that line and the rest of the input to encoding/csv, so quoted fields
// (and their errors) are read by the standard reader. FuzzSplitMatchesCSV holds the two to the
// same records and line numbers.
type splitSource struct {
	br     *bufio.Reader
	sep    byte
	line   int // lines consumed so far
	rec    []string
	cr     *csv.Reader // after the first quote
	offset int         // lines consumed before cr took over
	err    error
	// arena holds the text of the lines split so far. Fields are strings into it; it is only
	// ever appended to, never rewritten, so they stay valid, and a full arena is left to the
	// strings that still use it. One allocation serves many lines.
	arena []byte
	// raw is the text of the line the last record was split from (in the arena), and starts
	// holds each field's offset in it after trimming; raw is "" once encoding/csv reads.
	raw    string
	starts []int
}

// arenaBytes is the size of one arena: a few hundred manifest lines.
const arenaBytes = 32 << 10

func newSplitSource(br *bufio.Reader, sep byte) *splitSource {
	return &splitSource{br: br, sep: sep}
}

// Read returns the next record and the line it starts on, or io.EOF. The record is reused by
// the next call.
func (s *splitSource) Read() ([]string, int, error) {
	s.raw = ""
	if s.cr != nil {
		rec, err := s.cr.Read()
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				pe.StartLine += s.offset
				pe.Line += s.offset
			}
			return nil, 0, err
		}
		line, _ := s.cr.FieldPos(0)
		return rec, line + s.offset, nil
	}
	if s.err != nil {
		return nil, 0, s.err
	}
	for {
		raw, err := s.br.ReadSlice('\n')
		if err != nil && !errors.Is(err, io.EOF) && !errors.Is(err, bufio.ErrBufferFull) {
			s.err = err
			return nil, s.line + 1, err
		}
		if errors.Is(err, bufio.ErrBufferFull) {
			// A line longer than the buffer: let the standard reader take it (and the rest).
			return s.handOver(raw)
		}
		if len(raw) == 0 {
			if err == nil {
				err = io.EOF
			}
			s.err = err
			return nil, 0, err
		}
		s.line++
		if bytes.IndexByte(raw, '"') >= 0 {
			s.line--
			return s.handOver(raw)
		}
		line := raw
		// Normalise the line end as encoding/csv does: "\r\n" and a final "\r" before EOF end
		// the line; other carriage returns stay in the field.
		if n := len(line); n >= 2 && line[n-2] == '\r' && line[n-1] == '\n' {
			line = line[:n-2]
		} else if n >= 1 && line[n-1] == '\n' {
			line = line[:n-1]
		} else if n >= 1 && line[n-1] == '\r' && err != nil {
			line = line[:n-1]
		}
		if len(line) == 0 {
			if err != nil {
				s.err = err
			}
			continue // an empty line
		}
		if err != nil {
			s.err = io.EOF
		}
		return s.split(line), s.line, nil
	}
}

// split cuts a quote-free line at the separator, trimming each field's leading white space. The
// line is copied into the arena once and the fields are slices of it.
func (s *splitSource) split(line []byte) []string {
	s.rec, s.starts = s.rec[:0], s.starts[:0]
	str := s.keep(line)
	s.raw = str
	at := 0
	for {
		i := strings.IndexByte(str, s.sep)
		field := str
		if i >= 0 {
			field = str[:i]
		}
		f := trimLeftSpace(field)
		s.rec = append(s.rec, f)
		s.starts = append(s.starts, at+len(field)-len(f))
		if i < 0 {
			return s.rec
		}
		str, at = str[i+1:], at+i+1
	}
}

// rawLine returns the text of the line the last record was split from and each field's offset
// in it, or "" when the record came from encoding/csv (a quoted line, or any line after one).
func (s *splitSource) rawLine() (string, []int) { return s.raw, s.starts }

// keep copies line into the arena and returns it as a string that shares the arena's memory.
func (s *splitSource) keep(line []byte) string {
	if len(line) == 0 {
		return ""
	}
	if len(line) > cap(s.arena)-len(s.arena) {
		s.arena = make([]byte, 0, max(arenaBytes, len(line)))
	}
	start := len(s.arena)
	s.arena = append(s.arena, line...)
	// Safe: these bytes are never written again (the arena only grows, then is replaced).
	return unsafe.String(&s.arena[start], len(line))
}

func trimLeftSpace(b string) string {
	for len(b) > 0 {
		if b[0] < utf8.RuneSelf {
			if b[0] != ' ' && b[0] != '\t' && b[0] != '\n' && b[0] != '\v' && b[0] != '\f' && b[0] != '\r' {
				return b
			}
			b = b[1:]
			continue
		}
		r, n := utf8.DecodeRuneInString(b)
		if !unicode.IsSpace(r) {
			return b
		}
		b = b[n:]
	}
	return b
}

// handOver gives the line read so far and the rest of the input to encoding/csv.
func (s *splitSource) handOver(raw []byte) ([]string, int, error) {
	rest := io.MultiReader(bytes.NewReader(append([]byte(nil), raw...)), s.br)
	s.cr = data.NewCSVReader(rest, rune(s.sep))
	s.cr.Comment = 0
	s.cr.ReuseRecord = true
	s.cr.FieldsPerRecord = -1
	s.offset = s.line
	return s.Read()
}
