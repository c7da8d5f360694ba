// Package sheet writes the intake workbook of a lot from a feed.Report. It formats and lays out;
// it computes nothing new except the live formulas a user is meant to edit (reagent prices, the
// weigh-in), whose inputs are the report's own numbers.
package sheet

import (
	"bytes"
	"fmt"
	"io"
	"maps"
	"slices"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"

	"blackmass/cathode"
	"blackmass/feed"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// Sheet names.
const (
	Summary     = "Lot summary"
	Lines       = feed.LinesSheetName
	Metals      = "Metals"
	Leach       = "Leach"
	Assumptions = "Assumptions"
	WeighIn     = "Weigh-in"
	AssaySheet  = "Assay"
)

type writer struct {
	paper                 int // PaperA4 or PaperLetter
	editText              int // an input cell for text (a date, a name)
	wrap                  int // wrapped text, top-aligned
	formulas              []formulaCell
	f                     *excelize.File
	hdr, num3, pct, title int
	edit                  int // cells a user is expected to change
	r                     *feed.Report
}

// Write builds the workbook and writes it to w.
func Write(w io.Writer, r *feed.Report) error { return WriteOn(w, r, PaperA4) }

// WriteOn is Write on the paper given (PaperA4 or PaperLetter).
func WriteOn(w io.Writer, r *feed.Report, paper int) error {
	f, formulas, err := build(r, paper)
	if err != nil {
		return err
	}
	defer f.Close()
	cached, err := cachedValues(f, formulas)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		return err
	}
	return normaliseZip(buf.Bytes(), w, cached)
}

// cachedValues computes every formula at the report's values, by worksheet part.
func cachedValues(f *excelize.File, formulas []formulaCell) (map[string]map[string]cachedValue, error) {
	parts := map[string]string{}
	for id, name := range f.GetSheetMap() {
		parts[name] = fmt.Sprintf("xl/worksheets/sheet%d.xml", id)
	}
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

// Build returns the workbook; the caller closes it.
func Build(r *feed.Report) (*excelize.File, error) {
	f, _, err := build(r, PaperA4)
	return f, err
}

func build(r *feed.Report, paper int) (*excelize.File, []formulaCell, error) {
	f := excelize.NewFile()
	wr := &writer{f: f, r: r, paper: paper}
	var err error
	must := func(id int, e error) int {
		if e != nil && err == nil {
			err = e
		}
		return id
	}
	wr.hdr = must(f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"D9E2D0"}},
		Border: []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}}, Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}))
	f3 := "0.000"
	wr.num3 = must(f.NewStyle(&excelize.Style{CustomNumFmt: &f3}))
	p2 := "0.00"
	wr.pct = must(f.NewStyle(&excelize.Style{CustomNumFmt: &p2}))
	wr.title = must(f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: 14}}))
	wr.wrap = must(f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}))
	wr.editText = must(f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFF2CC"}},
		Border: []excelize.Border{{Type: "bottom", Color: "BF9000", Style: 1}}}))
	wr.edit = must(f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFF2CC"}}, CustomNumFmt: &f3,
		Border: []excelize.Border{{Type: "left", Color: "BF9000", Style: 1}, {Type: "right", Color: "BF9000", Style: 1}, {Type: "top", Color: "BF9000", Style: 1}, {Type: "bottom", Color: "BF9000", Style: 1}}}))
	if err != nil {
		return nil, nil, err
	}
	// The summary is made active before the Lines sheet is streamed: setting it afterwards would
	// make the xlsx library parse the streamed sheet back into memory.
	steps := []func() error{wr.summary, func() error { f.SetActiveSheet(0); return nil }, wr.lines, wr.metals, wr.leach, wr.order, wr.value, wr.assay, wr.assumptions, wr.weighIn}
	for _, s := range steps {
		if err := s(); err != nil {
			f.Close()
			return nil, nil, err
		}
	}
	lot := r.Inputs.LotID
	if lot == "" {
		lot = r.Inputs.File
	}
	_ = f.SetDocProps(&excelize.DocProperties{Title: "Intake sheet " + lot, Creator: "blackmass " + r.Inputs.Version,
		Created: "2000-01-01T00:00:00Z", Modified: "2000-01-01T00:00:00Z"})
	return f, wr.formulas, nil
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

