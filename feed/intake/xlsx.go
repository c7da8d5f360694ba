package intake

import (
	"blackmass/feed/manifest"
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
// opt.Sheet if given; else the intake workbook's Lines sheet; else the first visible sheet with
// a recognisable header. Cells are read as stored (a number formatted "0" is still 2.6), not as
// displayed. Info names the sheet read and the sheets there were.
func ReadXLSX(r io.Reader, name string, opt Options, fn func(manifest.Line) error) (Info, error) {
	small := false
	if l, ok := r.(interface{ Len() int }); ok {
		small = l.Len() <= maxCheckedBytes
	}
	f, err := excelize.OpenReader(r, excelize.Options{UnzipSizeLimit: MaxUnzippedBytes, UnzipXMLSizeLimit: maxXMLInMemory})
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
		if idx, _ := f.GetSheetIndex(manifest.LinesSheetName); idx >= 0 {
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
		if err == nil && small {
			err = checkCells(f, name, sheet, info)
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

// maxCheckedBytes is the largest workbook whose cells are checked for merges and formulas
// without saved results (the check loads the sheet whole; a hand-typed manifest is far smaller).
const maxCheckedBytes = 4 << 20

// maxCheckedRows bounds the rows whose chemistry cell is checked for a formula.
const maxCheckedRows = 20000

// checkCells refuses what would be misread: merged cells below the header (only their first row
// holds the value) and chemistry cells holding a formula with no saved result (they read blank,
// which means unknown).
func checkCells(f *excelize.File, name, sheet string, info Info) error {
	file := name + "[" + sheet + "]"
	merges, err := f.GetMergeCells(sheet)
	if err != nil {
		return &Error{File: file, Reason: "the sheet cannot be read: " + err.Error()}
	}
	for _, m := range merges {
		_, r1, err := excelize.CellNameToCoordinates(m.GetStartAxis())
		if err == nil && r1 >= info.HeaderLine {
			return &Error{File: file, Line: r1, Reason: fmt.Sprintf("merged cells %s:%s: only their first row holds the value; unmerge them and fill every row", m.GetStartAxis(), m.GetEndAxis())}
		}
	}
	if info.chemistryColumn < 0 {
		return nil
	}
	last := info.HeaderLine + min(info.Lines, maxCheckedRows) + 1
	for row := info.HeaderLine + 1; row <= last; row++ {
		cell, _ := excelize.CoordinatesToCellName(info.chemistryColumn+1, row)
		v, _ := f.GetCellValue(sheet, cell, excelize.Options{RawCellValue: true})
		if v != "" {
			continue
		}
		if fm, _ := f.GetCellFormula(sheet, cell); fm != "" {
			return &Error{File: file, Line: row, Column: "chemistry", Value: "=" + fm,
				Reason: "a formula with no saved result reads as blank (unknown chemistry): open and save the file in a spreadsheet program, or paste the values"}
		}
	}
	return nil
}

type xlsxSource struct {
	rows *excelize.Rows
	name string
	line int
}

func (s *xlsxSource) next() ([]string, int, error) {
	for s.rows.Next() {
		s.line++
		rec, err := s.rows.Columns(excelize.Options{RawCellValue: true})
		if err != nil {
			return nil, s.line, &Error{File: s.name, Line: s.line, Reason: err.Error()}
		}
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
