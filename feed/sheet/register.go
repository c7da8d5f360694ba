package sheet

import (
	"fmt"
	"io"
	"math"
	"slices"
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
// significant figures, each cell in the format of its own value (kgFormat); whole kilograms, with
// thousands separators, from 100 kg.
var kindFormat = map[CellKind]string{
	KindInt:   "#,##0",
	KindDate:  "yyyy-mm-dd",
	KindKg:    "#,##0",
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

// RegisterMetalsSheet is the export's sheet of metals, one row per lot and element.
const RegisterMetalsSheet = "Lot metals"

// LotsTable is the workbook's sheet of lots: one row per lot, each payable metal's kg on its best
// evidence, the elements measured, the value and what it rests on. The metals' detail is on the
// metals sheet (MetalsTable).
func LotsTable(lots []register.Summary) ([]Column, [][]any) {
	cols := []Column{{"lot", KindText}, {"version", KindInt}, {"received", KindDate}, {"supplier", KindText}, {"items", KindInt},
		{"nameplate kWh", KindKWh}, {"basis", KindText}, {"estimate black mass kg (P50)", KindKg}, {"weighed kg", KindKg},
		{"weighed", KindText}, {"moisture wt%", KindPct}, {"dry black mass kg", KindKg}}
	for _, el := range value.PayableMetals() {
		cols = append(cols, Column{el + " kg", KindKg})
	}
	cols = append(cols, Column{"measured (assay × dry mass)", KindText}, Column{"assays", KindInt}, Column{"currency", KindText},
		Column{"payable value", KindMoney}, Column{"payable value basis", KindText}, Column{"estimate payable value (P50)", KindMoney},
		Column{"reagent cost (P50)", KindMoney}, Column{"chemistries", KindText})
	rows := make([][]any, 0, len(lots))
	for _, l := range lots {
		ev := l.Evidence
		row := []any{l.ID, l.Version, l.Received, l.Supplier, l.Items, l.NameplateKWh, l.Basis, l.BlackMassKg, nonZero(l.WeighedKg)}
		if dm := ev.DryMass; dm != nil {
			row = append(row, dm.State, dm.MoistureWtPct, dm.Kg)
		} else {
			row = append(row, nil, nil, nil)
		}
		var measured []string
		for _, el := range value.PayableMetals() {
			e := ev.Element(el)
			row = append(row, e.Kg)
			if e.Basis == register.BasisMeasured {
				measured = append(measured, el)
			}
		}
		row = append(row, strings.Join(measured, ", "), l.Assays, l.Currency, ptrVal(ev.Payable), ev.PayableBasis, ptrVal(l.Payable),
			ptrVal(l.ReagentCost), strings.Join(l.Chemistries, "; "))
		rows = append(rows, row)
	}
	return cols, rows
}

// MetalsTable is the workbook's sheet of metals: per lot and payable metal (and any other
// element assayed), the kg on its basis, the measurement with its sd and range, the estimate's
// P10/P50/P90, their ratio, and in wt% the assays combined beside the estimate.
func MetalsTable(lots []register.Summary) ([]Column, [][]any) {
	cols := []Column{{"lot", KindText}, {"element", KindText}, {"basis", KindText}, {"kg", KindKg}, {"measured kg", KindKg},
		{"measured sd kg", KindKg}, {"measured min kg", KindKg}, {"measured max kg", KindKg}, {"estimate kg P10", KindKg},
		{"estimate kg P50", KindKg}, {"estimate kg P90", KindKg}, {"measured / estimate", KindRatio}, {"assay wt%", KindPct},
		{"assay sd wt%", KindPct}, {"below limit", KindText}, {"assays", KindInt}, {"assays disagree", KindText},
		{"estimate wt% P50", KindPct}, {"payable value", KindMoney}}
	var rows [][]any
	for _, l := range lots {
		for _, e := range l.Evidence.PayableFirst(value.PayableMetals()) {
			row := []any{l.ID, e.Element, e.Basis, e.Kg}
			if m := e.Measured; m != nil {
				row = append(row, m.Kg, m.SigmaKg, m.MinKg, m.MaxKg)
			} else {
				row = append(row, nil, nil, nil, nil)
			}
			row = append(row, e.EstimateKgP10, e.EstimateKgP50, e.EstimateKgP90, ptrVal(e.Ratio))
			if c := e.Assay; c != nil {
				below, disagree := "", ""
				if c.Censored {
					below = fmt.Sprintf("< %g wt%%", c.LimitWtPct)
				}
				if c.Disagree {
					disagree = fmt.Sprintf("yes (chi-square %.1f on %d)", c.ChiSquare, c.DoF)
				}
				row = append(row, c.WtPct, c.SigmaWtPct, below, c.Assays, disagree)
			} else {
				row = append(row, nil, nil, nil, 0, nil)
			}
			rows = append(rows, append(row, e.EstimateWtPctP50, ptrVal(e.PayableValue)))
		}
	}
	return cols, rows
}

// WriteRegister writes the register's export as a workbook of two sheets, the lots and their
// metals, each laid out for work and print: the header row frozen and repeated on every printed
// page, columns as wide as their text, every number in its format, dates as dates, A4 landscape
// fitted to one page wide with page numbers in the footer.
func WriteRegister(out io.Writer, lots []register.Summary) error {
	f := excelize.NewFile()
	defer f.Close()
	if err := f.SetSheetName("Sheet1", RegisterSheet); err != nil {
		return err
	}
	if _, err := f.NewSheet(RegisterMetalsSheet); err != nil {
		return err
	}
	var head [2]int // text columns, number columns
	var err error
	for i, align := range []string{"left", "right"} {
		head[i], err = f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: registerPt, Family: "Calibri"},
			Alignment: &excelize.Alignment{Vertical: "top", WrapText: true, Horizontal: align},
			Border:    []excelize.Border{{Type: "bottom", Color: "000000", Style: 1}}})
		if err != nil {
			return err
		}
	}
	styles := map[CellKind]int{}
	for k, code := range kindFormat {
		fmtCode := code
		if styles[k], err = f.NewStyle(&excelize.Style{CustomNumFmt: &fmtCode, Font: &excelize.Font{Size: registerPt, Family: "Calibri"},
			Alignment: &excelize.Alignment{Vertical: "top"}}); err != nil {
			return err
		}
	}
	for d := 1; d <= 6; d++ {
		fmtCode := fixedFmt(d)
		if styles[kgKind(d)], err = f.NewStyle(&excelize.Style{CustomNumFmt: &fmtCode, Font: &excelize.Font{Size: registerPt,
			Family: "Calibri"}, Alignment: &excelize.Alignment{Vertical: "top"}}); err != nil {
			return err
		}
	}
	text := &excelize.Style{Font: &excelize.Font{Size: registerPt, Family: "Calibri"},
		Alignment: &excelize.Alignment{Vertical: "top", WrapText: true, Horizontal: "left", Indent: 1}}
	if styles[KindText], err = f.NewStyle(text); err != nil {
		return err
	}
	for _, t := range []struct {
		sheet string
		table func([]register.Summary) ([]Column, [][]any, int)
	}{{RegisterSheet, lotsSheet}, {RegisterMetalsSheet, metalsSheet}} {
		cols, rows, n := t.table(lots)
		if err := registerPrint(f, t.sheet, n, len(rows)+1); err != nil { // before the stream writer takes the sheet
			return err
		}
		if err := streamTable(f, t.sheet, cols, rows, n, head, styles); err != nil {
			return err
		}
	}
	return f.Write(out)
}