func (w *writer) summary() error {
	f, r := w.f, w.r
	if err := f.SetSheetName("Sheet1", Summary); err != nil {
		return err
	}
	s := Summary
	in := r.Inputs
	_ = f.SetCellValue(s, "A1", "Black-mass intake sheet")
	w.style(s, "A1", "A1", w.title)
	rows := [][]any{
		{"Lot id", in.LotID}, {"Supplier", in.Supplier}, {"Received (date)", ""}, {"Operator", ""},
		{"Input file", in.File}, {"Input SHA-256", in.SHA256},
	}
	if r.Lot.Lines > 0 {
		rows = append(rows, []any{"Lines / items / cells", fmt.Sprintf("%d / %d / %d", r.Lot.Lines, r.Lot.Items, r.Lot.Cells)},
			[]any{"Nameplate energy (kWh)", r.Lot.NameplateKWh})
	} else {
		rows = append(rows, []any{"Black mass", "weighed; composition from a lab assay"})
	}
	for i, v := range rows {
		if err := w.row(s, 3+i, v...); err != nil {
			return err
		}
	}
	w.style(s, "B5", "B6", w.editText) // received and operator: filled in at the bench
	row := 3 + len(rows) + 1
	if err := w.header(s, row, "Quantity", "P10", "P50", "P90", "Mean"); err != nil {
		return err
	}
	row++
	add := func(name string, st dist.Stat) error {
		err := w.row(s, row, name, st.P10, st.P50, st.P90, st.Mean)
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("E%d", row), w.num3)
		row++
		return err
	}
	if err := add("Black mass (kg)", r.BlackMassKg); err != nil {
		return err
	}
	for _, sym := range r.ElementOrder {
		if err := add(sym+" (kg)", r.Elements[sym].Kg); err != nil {
			return err
		}
	}
	if l := r.Leach; l != nil {
		row++
		_ = f.SetCellValue(s, fmt.Sprintf("A%d", row), "Leach quote ("+l.Route+")")
		w.style(s, fmt.Sprintf("A%d", row), fmt.Sprintf("A%d", row), w.hdr)
		row++
		for _, g := range l.Reagents {
			if err := add(g.Name+" (kg)", g.Kg); err != nil {
				return err
			}
			if err := add(g.Name+" (L)", g.Litres); err != nil {
				return err
			}
		}
	}
	row++
	for _, title := range []string{"Warnings", "Safety"} {
		_ = f.SetCellValue(s, fmt.Sprintf("A%d", row), title)
		w.style(s, fmt.Sprintf("A%d", row), fmt.Sprintf("A%d", row), w.hdr)
		row++
		list := r.Warnings
		if title == "Safety" {
			list = r.Safety
			if r.Leach != nil {
				list = append(append([]string{}, r.Leach.Safety...), r.Safety...)
			}
		} else if r.Leach != nil {
			list = append(append([]string{}, list...), r.Leach.Warnings...)
		}
		for _, t := range list {
			w.paragraph(s, row, "E", t, summaryLineChars)
			row++
		}
		row++
	}
	_ = f.SetColWidth(s, "A", "A", 34)
	_ = f.SetColWidth(s, "B", "E", 14)
	w.printSetup(s, false)
	return nil
}

// summaryLineChars is about how many characters a line of the summary's merged A:E cells holds
// at 10 pt (34 + 4 × 14 column widths).
const summaryLineChars = 95

// paragraph writes a long text across columns A..last of a row, wrapped, the row tall enough for
// its lines, so that it prints at full size instead of shrinking the page to fit.
func (w *writer) paragraph(sheet string, row int, last, text string, lineChars int) {
	a, b := fmt.Sprintf("A%d", row), fmt.Sprintf("%s%d", last, row)
	_ = w.f.SetCellStr(sheet, a, text)
	_ = w.f.MergeCell(sheet, a, b)
	_ = w.f.SetCellStyle(sheet, a, b, w.wrap)
	lines := (len([]rune(text)) + lineChars - 1) / lineChars
	_ = w.f.SetRowHeight(sheet, row, float64(max(lines, 1))*13.5)
}

// Paper sizes of the print setup (ECMA-376 Part 1, §18.3.1.63 pageSetup paperSize).
const (
	PaperA4     = 9
	PaperLetter = 1
)

// printSetup sets a sheet's page: the paper, portrait or landscape, fitted to one page width,
// the lot id and page number in the header and the planning caution in the footer.
func (w *writer) printSetup(sheet string, landscape bool) {
	w.pageSetup(sheet, landscape, true)
}

