package feed

import (
	"fmt"
	"io"

	"github.com/xuri/excelize/v2"
)

// ReadManifestXLSX streams the manifest on sheet (the first sheet if empty) of an .xlsx workbook
// to fn. The header is the first non-empty row; a workbook written by blackmass is read from its
// lines sheet.
func ReadManifestXLSX(r io.Reader, name, sheet string, opt ManifestOptions, fn func(Line) error) error {
	f, err := excelize.OpenReader(r)
	if err != nil {
		return &ManifestError{File: name, Reason: "not a readable .xlsx workbook: " + err.Error()}
	}
	defer f.Close()
	if sheet == "" {
		sheet = f.GetSheetName(0)
		if idx, _ := f.GetSheetIndex(LinesSheetName); idx >= 0 {
			sheet = LinesSheetName
		}
	}
	if idx, _ := f.GetSheetIndex(sheet); idx < 0 {
		return &ManifestError{File: name, Reason: fmt.Sprintf("no sheet %q (sheets: %v)", sheet, f.GetSheetList())}
	}
	rows, err := f.Rows(sheet)
	if err != nil {
		return &ManifestError{File: name, Reason: err.Error()}
	}
	defer rows.Close()
	src := &xlsxSource{rows: rows, name: name + "[" + sheet + "]"}
	return readRows(src, src.name, opt, false, fn)
}

// LinesSheetName is the sheet of the intake workbook that holds the manifest lines; the
// workbook can be read back as a manifest from it.
const LinesSheetName = "Lines"

type xlsxSource struct {
	rows *excelize.Rows
	name string
	line int
}

func (s *xlsxSource) next() ([]string, int, error) {
	for s.rows.Next() {
		s.line++
		rec, err := s.rows.Columns()
		if err != nil {
			return nil, s.line, &ManifestError{File: s.name, Line: s.line, Reason: err.Error()}
		}
		if blank(rec) || (len(rec) > 0 && len(rec[0]) > 0 && rec[0][0] == '#') {
			continue
		}
		return rec, s.line, nil
	}
	if err := s.rows.Error(); err != nil {
		return nil, s.line, &ManifestError{File: s.name, Reason: err.Error()}
	}
	return nil, s.line, io.EOF
}