// lotsSheet is LotsTable with its printed columns first, and how many print.
func lotsSheet(lots []register.Summary) ([]Column, [][]any, int) {
	cols, rows := LotsTable(lots)
	return printedFirst(cols, rows, lotsPrinted())
}

// metalsSheet is MetalsTable with its printed columns first, and how many print.
func metalsSheet(lots []register.Summary) ([]Column, [][]any, int) {
	cols, rows := MetalsTable(lots)
	return printedFirst(cols, rows, metalsPrinted)
}

// lotsPrinted are the lots sheet's columns that print, in their order: what a lot is, its black
// mass and payable metals on their best evidence, and its value. The rest follow them in the
// file, out of the print area.
func lotsPrinted() []string {
	heads := []string{"lot", "received", "supplier", "basis", "estimate black mass kg (P50)",
		"dry black mass kg"}
	for _, el := range value.PayableMetals() {
		heads = append(heads, el+" kg")
	}
	return append(heads, "currency", "payable value")
}

// metalsPrinted are the metals sheet's columns that print, in their order.
var metalsPrinted = []string{"lot", "element", "basis", "kg", "measured kg", "measured sd kg", "estimate kg P10",
	"estimate kg P50", "estimate kg P90", "measured / estimate", "assay wt%", "payable value"}