// pageSetup is printSetup with the choice of fitting the width: a wide sheet (the lines) prints
// at 100 % across pages instead, its header row and id column repeated on every page.
func (w *writer) pageSetup(sheet string, landscape, fitWidth bool) {
	fit := fitWidth
	one, auto := 1, 0
	orient := "portrait"
	if landscape {
		orient = "landscape"
	}
	paper := w.paper
	if paper == 0 {
		paper = PaperA4
	}
	_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Size: &paper})
	lot := w.r.Inputs.LotID
	if lot == "" {
		lot = w.r.Inputs.File
	}
	if fitWidth {
		_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Orientation: &orient, FitToWidth: &one, FitToHeight: &auto})
	} else {
		_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Orientation: &orient})
	}
	_ = w.f.SetSheetProps(sheet, &excelize.SheetPropsOptions{FitToPage: &fit})
	_ = w.f.SetHeaderFooter(sheet, &excelize.HeaderFooterOptions{
		OddHeader: "&L" + escapeHF("Lot "+shorten(lot, maxHeaderLot)) + "&C" + escapeHF(sheet) + "&RPage &P of &N",
		OddFooter: "&L" + escapeHF("blackmass "+w.r.Inputs.Version+": planning estimate; follow local codes and licensed practice")})
}

// maxHeaderLot bounds the lot id in the print header: a header or footer is limited to 255
// characters (ECMA-376 Part 1, §18.3.1.39 oddHeader) and the caution in the footer must fit.
const maxHeaderLot = 60

// shorten cuts s to at most n runes, marking the cut with an ellipsis.
func shorten(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

func escapeHF(s string) string {
	out := ""
	for _, r := range s {
		if r == '&' {
			out += "&&"
		} else {
			out += string(r)
		}
	}
	return out
}

// MaxLines is the most manifest lines the Lines sheet holds: a sheet's 1,048,576 rows (ECMA-376
// Part 1, §18.3.1.73) less the header.
const MaxLines = 1_048_575

func (w *writer) lines() error {
	f, r := w.f, w.r
	if len(r.Lines) > MaxLines {
		return fmt.Errorf("%d lines do not fit a sheet (at most %d)", len(r.Lines), MaxLines)
	}
	if _, err := f.NewSheet(Lines); err != nil {
		return err
	}
	w.pageSetup(Lines, true, false) // page setup goes in before the stream writer takes the sheet
	_ = f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: "'" + Lines + "'!$A:$A,'" + Lines + "'!$1:$1", Scope: Lines})
	sw, err := f.NewStreamWriter(Lines)
	if err != nil {
		return err
	}
	widths := []float64{12, 28, 16, 11, 11, 9, 9, 9, 8, 10, 28, 12, 6, 18, 12, 12, 10, 12, 12, 50}
	for i, wd := range widths {
		_ = sw.SetColWidth(i+1, i+1, wd)
	}
	_ = sw.SetColStyle(15, 19, w.num3)
	_ = sw.SetPanes(&excelize.Panes{Freeze: true, XSplit: 1, YSplit: 1, TopLeftCell: "B2", ActivePane: "bottomRight"})
	// The first columns are the manifest's own, headed so the sheet reads back as a manifest;
	// the rest are computed (feed.DerivedLineColumns) and are read past.
	head := []any{"id", "description", "chemistry", "format", "capacity", "capacity basis", "voltage (V)", "cells per pack", "count", "mass (kg)", "notes", "application"}
	for _, h := range feed.DerivedLineColumns {
		head = append(head, h)
	}
	if err := sw.SetRow("A1", head, excelize.RowOpts{StyleID: w.hdr, Height: 45}); err != nil {
		return err
	}
	for i, l := range r.Lines {
		flags := strings.Join(l.Flags, "; ")
		row := []any{text(l.ID), text(l.Description), text(l.ChemistryLabel), l.Format, l.CapacityGiven, l.CapacityBasis, opt(l.VoltageV),
			optInt(l.CellsPerItem), l.Count, opt(l.MeasuredMassKg), text(l.Notes), l.Application,
			l.Line, l.Chemistry, l.EnergyWhPerItem, l.ModelMassKgEach, opt(l.MeasuredWhPerKg), l.CathodeKg, l.BlackMassKg, flags}
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		if err := sw.SetRow(cell, row); err != nil {
			return err
		}
	}
	// A totals row from the report, in the computed columns only, so that the sheet read back
	// as a manifest passes over it (a row with nothing in the manifest's own columns).
	if len(r.Lines) > 0 {
		cell, _ := excelize.CoordinatesToCellName(13, len(r.Lines)+2)
		total := []any{"lot", fmt.Sprintf("%d items", r.Lot.Items), r.Lot.NameplateKWh * 1000, nil, nil, nil, r.BlackMassKg.P50,
			fmt.Sprintf("black mass P50 of the lot (P10 %.3f, P90 %.3f kg); lines above are most likely values", r.BlackMassKg.P10, r.BlackMassKg.P90)}
		if err := sw.SetRow(cell, total, excelize.RowOpts{StyleID: w.hdr}); err != nil {
			return err
		}
	}
	if len(r.Lines) > 0 {
		_ = f.AutoFilter(Lines, fmt.Sprintf("A1:T%d", len(r.Lines)+1), nil)
	}
	return sw.Flush()
}

