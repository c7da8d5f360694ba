// Package sheet writes the intake workbook of a lot from a report.Report. It formats and lays out;
// it computes nothing new except the live formulas a user is meant to edit (reagent prices, the
// weigh-in), whose inputs are the report's own numbers.
package sheet

import (
	"blackmass/feed/manifest"
	"blackmass/feed/report"
	"fmt"
	"io"
	"strconv"

	"github.com/xuri/excelize/v2"
)

// Sheet names.
const (
	Summary     = "Lot summary"
	Lines       = manifest.LinesSheetName
	Leach       = "Leach"
	Assumptions = "Assumptions"
	WeighIn     = "Weigh-in"
	AssaySheet  = "Assay"
)

type writer struct {
	paper                 int // PaperA4 or PaperLetter
	editText              int // an input cell for text (a date, a name)
	wrap                  int // wrapped text, top-aligned
	textAfterNumber       int // wrapped text indented from a right-aligned number to its left
	money, moneyTotal     int // an amount of money, and one on a total row
	alert                 int // a disagreement to notice
	formulas              []formulaCell
	f                     *excelize.File
	hdr, num3, pct, title int
	edit                  int // cells a user is expected to change
	r                     *report.Report
	styles                map[styleKey]int  // made on demand (styleOf)
	sigStyles             [8]int            // sigStyle's, by decimals + 1
	err                   error             // the first error making a style
	splices               map[string]splice // parts written as the workbook is zipped (blockZip)
}

// Write builds the workbook and writes it to w.
func Write(w io.Writer, r *report.Report) error { return WriteOn(w, r, PaperA4) }

// WriteOn is Write on the paper given (PaperA4 or PaperLetter).
func WriteOn(w io.Writer, r *report.Report, paper int) error {
	f, formulas, streamLines, err := build(r, paper)
	if err != nil {
		return err
	}
	defer f.Close()
	cached, err := cachedValues(f, formulas)
	if err != nil {
		return err
	}
	if err := streamLines(); err != nil {
		return err
	}
	// The library's own buffer, not a copy of it: a large workbook is held once.
	buf, err := f.WriteToBuffer()
	if err != nil {
		return err
	}
	return normaliseZip(buf.Bytes(), w, cached)
}

// sheetParts maps each sheet's name to its part in the package.
func sheetParts(f *excelize.File) map[string]string {
	parts := map[string]string{}
	for id, name := range f.GetSheetMap() {
		parts[name] = fmt.Sprintf("xl/worksheets/sheet%d.xml", id)
	}
	return parts
}

// cachedValues computes every formula at the report's values, by worksheet part.
func cachedValues(f *excelize.File, formulas []formulaCell) (map[string]map[string]cachedValue, error) {
	parts := sheetParts(f)
	out := map[string]map[string]cachedValue{}
	for _, fc := range formulas {
		v, err := f.CalcCellValue(fc.sheet, fc.cell, excelize.Options{RawCellValue: true})
		if err != nil {
			return nil, fmt.Errorf("workbook: %s!%s: %w", fc.sheet, fc.cell, err)
		}
		part := parts[fc.sheet]
		if out[part] == nil {
			out[part] = map[string]cachedValue{}
		}
		_, nerr := strconv.ParseFloat(v, 64)
		out[part][fc.cell] = cachedValue{text: v, number: nerr == nil && v != ""}
	}
	return out, nil
}

// Build returns the workbook; the caller closes it. The Lines sheet's line rows are put in as it
// is saved (blockZip), so they are read from a saved copy.
func Build(r *report.Report) (*excelize.File, error) {
	f, _, streamLines, err := build(r, PaperA4)
	if err != nil {
		return nil, err
	}
	if err := streamLines(); err != nil {
		f.Close()
		return nil, err
	}
	return f, nil
}

