package intake

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"

	"blackmass/data"
	"blackmass/feed/manifest"
)

// ReadCSV streams a CSV manifest (comma or semicolon separated; with semicolons a decimal comma
// is read as such) to fn, one line at a time. name is the file name for error messages.
func ReadCSV(r io.Reader, name string, opt Options, fn func(manifest.Line) error) (Info, error) {
	raw := bufio.NewReaderSize(r, 4096)
	if err := data.CheckEncoding(raw); err != nil {
		return Info{}, &Error{File: name, Reason: err.Error()}
	}
	br := data.SkipBOM(&lineLimit{r: &crReader{r: raw}, max: MaxLineBytes})
	sep, err := sniffSeparator(br)
	if err != nil {
		return Info{}, &Error{File: name, Reason: err.Error()}
	}
	src := &csvSource{cr: newSplitSource(br, byte(sep)), name: name}
	return readRows(src, name, opt, sep == ';', fn)
}

// errLineTooLong is returned by lineLimit for a physical line over its limit.
var errLineTooLong = fmt.Errorf("a line longer than %d bytes", MaxLineBytes)

// lineLengthError is errLineTooLong at a line: the physical line (1-based) that ran over.
type lineLengthError struct{ line int }

func (e *lineLengthError) Error() string { return errLineTooLong.Error() }
func (e *lineLengthError) Unwrap() error { return errLineTooLong }

// lineLimit fails a read once a physical line exceeds max bytes, so one huge row cannot take
// memory in proportion to its length.
type lineLimit struct {
	r     io.Reader
	max   int
	run   int // bytes since the last newline
	lines int // newlines read so far
}

// tooLong is the error for the line being read.
func (l *lineLimit) tooLong() error { return &lineLengthError{line: l.lines + 1} }

func (l *lineLimit) Read(p []byte) (int, error) {
	n, err := l.r.Read(p)
	b := p[:n]
	for len(b) > 0 {
		// Lines end at '\n' (found fast); a '\r' also ends one, which matters only where the
		// run up to the next '\n' would exceed the limit, or at the end of the read, whose run
		// the next read continues.
		i := bytes.IndexByte(b, '\n')
		seg := b
		if i >= 0 {
			seg = b[:i]
		}
		if i >= 0 && l.run+len(seg) <= l.max {
			l.run += len(seg)
		} else if l.crRun(seg) {
			return 0, l.tooLong()
		}
		if i < 0 {
			break
		}
		if l.run > l.max {
			return 0, l.tooLong()
		}
		l.run, b, l.lines = 0, b[i+1:], l.lines+1
	}
	if l.run > l.max {
		return 0, l.tooLong()
	}
	return n, err
}

// crRun adds seg, which holds no '\n', to the run, restarting it after each '\r'. It reports
// whether a line ended by a '\r' exceeded the limit.
func (l *lineLimit) crRun(seg []byte) bool {
	for {
		j := bytes.IndexByte(seg, '\r')
		if j < 0 {
			l.run += len(seg)
			return false
		}
		if l.run+j > l.max {
			return true
		}
		l.run, seg = 0, seg[j+1:]
	}
}

type csvSource struct {
	cr   *splitSource
	name string
}

// rawLine is the splitter's: the text of the last record's line and its fields' offsets.
func (s *csvSource) rawLine() (string, []int) { return s.cr.rawLine() }

func (s *csvSource) next() ([]string, int, error) {
	rec, line, err := s.cr.Read()
	if err != nil {
		var pe *csv.ParseError
		var le *lineLengthError
		switch {
		case errors.As(err, &le):
			// The guard counts the physical lines it has passed: name the one that ran over.
			return nil, le.line, &Error{File: s.name, Line: le.line, Reason: errLineTooLong.Error()}
		case errors.As(err, &pe):
			line := data.ErrorLine(pe)
			reason := pe.Err.Error()
			if line != pe.Line {
				reason = fmt.Sprintf("a quote opened on this line is never closed (the input ends at line %d)", pe.Line)
			}
			return nil, line, &Error{File: s.name, Line: line, Reason: reason}
		case errors.Is(err, errLineTooLong):
			return nil, 0, &Error{File: s.name, Reason: errLineTooLong.Error()}
		}
		return nil, 0, err
	}
	if len(rec) > MaxColumns {
		return nil, line, &Error{File: s.name, Line: line, Reason: fmt.Sprintf("more than %d columns", MaxColumns)}
	}
	return rec, line, nil
}

// crReader ends a line at a lone carriage return as at a newline (old Mac text, or a file
// edited on several systems): "\r\n" becomes "\n", a bare "\r" becomes "\n". encoding/csv would
// keep a bare "\r" inside a field and run two lines into one, an extra column.
type crReader struct {
	r       io.Reader
	afterCR bool // the last byte read was '\r': a '\n' right after it is the same line end
}

func (c *crReader) Read(p []byte) (int, error) {
	for {
		n, err := c.r.Read(p)
		if n > 0 && !(c.afterCR && p[0] == '\n') && bytes.IndexByte(p[:n], '\r') < 0 {
			c.afterCR = false // the common case: no carriage return, nothing to rewrite
			return n, err
		}
		w := 0
		for _, b := range p[:n] {
			switch {
			case b == '\n' && c.afterCR:
				c.afterCR = false
				continue
			case b == '\r':
				c.afterCR, b = true, '\n'
			default:
				c.afterCR = false
			}
			p[w] = b
			w++
		}
		if w > 0 || err != nil || n == 0 {
			return w, err
		}
	}
}

// sniffSeparator looks at the first non-comment line: a semicolon-separated header wins if it
// has more semicolons than commas.
func sniffSeparator(br *bufio.Reader) (rune, error) {
	b, err := br.Peek(MaxLineBytes)
	if len(b) == 0 && err != nil {
		if errors.Is(err, io.EOF) {
			return 0, errors.New("empty file")
		}
		return 0, err
	}
	for _, ln := range bytes.Split(b, []byte("\n")) {
		t := bytes.TrimSpace(ln)
		if len(t) == 0 || t[0] == '#' {
			continue
		}
		if bytes.Count(t, []byte(";")) > bytes.Count(t, []byte(",")) {
			return ';', nil
		}
		return ',', nil
	}
	return ',', nil
}