func (w *writer) metals() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(Metals); err != nil {
		return err
	}
	s := Metals
	if err := w.header(s, 1, "element", "P10 kg", "P50 kg", "P90 kg", "mean kg", "P10 wt%", "P50 wt%", "P90 wt%"); err != nil {
		return err
	}
	for i, sym := range r.ElementOrder {
		a := r.Elements[sym]
		if err := w.row(s, i+2, sym, a.Kg.P10, a.Kg.P50, a.Kg.P90, a.Kg.Mean, a.WtPct.P10, a.WtPct.P50, a.WtPct.P90); err != nil {
			return err
		}
	}
	last := len(r.ElementOrder) + 1
	metals := 1 // the chart shows the leading metals of the display order
	for _, sym := range r.ElementOrder {
		if !cathode.IsMetal(sym) {
			break
		}
		metals++
	}
	w.style(s, "B2", fmt.Sprintf("E%d", last), w.num3)
	w.style(s, "F2", fmt.Sprintf("H%d", last), w.pct)
	_ = f.SetColWidth(s, "A", "H", 12)
	w.printSetup(s, true)
	return w.rangeChart(s, fmt.Sprintf("A%d", last+3), "Metals in the black mass: P50 with P10–P90 (kg)", 2, max(metals, 2), "B", "C", "D")
}

// rangeChart draws a column's P50 as points with a line from P10 to P90 in each category (a
// high-low chart: the xlsx library has no error bars), labels dark enough to print. first and
// last are the data rows; the columns hold P10, P50 and P90, the categories are in A.
func (w *writer) rangeChart(s, at, title string, first, last int, p10, p50, p90 string) error {
	ref := func(col string) string { return fmt.Sprintf("'%s'!$%s$%d:$%s$%d", s, col, first, col, last) }
	cats := ref("A")
	dark := excelize.Font{Color: "000000", Size: 10}
	marker := func(symbol string, size int) excelize.ChartMarker {
		return excelize.ChartMarker{Symbol: symbol, Size: size, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"1F3864"}}}
	}
	none := excelize.LineOptions{Type: excelize.LineNone}
	return w.f.AddChart(s, at, &excelize.Chart{Type: excelize.Line,
		Series: []excelize.ChartSeries{
			{Name: "P10", Categories: cats, Values: ref(p10), Line: none, Marker: marker("dash", 7)},
			{Name: "P50", Categories: cats, Values: ref(p50), Line: none, Marker: marker("circle", 6)},
			{Name: "P90", Categories: cats, Values: ref(p90), Line: none, Marker: marker("dash", 7)},
		},
		Title:     excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: title, Font: &excelize.Font{Color: "000000", Size: 12, Bold: true}}}},
		Legend:    excelize.ChartLegend{Position: "none"},
		XAxis:     excelize.ChartAxis{HighLowLines: true, Font: dark},
		YAxis:     excelize.ChartAxis{MajorGridLines: true, Font: dark},
		Dimension: excelize.ChartDimension{Width: 600, Height: 230}})
}

