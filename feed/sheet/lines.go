package sheet

import (
	"blackmass/feed/lot"
	"blackmass/feed/manifest"
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"
)

// MaxLines is the most manifest lines the Lines sheet holds: a sheet's 1,048,576 rows (ECMA-376
// Part 1, §18.3.1.73) less the header.
const MaxLines = 1_048_575

// lines makes the Lines sheet, empty, in its place among the tabs, with its page setup; its
// rows are streamed last (streamLines), once every formula elsewhere has been computed: the
// formula engine reads every sheet, and would parse the streamed rows back into memory.
func (w *writer) lines() error {
	f, r := w.f, w.r
	if r.Lot.Lines == 0 {
		return nil // a quote from an assay has no manifest lines
	}
	if r.LineCount() > MaxLines {
		return fmt.Errorf("%d lines do not fit a sheet (at most %d)", r.LineCount(), MaxLines)
	}
	if _, err := f.NewSheet(Lines); err != nil {
		return err
	}
	// Page setup goes in before the stream writer takes the sheet: the columns a bench reads
	// print on one portrait page width, in 8 pt on rows as low as the type allows, with the
	// header row on every page; the rest of the columns (what the manifest said, and what the
	// estimate made of it) stay in the file, out of the print area.
	w.printSetup(Lines, false)
	w.printTitles(Lines, 1, 1)
	w.printArea(Lines, PrintedLineColumns, r.LineCount()+2)
	return nil
}

// PrintedLineColumns is how many of the Lines sheet's columns print: id, description, chemistry
// as read, format, count, energy per item, mass per item and black mass.
const PrintedLineColumns = 8

// lineColumn is a column of the Lines sheet: its header, width, and whether its text wraps.
type lineColumn struct {
	head  string
	width float64
	wrap  bool
}

// lineColumns are the Lines sheet's columns. The manifest's own are headed so the sheet reads
// back as a manifest (by header, in any order); the computed ones (manifest.DerivedLineColumns)
// are read past.
func lineColumns(idWidth float64) []lineColumn {
	d := manifest.DerivedLineColumns // line, chemistry resolved, energy, modelled mass, Wh/kg, cathode, black mass, flags
	return []lineColumn{{"id", idWidth, true}, {"description", 30, true}, {"chemistry", 15, true}, {"format", 8, true},
		{"count", 6, false}, {d[2], 9, false}, {"mass (kg)", 8, false}, {d[6], 12, false},
		{"capacity", 11, true}, {"capacity basis", 9, true}, {"voltage (V)", 8, false}, {"cells per pack", 8, false},
		{"notes", 30, true}, {"application", 12, true}, {d[0], 6, false}, {d[1], 18, true},
		{d[3], 12, false}, {d[4], 10, false}, {d[5], 12, false}, {d[7], 50, true}}
}

// lineRowPt is the height of a Lines row of one line of 8 pt text, and lineLinePt of each line
// of a wrapped text: the sheet is long, so its rows are as low as the type allows.
const (
	lineRowPt  = 10.0
	lineLinePt = 9.75
)

// denseLines is about how many lines a text takes wrapped in a Lines column widthUnits wide
// (8 pt text holds 10/8 as many characters as 10 pt).
func denseLines(s string, widthUnits float64, boldText bool) int {
	return textLines(s, widthUnits*bodyPt/densePt, boldText)
}

