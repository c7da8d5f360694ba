package sheet

import (
	"blackmass/feed/dist"
	"fmt"
)

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