func (w *writer) leach() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(Leach); err != nil {
		return err
	}
	s := Leach
	l := r.Leach
	if l == nil {
		return f.SetCellValue(s, "A1", "No leach plan in this report.")
	}
	_ = f.SetCellValue(s, "A1", "Leach plan: "+l.Route)
	w.style(s, "A1", "A1", w.title)
	if err := w.header(s, 3, "reagent", "P10 kg", "P50 kg", "P90 kg", "P50 litres", "× stoichiometry (P50)", "price per kg (edit)", "cost at P50"); err != nil {
		return err
	}
	row := 4
	for _, g := range l.Reagents {
		if err := w.row(s, row, g.Name, g.Kg.P10, g.Kg.P50, g.Kg.P90, g.Litres.P50, g.Ratio.P50, priceOf(l, g)); err != nil {
			return err
		}
		w.formula(s, fmt.Sprintf("H%d", row), fmt.Sprintf("C%d*G%d", row, row))
		row++
	}
	_ = f.SetCellValue(s, fmt.Sprintf("A%d", row), "total reagent cost (P50)")
	w.formula(s, fmt.Sprintf("H%d", row), fmt.Sprintf("SUM(H4:H%d)", row-1))
	w.style(s, "B4", fmt.Sprintf("H%d", row), w.num3)
	w.style(s, "G4", fmt.Sprintf("G%d", row-1), w.edit)
	row = w.recipeCalculator(s, row+2)
	row += 2
	if err := w.header(s, row, "gas", "P50 mol", "P50 m³ (0 °C, 1 atm)", "P90 m³ (0 °C, 1 atm)"); err != nil {
		return err
	}
	row++
	gasFirst := row
	for _, name := range slices.Sorted(maps.Keys(l.Gases)) {
		g := l.Gases[name]
		_ = w.row(s, row, name, g.Mol.P50, g.M3STP.P50, g.M3STP.P90)
		row++
	}
	row++
	_ = w.row(s, row, "liquor volume P50 (L)", l.Liquor.VolumeL.P50)
	_ = w.row(s, row+1, "free acid P50 (mol/L)", l.FreeAcidMolPerL.P50)
	w.style(s, fmt.Sprintf("B%d", gasFirst), fmt.Sprintf("D%d", row+1), w.num3)
	row += 3
	if err := w.header(s, row, "element", "P10 g/L", "P50 g/L", "P90 g/L", "P50 mol/L"); err != nil {
		return err
	}
	first := row + 1
	for _, sym := range r.ElementOrder {
		c, ok := l.Liquor.Elements[sym]
		if !ok {
			continue
		}
		row++
		_ = w.row(s, row, sym, c.GPerL.P10, c.GPerL.P50, c.GPerL.P90, c.MolPerL.P50)
	}
	w.style(s, fmt.Sprintf("B%d", first), fmt.Sprintf("E%d", row), w.num3)
	liquorFirst, liquorLast := first, row
	row += 2
	if err := w.header(s, row, "salt", "saturation ratio P50", "P90"); err != nil {
		return err
	}
	satFirst := row + 1
	for _, k := range slices.Sorted(maps.Keys(l.Saturation)) {
		row++
		_ = w.row(s, row, k, l.Saturation[k].P50, l.Saturation[k].P90)
	}
	w.style(s, fmt.Sprintf("B%d", satFirst), fmt.Sprintf("C%d", row), w.num3)
	_ = f.SetColWidth(s, "A", "A", 26)
	_ = f.SetColWidth(s, "B", "H", 15)
	w.printSetup(s, true)
	return w.rangeChart(s, fmt.Sprintf("A%d", row+3), "Leach liquor: P50 with P10–P90 (g/L)", liquorFirst, liquorLast, "B", "C", "D")
}