// streamLines writes the Lines sheet through the stream writer: its columns, panes, header and
// totals rows; its lines are put in when the workbook is zipped (lineRows).
func (w *writer) streamLines() error {
	f, r := w.f, w.r
	if r.Lot.Lines == 0 {
		return nil
	}
	sw, err := f.NewStreamWriter(Lines)
	if err != nil {
		return err
	}
	idWidth := 4.5
	for _, l := range r.EachLine() {
		idWidth = max(idWidth, float64(len([]rune(l.ID)))*densePt/bodyPt/charsPerUnit+1.5)
	}
	cols := lineColumns(min(idWidth, 11))
	for i, c := range cols {
		_ = sw.SetColWidth(i+1, i+1, c.width)
	}
	_ = sw.SetPanes(&excelize.Panes{Freeze: true, XSplit: 1, YSplit: 1, TopLeftCell: "B2", ActivePane: "bottomRight"})
	names := make([]any, len(cols))
	headH := lineRowPt
	for i, c := range cols {
		names[i] = c.head
		if i < PrintedLineColumns {
			headH = max(headH, float64(denseLines(c.head, c.width, true))*lineLinePt+2)
		}
	}
	for i, c := range cols {
		st := w.styleOf(denseHead, "")
		if !c.wrap {
			st = w.styleOf(denseHeadNum, "") // over a column of numbers, aligned as they are
		}
		names[i] = excelize.Cell{StyleID: st, Value: c.head}
	}
	if err := sw.SetRow("A1", names, excelize.RowOpts{Height: headH}); err != nil {
		return err
	}
	// The data rows go into the sheet's part as it is zipped, between the header and the totals
	// row (lineRows), written as the stream writer writes them but without its machinery.
	if r.LineCount() > 0 {
		// Every style the rows take is made now: the styles part is written before the rows.
		w.makeSigStyles()
		st := lineStyles{text: w.styleOf(dense, fmtText), wrap: w.styleOf(denseWrap, fmtText), count: w.styleOf(dense, fmtCount)}
		w.splices[sheetParts(f)[Lines]] = func(part []byte, out io.Writer) error { return w.lineRows(cols, st, part, out) }
	}
	// A totals row from the report, in the computed columns only, so that the sheet read back
	// as a manifest passes over it (a row with nothing in the manifest's own columns).
	if r.LineCount() > 0 {
		tot := w.styleOf(total, "")
		row := make([]any, len(cols))
		for j := range row {
			row[j] = excelize.Cell{StyleID: tot}
		}
		row[5] = excelize.Cell{StyleID: tot, Value: "lot, P50"}
		row[7] = excelize.Cell{StyleID: w.styleOf(total, sigFmt(r.BlackMassKg.P50)), Value: r.BlackMassKg.P50}
		row[14] = excelize.Cell{StyleID: tot, Value: "lot"}
		row[15] = excelize.Cell{StyleID: tot, Value: thousands(r.Lot.Items) + " items"}
		row[19] = excelize.Cell{StyleID: tot, Value: fmt.Sprintf("black mass P50 of the lot (P10 %s, P90 %s kg); lines above are most likely values",
			sig3(r.BlackMassKg.P10), sig3(r.BlackMassKg.P90))}
		cell, _ := excelize.CoordinatesToCellName(1, r.LineCount()+2)
		if err := sw.SetRow(cell, row, excelize.RowOpts{Height: rowPt + 2}); err != nil {
			return err
		}
		last, _ := excelize.ColumnNumberToName(len(cols))
		_ = f.AutoFilter(Lines, fmt.Sprintf("A1:%s%d", last, r.LineCount()+1), nil)
	}
	return sw.Flush()
}

// lineRows writes the Lines sheet's part: its XML as the stream writer left it (header and totals
// rows), with every line's row put before the totals row.
func (w *writer) lineRows(cols []lineColumn, st lineStyles, part []byte, out io.Writer) error {
	r := w.r
	mark := []byte(`<row r="` + strconv.Itoa(r.LineCount()+2) + `"`)
	at := bytes.Index(part, mark)
	if at < 0 {
		return fmt.Errorf("sheet: the %s sheet has no totals row to put its lines before", Lines)
	}
	if _, err := out.Write(part[:at]); err != nil {
		return err
	}
	err := r.WriteLines(func(b []byte, i int, l lot.LineResult) ([]byte, error) {
		vals := [...]any{l.ID, l.Description, l.ChemistryLabel, l.Format, l.Count, l.EnergyWhPerItem, opt(l.MeasuredMassKg), l.BlackMassKg,
			l.CapacityGiven, l.CapacityBasis, opt(l.VoltageV), optInt(l.CellsPerItem), l.Notes, l.Application,
			l.Line, l.Chemistry, l.ModelMassKgEach, opt(l.MeasuredWhPerKg), l.CathodeKg, strings.Join(l.Flags, "; ")}
		h := lineRowPt
		for j := range PrintedLineColumns { // the printed rows are as tall as their wrapped text
			if s, ok := vals[j].(string); ok && cols[j].wrap {
				if n := denseLines(s, cols[j].width, false); n > 1 {
					h = max(h, float64(n)*lineLinePt+1)
				}
			}
		}
		x := rowXML{b: b}
		num := i + 2
		x.start(num, h)
		for j, v := range vals {
			s := 0
			switch v := v.(type) {
			case string:
				s = st.text
				if cols[j].wrap {
					s = st.wrap
				}
			case int:
				s = st.count
			case float64:
				s = w.sigStyles[sigDecimals(v)+1] // made by makeSigStyles
			}
			x.cell(j+1, num, s, v) // user text as typed, never a formula
		}
		x.end()
		return x.b, nil
	}, func(b []byte) error {
		_, err := out.Write(b)
		return err
	})
	if err != nil {
		return err
	}
	_, err = out.Write(part[at:])
	return err
}

// lineStyles are the styles of the Lines rows' text, wrapped text and counts.
type lineStyles struct{ text, wrap, count int }

// sig3 prints a number to three significant figures for a sentence.
func sig3(v float64) string {
	if v == 0 {
		return "0"
	}
	return strconv.FormatFloat(v, 'f', min(6, max(0, 2-int(math.Floor(math.Log10(math.Abs(v)))))), 64)
}

// opt leaves a cell empty for a value that was not given (0).
func opt(v float64) any {
	if v == 0 {
		return nil
	}
	return v
}

func optInt(v int) any {
	if v == 0 {
		return nil
	}
	return v
}