// build makes every sheet but the Lines sheet's rows, which the returned streamLines writes:
// the caller computes the formulas first (see writer.lines).
func build(r *report.Report, paper int) (f *excelize.File, formulas []formulaCell, streamLines func() error, err error) {
	f = excelize.NewFile()
	wr := &writer{f: f, r: r, paper: paper, styles: map[styleKey]int{}, splices: map[string]splice{}}
	f.SetZipWriter(newBlockZip(wr.splices))
	must := func(id int, e error) int {
		if e != nil && err == nil {
			err = e
		}
		return id
	}
	wr.hdr = must(f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: bodyPt}, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"D9E2D0"}},
		Border: []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}}, Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}))
	f3 := "0.000"
	wr.num3 = must(f.NewStyle(&excelize.Style{CustomNumFmt: &f3}))
	p2 := "0.00"
	wr.pct = must(f.NewStyle(&excelize.Style{CustomNumFmt: &p2}))
	wr.title = must(f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: 14}}))
	wr.alert = must(f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"F4CCCC"}}, Font: &excelize.Font{Bold: true, Color: "7F0000"}, CustomNumFmt: &f3}))
	wr.wrap = must(f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}))
	m2 := "#,##0.00"
	wr.money = must(f.NewStyle(&excelize.Style{CustomNumFmt: &m2}))
	wr.moneyTotal = must(f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"D9E2D0"}},
		Border: []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}}, CustomNumFmt: &m2}))
	wr.textAfterNumber = must(f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{Horizontal: "left", WrapText: true, Vertical: "top", Indent: 1}}))
	wr.editText = must(f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFF2CC"}},
		Border: []excelize.Border{{Type: "bottom", Color: "BF9000", Style: 1}}}))
	wr.edit = must(f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFF2CC"}}, CustomNumFmt: &f3,
		Border: []excelize.Border{{Type: "left", Color: "BF9000", Style: 1}, {Type: "right", Color: "BF9000", Style: 1}, {Type: "top", Color: "BF9000", Style: 1}, {Type: "bottom", Color: "BF9000", Style: 1}}}))
	if err != nil {
		return nil, nil, nil, err
	}
	// The summary is made active before the Lines sheet is streamed: setting it afterwards would
	// make the xlsx library parse the streamed sheet back into memory.
	steps := []func() error{wr.summary, func() error { f.SetActiveSheet(0); return nil }, wr.lines, wr.leach, wr.recovery, wr.value, wr.assay, wr.assumptions, wr.weighIn}
	for _, s := range steps {
		err := s()
		if err == nil {
			err = wr.err
		}
		if err != nil {
			f.Close()
			return nil, nil, nil, err
		}
	}
	lot := r.Inputs.LotID
	if lot == "" {
		lot = r.Inputs.File
	}
	_ = f.SetDocProps(&excelize.DocProperties{Title: "Intake sheet " + lot, Creator: "blackmass " + r.Inputs.Version,
		Created: "2000-01-01T00:00:00Z", Modified: "2000-01-01T00:00:00Z"})
	return f, wr.formulas, wr.streamLines, nil
}

func (w *writer) row(sheet string, row int, vals ...any) error {
	cell, _ := excelize.CoordinatesToCellName(1, row)
	return w.f.SetSheetRow(sheet, cell, &vals)
}

func (w *writer) header(sheet string, row int, vals ...any) error {
	if err := w.row(sheet, row, vals...); err != nil {
		return err
	}
	end, _ := excelize.CoordinatesToCellName(len(vals), row)
	start, _ := excelize.CoordinatesToCellName(1, row)
	_ = w.f.SetRowHeight(sheet, row, 30)
	return w.f.SetCellStyle(sheet, start, end, w.hdr)
}

func (w *writer) style(sheet, from, to string, id int) { _ = w.f.SetCellStyle(sheet, from, to, id) }

// formulaCell is a cell holding a formula, whose value is stored with it when the workbook is
// written (cachedValues), so viewers that do not recalculate still show it.
type formulaCell struct{ sheet, cell string }

// formula sets a formula and remembers the cell.
func (w *writer) formula(sheet, cell, expr string) {
	_ = w.f.SetCellFormula(sheet, cell, expr)
	w.formulas = append(w.formulas, formulaCell{sheet, cell})
}
