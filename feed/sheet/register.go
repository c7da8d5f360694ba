package sheet

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/register"
	"blackmass/feed/value"
)

// RegisterSheet is the sheet of the register's export.
const RegisterSheet = "Lots"

// CellKind is how a column of the register's export is formatted.
type CellKind int

// The kinds of the register's columns.
const (
	KindText  CellKind = iota
	KindInt            // a count
	KindDate           // YYYY-MM-DD, written as a date
	KindKg             // a mass, three significant figures
	KindMoney          // two decimals with thousands separators
	KindRatio          // measured over estimate
	KindPct            // wt%
	KindKWh            // energy
)

// Number formats of the kinds (ECMA-376 Part 1, §18.8.31 numFmts). A mass shows three
// significant figures from 1 kg to 999 kg, and whole kilograms above.
var kindFormat = map[CellKind]string{
	KindInt:   "0",
	KindDate:  "yyyy-mm-dd",
	KindKg:    "[>=100]#,##0;[>=10]0.0;0.00",
	KindMoney: "#,##0.00",
	KindRatio: "0.00",
	KindPct:   "0.00",
	KindKWh:   "#,##0.0",
}

// Column is one column of the register's export.
type Column struct {
	Head string
	Kind CellKind
}

// RegisterTable lays the lots out one row per lot, each metal on its best evidence with its
// basis, the estimate's P50, the measurement and its standard uncertainty, and their ratio beside
// it. A cell with no value is nil. The CSV and the workbook export share it.
func RegisterTable(lots []register.Summary) ([]Column, [][]any) {
	cols := []Column{{"lot", KindText}, {"version", KindInt}, {"received", KindDate}, {"supplier", KindText}, {"items", KindInt},
		{"nameplate kWh", KindKWh}, {"basis", KindText}, {"estimate black mass kg (P50)", KindKg}, {"weighed kg", KindKg},
		{"weighed", KindText}, {"moisture wt%", KindPct}, {"moisture from", KindText}, {"dry black mass kg", KindKg}}
	for _, el := range value.PayableMetals() {
		cols = append(cols, Column{el + " kg", KindKg}, Column{el + " basis", KindText}, Column{el + " estimate kg (P50)", KindKg},
			Column{el + " measured kg", KindKg}, Column{el + " measured sd kg", KindKg}, Column{el + " measured/estimate", KindRatio})
	}
	cols = append(cols, Column{"assays", KindInt}, Column{"latest assay lab", KindText}, Column{"assays disagree on", KindText},
		Column{"currency", KindText}, Column{"payable value", KindMoney}, Column{"payable value basis", KindText},
		Column{"estimate payable value (P50)", KindMoney}, Column{"reagent cost (P50)", KindMoney}, Column{"chemistries", KindText},
		Column{"notes", KindText})
	rows := make([][]any, 0, len(lots))
	for _, l := range lots {
		ev := l.Evidence
		row := []any{l.ID, l.Version, l.Received, l.Supplier, l.Items, l.NameplateKWh, l.Basis, l.BlackMassKg, nonZero(l.WeighedKg)}
		if dm := ev.DryMass; dm != nil {
			row = append(row, dm.State, dm.MoistureWtPct, dm.MoistureFrom, dm.Kg)
		} else {
			row = append(row, nil, nil, nil, nil)
		}
		var disagree []string
		for _, el := range value.PayableMetals() {
			e := ev.Element(el)
			var mkg, msd, ratio any
			if m := e.Measured; m != nil {
				mkg, msd = m.Kg, m.SigmaKg
				if m.Disagree {
					disagree = append(disagree, el)
				}
			}
			if e.Ratio != nil {
				ratio = *e.Ratio
			}
			row = append(row, e.Kg, e.Basis, e.EstimateKgP50, mkg, msd, ratio)
		}
		row = append(row, l.Assays, l.AssayLab, strings.Join(disagree, ", "), l.Currency, ptrVal(ev.Payable), ev.PayableBasis,
			ptrVal(l.Payable), ptrVal(l.ReagentCost), strings.Join(l.Chemistries, "; "), strings.Join(ev.Notes, "; "))
		rows = append(rows, row)
	}
	return cols, rows
}

func nonZero(x float64) any {
	if x == 0 {
		return nil
	}
	return x
}

