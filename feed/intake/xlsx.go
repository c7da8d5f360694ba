package intake

import (
	"blackmass/feed/manifest"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/xuri/excelize/v2"
)

// Bounds on an .xlsx manifest, so a small file cannot inflate into gigabytes.
const (
	MaxUnzippedBytes = 200 << 20 // all parts of the workbook, inflated
	maxXMLInMemory   = 16 << 20  // a larger part is worked from a temporary file
	maxSheets        = 64
)

// ReadXLSX streams the manifest on one sheet of an .xlsx workbook to fn. The sheet is
// opt.Sheet if given; else the intake workbook's Lines sheet if visible; else the first visible
// sheet with a recognisable header. Cells are read as stored (a number formatted "0" is still 2.6), not as
// displayed. Info names the sheet read and the sheets there were.
func ReadXLSX(r io.Reader, name string, opt Options, fn func(manifest.Line) error) (Info, error) {
	// The parts are checked through ReadAt (a bytes.Reader is not copied), then excelize reads r.
	ra, ok := r.(interface {
		io.ReaderAt
		Size() int64
	})
	if !ok {
		b, err := io.ReadAll(r)
		if err != nil {
			return Info{}, &Error{File: name, Reason: err.Error()}
		}
		br := bytes.NewReader(b)
		ra, r = br, br
	}
	z, err := openXLSXZip(ra, ra.Size())
	if err != nil {
		return Info{}, &Error{File: name, Reason: "not a readable .xlsx workbook: " + err.Error()}
	}
	f, err := excelize.OpenReader(r, excelize.Options{UnzipSizeLimit: MaxUnzippedBytes, UnzipXMLSizeLimit: maxXMLInMemory,
		TmpDir: opt.TempDir})
	if err != nil {
		return Info{}, &Error{File: name, Reason: "not a readable .xlsx workbook: " + err.Error()}
	}
	defer f.Close()
	sheets := f.GetSheetList()
	if len(sheets) > maxSheets {
		return Info{}, &Error{File: name, Reason: fmt.Sprintf("more than %d sheets", maxSheets)}
	}
	var candidates []string
	switch {
	case opt.Sheet != "":
		if idx, _ := f.GetSheetIndex(opt.Sheet); idx < 0 {
			return Info{}, &Error{File: name, Reason: fmt.Sprintf("no sheet %q (sheets: %s)", Printable(opt.Sheet, 40), strings.Join(sheets, ", "))}
		}
		candidates = []string{opt.Sheet}
	default:
		// The intake workbook's Lines sheet first, if it is visible: a hidden sheet is not what
		// the user sees, and Info.Sheet says which sheet was read.
		if visible, err := f.GetSheetVisible(manifest.LinesSheetName); err == nil && visible {
			candidates = []string{manifest.LinesSheetName}
		}
		for _, s := range sheets {
			if visible, _ := f.GetSheetVisible(s); visible && s != manifest.LinesSheetName {
				candidates = append(candidates, s)
			}
		}
		if len(candidates) == 0 {
			return Info{}, &Error{File: name, Reason: "no visible sheet"}
		}
	}
	var firstErr error
	for _, sheet := range candidates {
		info, err := readSheet(f, name, sheet, opt, fn)
		info.Sheets = sheets
		if info.HeaderLine > 0 {
			// The cells' check runs even when a line was refused: a date format or a formula
			// without a result explains the refusal better than the value does.
			if cerr := checkCells(f, z, name, sheet, info); cerr != nil && (err == nil || errorLine(cerr) <= errorLine(err)) {
				err = cerr
			}
		}
		if err == nil {
			return info, nil
		}
		if info.HeaderLine > 0 || len(candidates) == 1 {
			return info, err // the header was found on this sheet: its error stands
		}
		if firstErr == nil {
			firstErr = err
		}
	}
	return Info{Sheets: sheets}, &Error{File: name, Reason: fmt.Sprintf("no sheet holds a recognisable header (sheets: %s); name one with --sheet. First sheet: %v", strings.Join(sheets, ", "), firstErr)}
}

func readSheet(f *excelize.File, name, sheet string, opt Options, fn func(manifest.Line) error) (Info, error) {
	rows, err := f.Rows(sheet)
	if err != nil {
		return Info{Sheet: sheet}, &Error{File: name, Reason: fmt.Sprintf("sheet %q: %v", sheet, err)}
	}
	defer rows.Close()
	src := &xlsxSource{rows: rows, name: name + "[" + sheet + "]"}
	info, err := readRows(src, src.name, opt, false, fn)
	info.Sheet = sheet
	return info, err
}

// errorLine is the line an *Error names (0 for none or another error).
func errorLine(err error) int {
	var ie *Error
	if errors.As(err, &ie) {
		return ie.Line
	}
	return 0
}

type xlsxSource struct {
	rows   *excelize.Rows
	name   string
	line   int
	blanks int // empty rows since the last that held something
}

func (s *xlsxSource) next() ([]string, int, error) {
	for s.rows.Next() {
		s.line++
		rec, err := s.rows.Columns(excelize.Options{RawCellValue: true})
		if err != nil {
			return nil, s.line, &Error{File: s.name, Line: s.line, Reason: err.Error()}
		}
		if blank(rec) {
			if s.blanks++; s.blanks > maxBlankRows {
				return nil, s.line, &Error{File: s.name, Line: s.line, Reason: fmt.Sprintf("more than %d empty rows in a row: delete them (or the rows below the manifest)", maxBlankRows)}
			}
			continue
		}
		s.blanks = 0
		if len(rec) > MaxColumns {
			return nil, s.line, &Error{File: s.name, Line: s.line, Reason: fmt.Sprintf("more than %d columns", MaxColumns)}
		}
		return rec, s.line, nil
	}
	if err := s.rows.Error(); err != nil {
		return nil, s.line, &Error{File: s.name, Reason: "the sheet cannot be read: " + err.Error()}
	}
	return nil, s.line, io.EOF
}