// recipeCalculator lays out the dosing as live formulas, in the mode the plan used: the
// planner's (excess over stoichiometry, free-acid target) or the bench recipe's (acid molarity,
// peroxide vol%). Edit the shaded cells and the quantities and the make-up water follow. Inputs
// are the report's P50 values: in recipe mode the result equals the Monte Carlo P50 above; in
// planner mode it is close to it (the P50 of a sum is not the sum of P50s). It returns the last
// row used.
func (w *writer) recipeCalculator(s string, row int) int {
	f, l := w.f, w.r.Leach
	st := l.Settings
	recipe := st.RecipeAcidMolPerL > 0
	title := "Dosing calculator, planner mode (edit the shaded cells; P50 inputs)"
	if recipe {
		title = "Dosing calculator, bench-recipe mode (edit the shaded cells; P50 inputs)"
	}
	_ = f.SetCellValue(s, fmt.Sprintf("A%d", row), title)
	_ = f.MergeCell(s, fmt.Sprintf("A%d", row), fmt.Sprintf("D%d", row))
	w.style(s, fmt.Sprintf("A%d", row), fmt.Sprintf("D%d", row), w.hdr)
	acid := l.Reagents[0]
	cells := map[string]string{}
	put := func(key, label string, v any, editable bool) {
		row++
		_ = w.row(s, row, label, v)
		cells[key] = fmt.Sprintf("$B$%d", row)
		style := w.num3
		if editable {
			style = w.edit
		}
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("B%d", row), style)
	}
	formula := func(key, label, expr string) {
		row++
		_ = w.row(s, row, label)
		w.formula(s, fmt.Sprintf("B%d", row), expr)
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("B%d", row), w.num3)
		cells[key] = fmt.Sprintf("$B$%d", row)
	}
	put("vol", "liquor volume (L)", l.Liquor.VolumeL.P50, true)
	put("wt", "acid strength (wt%)", acid.StrengthWt, true)
	put("rho", "acid density at that strength (g/mL)", acid.DensityGmL, true)
	put("M", "acid molar mass (g/mol)", acid.MolarMass, false)
	if recipe {
		put("molar", "acid in the lixiviant (mol/L)", st.RecipeAcidMolPerL, true)
		formula("akg", "acid to buy (kg)", fmt.Sprintf("%s*%s*%s/1000/(%s/100)", cells["molar"], cells["vol"], cells["M"], cells["wt"]))
	} else {
		put("ex", "acid excess (× stoichiometry)", st.AcidExcess, true)
		put("free", "free acid target (mol/L)", st.FreeAcidMolPerL, true)
		put("stoich", "stoichiometric acid (kg, 100 %)", acid.StoichKg.P50, false)
		formula("akg", "acid to buy (kg)", fmt.Sprintf("(%s*%s+%s*%s*%s/1000)/(%s/100)", cells["stoich"], cells["ex"], cells["free"], cells["vol"], cells["M"], cells["wt"]))
	}
	formula("al", "acid to buy (L)", fmt.Sprintf("%s/%s", cells["akg"], cells["rho"]))
	water := fmt.Sprintf("%s-%s", cells["vol"], cells["al"])
	if len(l.Reagents) > 1 {
		h := l.Reagents[1]
		name := st.Reductant
		if h.DensityGmL > 0 {
			put("hwt", name+" strength (wt%)", h.StrengthWt, true)
			put("hrho", name+" density at that strength (g/mL)", h.DensityGmL, true)
		}
		switch {
		case st.RecipeH2O2VolPct > 0:
			put("hvol", name+" in the lixiviant (vol% of the commercial solution)", st.RecipeH2O2VolPct, true)
			formula("hkg", name+" to buy (kg)", fmt.Sprintf("%s/100*%s*%s", cells["hvol"], cells["vol"], cells["hrho"]))
		case st.RecipeReductantGPerL > 0:
			put("hgl", name+" in the lixiviant (g/L)", st.RecipeReductantGPerL, true)
			formula("hkg", name+" to buy (kg)", fmt.Sprintf("%s*%s/1000", cells["hgl"], cells["vol"]))
		default:
			put("hex", name+" excess (× stoichiometry)", st.ReductantExcess, true)
			put("hst", "stoichiometric "+name+" (kg, 100 %)", h.StoichKg.P50, false)
			if h.DensityGmL > 0 {
				formula("hkg", name+" to buy (kg)", fmt.Sprintf("%s*%s/(%s/100)", cells["hst"], cells["hex"], cells["hwt"]))
			} else {
				formula("hkg", name+" to buy (kg)", fmt.Sprintf("%s*%s", cells["hst"], cells["hex"]))
			}
		}
		if h.DensityGmL > 0 {
			formula("hl", name+" to buy (L)", fmt.Sprintf("%s/%s", cells["hkg"], cells["hrho"]))
			water += "-" + cells["hl"]
		}
	}
	formula("water", "make-up water (L)", water)
	return row
}

func priceOf(l *leach.Report, g leach.Reagent) float64 {
	if g.Name == l.Reagents[0].Name {
		return l.Settings.AcidPricePerKg
	}
	return l.Settings.H2O2PricePerKg
}