func ptrVal(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// WriteRegister writes the register's export as a workbook: the header row frozen and repeated
// on every printed page, columns as wide as their text, every number in its format, dates as
// dates, A4 landscape fitted to one page wide with page numbers in the footer.
func WriteRegister(out io.Writer, lots []register.Summary) error {
	cols, rows := RegisterTable(lots)
	f := excelize.NewFile()
	defer f.Close()
	if err := f.SetSheetName("Sheet1", RegisterSheet); err != nil {
		return err
	}
	head, err := f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}, Alignment: &excelize.Alignment{Vertical: "top"},
		Border: []excelize.Border{{Type: "bottom", Color: "000000", Style: 1}}})
	if err != nil {
		return err
	}
	styles := map[CellKind]int{}
	for k, code := range kindFormat {
		fmtCode := code
		if styles[k], err = f.NewStyle(&excelize.Style{CustomNumFmt: &fmtCode}); err != nil {
			return err
		}
	}
	if err := registerPrint(f, len(cols)); err != nil { // the page setup goes in before the stream writer takes the sheet
		return err
	}
	sw, err := f.NewStreamWriter(RegisterSheet)
	if err != nil {
		return err
	}
	for j, c := range cols {
		w := utf8.RuneCountInString(c.Head)
		for _, r := range rows {
			w = max(w, utf8.RuneCountInString(shownText(r[j], c.Kind)))
		}
		if err := sw.SetColWidth(j+1, j+1, float64(min(max(w+2, 6), 60))); err != nil {
			return err
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	hr := make([]any, len(cols))
	for j, c := range cols {
		hr[j] = excelize.Cell{StyleID: head, Value: c.Head}
	}
	if err := sw.SetRow("A1", hr); err != nil {
		return err
	}
	for i, r := range rows {
		cells := make([]any, len(r))
		for j, v := range r {
			cells[j] = registerCell(v, cols[j].Kind, styles)
		}
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		if err := sw.SetRow(cell, cells); err != nil {
			return err
		}
	}
	if err := sw.Flush(); err != nil {
		return err
	}
	return f.Write(out)
}

// registerCell is one cell: text as text (never a formula), a date as a date, a number with its
// kind's format.
func registerCell(v any, k CellKind, styles map[CellKind]int) any {
	switch x := v.(type) {
	case nil:
		return nil
	case string:
		if k == KindDate {
			if t, err := time.Parse(time.DateOnly, x); err == nil {
				return excelize.Cell{StyleID: styles[KindDate], Value: t}
			}
		}
		return excelize.Cell{Value: x}
	}
	return excelize.Cell{StyleID: styles[k], Value: v}
}

// shownText is about what a cell shows, to fit its column's width.
func shownText(v any, k CellKind) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return x
	case int:
		return strconv.Itoa(x)
	case float64:
		t := strconv.FormatFloat(x, 'f', 2, 64)
		if k == KindMoney || k == KindKg || k == KindKWh {
			digits := len(strconv.FormatFloat(math.Abs(x), 'f', 0, 64))
			t += strings.Repeat(",", (digits-1)/3) // thousands separators
		}
		return t
	}
	return fmt.Sprint(v)
}

// registerPrint sets the print setup: A4 landscape, fitted to one page wide (as many pages
// tall as it takes), the header row repeated on every page, the title in the header and page
// numbers in the footer.
func registerPrint(f *excelize.File, ncols int) error {
	paper, orient, one, auto, fit := PaperA4, "landscape", 1, 0, true
	if err := f.SetPageLayout(RegisterSheet, &excelize.PageLayoutOptions{Size: &paper, Orientation: &orient, FitToWidth: &one,
		FitToHeight: &auto}); err != nil {
		return err
	}
	if err := f.SetSheetProps(RegisterSheet, &excelize.SheetPropsOptions{FitToPage: &fit}); err != nil {
		return err
	}
	if err := f.SetHeaderFooter(RegisterSheet, &excelize.HeaderFooterOptions{
		OddHeader: "&Lblackmass lot register&R&D", OddFooter: "&LLots on their best evidence: see the basis columns&RPage &P of &N"}); err != nil {
		return err
	}
	last, _ := excelize.ColumnNumberToName(ncols)
	if err := f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: RegisterSheet + "!$1:$1",
		Scope: RegisterSheet}); err != nil {
		return err
	}
	return f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Area", RefersTo: RegisterSheet + "!$A:$" + last, Scope: RegisterSheet})
}
