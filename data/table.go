package data

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"strings"
)

// Table is a small reference table read from CSV: a header row, then records. Lines beginning
// with '#' are comments. Every table must carry a "source" column so each value can be traced.
type Table struct {
	Name   string         // file name, used in error messages
	Header []string       // column names, lower-cased and trimmed
	Rows   []Row          // records in file order
	index  map[string]int // column name -> position
}

// Row is one record of a Table with the input line it came from.
type Row struct {
	Line   int
	Fields []string
	table  *Table
}

// ReadTable reads the table name from fsys. See [ParseTable].
func ReadTable(fsys fs.FS, name string) (*Table, error) {
	b, err := fs.ReadFile(fsys, name)
	if err != nil {
		return nil, err
	}
	return ParseTable(bytes.NewReader(b), name)
}

// ParseTable parses a reference table. It returns an error naming the file and line for a
// malformed record, a duplicate or missing "source" column, or an empty table.
//
// The input may hold at most [MaxTableBytes] and must be UTF-8 (see [CheckEncoding]).
func ParseTable(r io.Reader, name string) (*Table, error) {
	br := SkipBOM(CapBytes(r, MaxTableBytes))
	if err := CheckEncoding(br); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	cr := NewCSVReader(br, ',')
	t := &Table{Name: name, index: map[string]int{}}
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("%s: empty table", name)
	}
	if err != nil {
		return nil, wrapCSV(name, err)
	}
	for i, h := range header {
		k := strings.ToLower(strings.TrimSpace(h))
		if _, dup := t.index[k]; dup {
			return nil, fmt.Errorf("%s: duplicate column %q", name, h)
		}
		t.index[k] = i
		t.Header = append(t.Header, k)
	}
	if _, ok := t.index["source"]; !ok {
		return nil, fmt.Errorf("%s: no \"source\" column: every reference table must say where its values come from", name)
	}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, wrapCSV(name, err)
		}
		line, _ := cr.FieldPos(0)
		for i := range rec {
			rec[i] = strings.TrimSpace(rec[i])
		}
		t.Rows = append(t.Rows, Row{Line: line, Fields: rec, table: t})
	}
	if len(t.Rows) == 0 {
		return nil, fmt.Errorf("%s: table has a header but no rows", name)
	}
	for _, r := range t.Rows {
		if r.Str("source") == "" {
			return nil, fmt.Errorf("%s:%d: empty source", name, r.Line)
		}
	}
	return t, nil
}

func wrapCSV(name string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fmt.Errorf("%s:%d: %w", name, ErrorLine(pe), pe.Err)
	}
	return fmt.Errorf("%s: %w", name, err)
}

// Has reports whether the table has the column.
func (t *Table) Has(col string) bool {
	_, ok := t.index[strings.ToLower(col)]
	return ok
}

// Str returns the trimmed text of column col, or "" if the table has no such column.
func (r Row) Str(col string) string {
	i, ok := r.table.index[strings.ToLower(col)]
	if !ok || i >= len(r.Fields) {
		return ""
	}
	return r.Fields[i]
}

// Float parses column col as a finite plain decimal ([ParseDecimal]); the error names the file,
// line and column.
func (r Row) Float(col string) (float64, error) {
	s := r.Str(col)
	v, err := ParseDecimal(s)
	if err != nil {
		return 0, fmt.Errorf("%s:%d: column %s: %q is not a number (want a plain decimal such as 0.25 or 1e-3)", r.table.Name, r.Line, col, s)
	}
	return v, nil
}

// Range reads the columns prefix_min<suffix>, prefix_mode<suffix>, prefix_max<suffix> (plain
// min, mode, max when prefix is empty) and checks min <= mode <= max. suffix is the unit part of
// the column name, e.g. "_V".
func (r Row) Range(prefix, suffix string) (lo, mode, hi float64, err error) {
	col := func(s string) string {
		if prefix == "" {
			return s + suffix
		}
		return prefix + "_" + s + suffix
	}
	if lo, err = r.Float(col("min")); err != nil {
		return
	}
	if mode, err = r.Float(col("mode")); err != nil {
		return
	}
	if hi, err = r.Float(col("max")); err != nil {
		return
	}
	if !(lo <= mode && mode <= hi) {
		err = fmt.Errorf("%s:%d: %s range %g/%g/%g is not ordered min <= mode <= max", r.table.Name, r.Line, prefix, lo, mode, hi)
	}
	return
}

// Errorf returns an error prefixed with the row's file and line.
func (r Row) Errorf(format string, args ...any) error {
	return fmt.Errorf("%s:%d: %s", r.table.Name, r.Line, fmt.Sprintf(format, args...))
}