func (w *writer) assumptions() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(Assumptions); err != nil {
		return err
	}
	s := Assumptions
	in := r.Inputs
	info := [][]any{{"program version", in.Version}, {"manifest file", in.File}, {"manifest SHA-256", in.SHA256},
		{"seed", int64(in.Seed)}, {"samples", in.Samples}, {"unknown labels as prior", in.UnknownAsPrior}}
	if l := r.Leach; l != nil {
		st := l.Settings
		info = append(info, []any{"leach route", l.Route}, []any{"acid strength (wt%)", st.AcidWtPct}, []any{"H2O2 strength (wt%)", st.H2O2WtPct},
			[]any{"acid excess (× stoichiometry)", st.AcidExcess}, []any{"free acid target (mol/L)", st.FreeAcidMolPerL},
			[]any{"H2O2 excess (× stoichiometry)", st.ReductantExcess}, []any{"pulp density (g/L)", st.PulpDensityGPerL},
			[]any{"gas volumes", l.GasReference})
	}
	for i, v := range info {
		if err := w.row(s, i+1, v...); err != nil {
			return err
		}
	}
	row := len(info) + 2
	if err := w.header(s, row, "what", "applies to", "min", "most likely", "max", "unit", "source", "key"); err != nil {
		return err
	}
	first := row + 1
	params := append(slices.Clone(r.Parameters), func() []dist.Param {
		if r.Leach != nil {
			return r.Leach.Extraction
		}
		return nil
	}()...)
	// Sources repeated row after row ("from memory") are said once, in a note below the table.
	memory := 0
	for _, p := range params {
		row++
		src := p.Source
		if src == "from memory" {
			src, memory = "from memory ¹", memory+1
		}
		if err := w.row(s, row, plainWords(p.Name), p.Scope, p.Min, p.Mode, p.Max, p.Unit, src, p.Name); err != nil {
			return err
		}
		// Wrapped sources need their rows tall enough: viewers do not grow rows on opening.
		if lines := (len([]rune(src)) + sourceLineChars - 1) / sourceLineChars; lines > 1 {
			_ = f.SetRowHeight(s, row, float64(lines)*12.75)
		}
	}
	w.style(s, fmt.Sprintf("G%d", first), fmt.Sprintf("G%d", row), w.wrap)
	w.style(s, fmt.Sprintf("C%d", first), fmt.Sprintf("E%d", row), w.num3)
	if memory > 0 {
		row += 2
		_ = w.row(s, row, fmt.Sprintf("¹ %d values rest on the developers' recollection of the literature, not on a source checked line by line: replace them with your own teardown and assay data where they matter.", memory))
	}
	if l := r.Leach; l != nil {
		row++
		for _, a := range l.Assumptions {
			row++
			w.paragraph(s, row, "H", "Leach model: "+a, 150)
		}
	}
	_ = f.SetColWidth(s, "A", "A", 34)
	_ = f.SetColWidth(s, "B", "B", 20)
	_ = f.SetColWidth(s, "C", "E", 10)
	_ = f.SetColWidth(s, "F", "F", 12)
	_ = f.SetColWidth(s, "G", "G", 60)
	_ = f.SetColWidth(s, "H", "H", 18)
	w.printSetup(s, true)
	return nil
}

// weighIn is where the bench records container weights; live formulas compare the net weight
// with the estimate.
func (w *writer) weighIn() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(WeighIn); err != nil {
		return err
	}
	s := WeighIn
	_ = f.SetCellValue(s, "A1", "Weigh-in: record gross and tare per container after shredding and sieving")
	w.style(s, "A1", "A1", w.title)
	if err := w.header(s, 3, "container", "gross (kg)", "tare (kg)", "net (kg)"); err != nil {
		return err
	}
	const first, last = 4, 23
	for i := first; i <= last; i++ {
		// Blank until both weights are in: an empty row is not a weighing of 0 kg.
		w.formula(s, fmt.Sprintf("D%d", i), fmt.Sprintf(`IF(AND(ISNUMBER(B%d),ISNUMBER(C%d)),B%d-C%d,"")`, i, i, i, i))
	}
	_ = w.row(s, last+2, "total net (kg)")
	w.formula(s, fmt.Sprintf("D%d", last+2), fmt.Sprintf(`IF(COUNT(D%d:D%d)=0,"",SUM(D%d:D%d))`, first, last, first, last))
	_ = w.row(s, last+3, "estimated black mass P10 / P50 / P90 (kg)", r.BlackMassKg.P10, r.BlackMassKg.P50, r.BlackMassKg.P90)
	_ = w.row(s, last+4, "difference net − P50 (kg)")
	w.formula(s, fmt.Sprintf("D%d", last+4), fmt.Sprintf(`IF(D%d="","",D%d-C%d)`, last+2, last+2, last+3))
	_ = w.row(s, last+5, "net within P10–P90?")
	w.formula(s, fmt.Sprintf("D%d", last+5), fmt.Sprintf(`IF(D%d="","not weighed",IF(AND(D%d>=B%d,D%d<=D%d),"yes","NO: check the lot"))`, last+2, last+2, last+3, last+2, last+3))
	for i, label := range []string{"weighed on (date)", "weighed by (name)", "signature"} {
		row := last + 7 + 2*i
		_ = w.row(s, row, label)
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("D%d", row), w.editText)
	}
	w.style(s, fmt.Sprintf("B%d", first), fmt.Sprintf("D%d", last+4), w.num3)
	w.style(s, fmt.Sprintf("A%d", first), fmt.Sprintf("C%d", last), w.edit) // the cells to fill in
	_ = f.SetColWidth(s, "A", "A", 40)
	_ = f.SetColWidth(s, "B", "D", 14)
	w.printSetup(s, false)
	return nil
}