// printedFirst moves the columns headed printed to the front, in that order, the others after
// them in theirs, and says how many print.
func printedFirst(cols []Column, rows [][]any, printed []string) ([]Column, [][]any, int) {
	var order []int
	for _, h := range printed {
		if j := slices.IndexFunc(cols, func(c Column) bool { return c.Head == h }); j >= 0 {
			order = append(order, j)
		}
	}
	n := len(order)
	for j := range cols {
		if !slices.Contains(order, j) {
			order = append(order, j)
		}
	}
	outCols := make([]Column, len(cols))
	for i, j := range order {
		outCols[i] = cols[j]
	}
	outRows := make([][]any, len(rows))
	for k, r := range rows {
		outRows[k] = make([]any, len(r))
		for i, j := range order {
			outRows[k][i] = r[j]
		}
	}
	return outCols, outRows, n
}

// streamTable writes one sheet's header and rows through the stream writer, each column as wide
// as its widest cell or the longest word of its (wrapped) header; the text columns of the first
// printed are narrowed (wrapped) until those columns fit the page width at 100 %.
func streamTable(f *excelize.File, sheet string, cols []Column, rows [][]any, printed int, head [2]int,
	styles map[CellKind]int) error {
	sw, err := f.NewStreamWriter(sheet)
	if err != nil {
		return err
	}
	widths, least := make([]int, len(cols)), make([]int, len(cols))
	for j, c := range cols {
		w := 0
		for _, word := range strings.Fields(c.Head) {
			w = max(w, utf8.RuneCountInString(word))
		}
		least[j] = w + (w+4)/5                              // the header's longest word, bold: a fifth wider
		w = max(w, min(utf8.RuneCountInString(c.Head), 12)) // a short header stays on one line if it can
		w += (w + 4) / 5
		for _, r := range rows {
			t := shownText(r[j], c.Kind)
			w = max(w, utf8.RuneCountInString(t))
			if c.Kind == KindText {
				for _, word := range strings.Fields(t) {
					least[j] = max(least[j], utf8.RuneCountInString(word))
				}
			} else {
				least[j] = max(least[j], utf8.RuneCountInString(t)) // a number is never wrapped
			}
		}
		pad := 0
		if c.Kind == KindText {
			pad = 2 // the text is indented from the number to its left
		}
		widths[j] = min(max(unitsOf(w)+pad, 6), maxColumnWidth)
		least[j] = min(max(unitsOf(least[j])+pad, 6), widths[j])
	}
	fitWidths(widths[:printed], least[:printed], PrintableWidthPt(PaperA4, true))
	for j := range widths {
		if err := sw.SetColWidth(j+1, j+1, float64(widths[j])); err != nil {
			return err
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	hr := make([]any, len(cols))
	for j, c := range cols {
		st := head[0]
		if c.Kind != KindText {
			st = head[1] // over a column of numbers, right-aligned as they are
		}
		hr[j] = excelize.Cell{StyleID: st, Value: c.Head}
	}
	heads := make([]any, len(cols))
	for j, c := range cols {
		heads[j] = c.Head
	}
	if err := sw.SetRow("A1", hr, excelize.RowOpts{Height: rowHeight(heads, widths, true)}); err != nil {
		return err
	}
	for i, r := range rows {
		cells := make([]any, len(r))
		for j, v := range r {
			cells[j] = registerCell(v, cols[j].Kind, styles)
		}
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		if err := sw.SetRow(cell, cells, excelize.RowOpts{Height: rowHeight(r, widths, false)}); err != nil {
			return err
		}
	}
	return sw.Flush()
}

// unitsOf is the column width that holds n characters of the export's 10 pt type, with the
// cell's padding: 10 pt text holds about 1.2 characters per width unit (charsPerUnit), a
// margin left for bold and for wide letters.
func unitsOf(n int) int { return int(math.Ceil(float64(n)/1.1)) + 1 }

// maxColumnWidth is the widest a column of the register's export gets; longer text wraps.
const maxColumnWidth = 40

// fitWidths narrows the widest column that can be narrowed (down to least, its longest word),
// one unit at a time, until the columns print within pagePt.
func fitWidths(widths, least []int, pagePt float64) {
	for {
		total, widest := 0.0, -1
		for j, w := range widths {
			total += ColumnPt(float64(w))
			if w > least[j] && (widest < 0 || w > widths[widest]) {
				widest = j
			}
		}
		if total <= pagePt || widest < 0 {
			return
		}
		widths[widest]--
	}
}

// registerPt is the type size of the register's export, and lineHeight the height of one line
// of it in points.
const (
	registerPt = 10.0
	lineHeight = 13
)

// rowHeight is the height of a row whose text cells wrap at their columns' widths, word by word
// (bold text a fifth wider).
func rowHeight(cells []any, widths []int, bold bool) float64 {
	lines := 1
	for j, v := range cells {
		t, ok := v.(string)
		if !ok {
			continue
		}
		room := widths[j] - 1
		if bold {
			room = room * 5 / 6
		}
		n, col := 1, 0
		for _, word := range strings.Fields(t) {
			l := utf8.RuneCountInString(word)
			if col > 0 && col+1+l > room {
				n, col = n+1, 0
			}
			if col > 0 {
				col++
			}
			col += l
		}
		lines = max(lines, n)
	}
	return float64(lines*lineHeight + 2)
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
		return excelize.Cell{StyleID: styles[KindText], Value: x}
	}
	if x, ok := v.(float64); ok && k == KindKg && sigDecimals(x) > 0 {
		return excelize.Cell{StyleID: styles[kgKind(sigDecimals(x))], Value: v}
	}
	return excelize.Cell{StyleID: styles[k], Value: v}
}

// kgKind is the style's key of a mass shown to d decimals (three significant figures).
func kgKind(d int) CellKind { return CellKind(100 + d) }

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
func registerPrint(f *excelize.File, sheet string, printedCols, lastRow int) error {
	paper, orient, one, auto, fit := PaperA4, "landscape", 1, 0, true
	if err := f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Size: &paper, Orientation: &orient, FitToWidth: &one,
		FitToHeight: &auto}); err != nil {
		return err
	}
	if err := f.SetSheetProps(sheet, &excelize.SheetPropsOptions{FitToPage: &fit}); err != nil {
		return err
	}
	if err := f.SetHeaderFooter(sheet, &excelize.HeaderFooterOptions{
		OddHeader: "&Lblackmass lot register: " + escapeRegisterHF(sheet) + "&RPage &P of &N",
		OddFooter: "&L" + escapeRegisterHF("Each figure on its best evidence: see the basis columns; more columns in the file, right of the printed ones") + "&RPage &P of &N"}); err != nil {
		return err
	}
	side, top, band := MarginSideIn, MarginTopIn, MarginHeaderIn
	if err := f.SetPageMargins(sheet, &excelize.PageLayoutMarginsOptions{Left: &side, Right: &side, Top: &top, Bottom: &top,
		Header: &band, Footer: &band}); err != nil {
		return err
	}
	end, _ := excelize.ColumnNumberToName(max(printedCols, 1))
	if err := f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Area",
		RefersTo: fmt.Sprintf("'%s'!$A$1:$%s$%d", sheet, end, max(lastRow, 1)), Scope: sheet}); err != nil {
		return err
	}
	return f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: "'" + sheet + "'!$1:$1", Scope: sheet})
}

// escapeRegisterHF doubles the ampersands of text put in a header or footer.
func escapeRegisterHF(s string) string { return strings.ReplaceAll(s, "&", "&&") }