// assay lays out the lab assay, its reconciliation with the estimate and the mix fit, when given.
func (w *writer) assay() error {
	f, r := w.f, w.r
	if r.Assay == nil {
		return nil
	}
	if _, err := f.NewSheet(AssaySheet); err != nil {
		return err
	}
	s := AssaySheet
	_ = f.SetCellValue(s, "A1", "Lab assay: "+r.Assay.File)
	w.style(s, "A1", "A1", w.title)
	row := 3
	if rc := r.Reconciliation; rc != nil {
		if err := w.header(s, row, "element", "estimate wt%", "estimate σ", "assay wt%", "assay σ", "difference (σ)", "reading"); err != nil {
			return err
		}
		for _, c := range rc.Comparisons {
			row++
			_ = w.row(s, row, c.Element, c.EstimateWtPct, c.EstimateSigma, c.AssayWtPct, c.AssaySigma, c.Z, c.Interpretation)
		}
	} else {
		if err := w.header(s, row, "element", "assay wt%", "σ wt%", "σ assumed"); err != nil {
			return err
		}
		for _, v := range r.Assay.Values {
			row++
			_ = w.row(s, row, v.Element, v.WtPct, v.SigmaWtPct, v.SigmaAssumed)
		}
	}
	w.style(s, "B4", fmt.Sprintf("F%d", row), w.num3)
	if m := r.Mix; m != nil {
		row += 2
		if err := w.header(s, row, "mix component", "best fit (kg/kg)", "P10", "P50", "P90", "95 % low", "95 % high", "cathode share P50"); err != nil {
			return err
		}
		first := row + 1
		for _, c := range m.Components {
			row++
			vals := []any{c.Name, c.Best, c.KgPerKg.P10, c.KgPerKg.P50, c.KgPerKg.P90, c.Interval95[0], c.Interval95[1]}
			if c.CathodeShare != nil {
				vals = append(vals, c.CathodeShare.P50)
			}
			_ = w.row(s, row, vals...)
		}
		w.style(s, fmt.Sprintf("B%d", first), fmt.Sprintf("H%d", row), w.num3)
		row += 2
		for _, n := range m.Notes {
			_ = f.SetCellValue(s, fmt.Sprintf("A%d", row), n)
			row++
		}
	}
	_ = f.SetColWidth(s, "A", "A", 16)
	_ = f.SetColWidth(s, "B", "H", 14)
	w.printSetup(s, true)
	return nil
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

// text is user text for a cell: as typed, and never read as a formula.
func text(s string) any { return excelize.Cell{Value: s} }

// sourceLineChars is about how many characters a line of the 60-wide source column holds.
const sourceLineChars = 66

// plainWords turns a parameter key ("carryover_al_foil") into words a bench reads.
func plainWords(key string) string {
	words := map[string]string{"np": "N/P", "al": "aluminium", "cu": "copper", "lipf6": "LiPF6", "pvdf": "PVDF", "cam": "cathode active material"}
	parts := strings.Split(key, "_")
	for i, p := range parts {
		if w, ok := words[p]; ok {
			parts[i] = w
		}
	}
	out := strings.Join(parts, " ")
	return strings.ToUpper(out[:1]) + out[1:]
}
