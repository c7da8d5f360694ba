package sheet

import (
	"blackmass/feed/value"
	"fmt"
)

// ValueSheet is the name of the value sheet.
const ValueSheet = "Value"

// value lays out the lot's value at the prices given (P10/P50/P90 from the same draws as the
// metals); without prices it says there is no value rather than showing zeros.
func (w *writer) value() error {
	f, r := w.f, w.r
	if r.Lot.Lines == 0 && r.Value == nil {
		return nil
	}
	if _, err := f.NewSheet(ValueSheet); err != nil {
		return err
	}
	s := ValueSheet
	v := r.Value
	if v == nil {
		_ = f.SetCellValue(s, "A1", "No prices were given, so the lot has no value here (run with --prices FILE).")
		w.printSetup(s, false)
		return nil
	}
	_ = f.SetCellValue(s, "A1", fmt.Sprintf("Value in %s, prices from %s", v.Currency, v.PricesFile))
	w.style(s, "A1", "A1", w.title)
	if err := w.header(s, 3, "item", "priced kg (P50)", "price per kg", "payable share", "contained value (P50)",
		"payable P10", "payable P50", "payable P90", "price source"); err != nil {
		return err
	}
	row := 3
	for _, e := range v.Elements {
		row++
		item := e.Element
		if e.Basis == value.BasisLCE {
			item += " as LCE"
		}
		_ = w.row(s, row, item, e.ProductKg.P50, e.PricePerKg, e.Payable, e.Contained.P50, e.PayableVal.P10, e.PayableVal.P50, e.PayableVal.P90, e.Source)
	}
	w.style(s, "B4", fmt.Sprintf("B%d", row), w.num3)
	w.style(s, "E4", fmt.Sprintf("H%d", row), w.money)
	w.style(s, "I4", fmt.Sprintf("I%d", row), w.textAfterNumber)
	row++
	_ = w.row(s, row, "lot", nil, nil, nil, v.Contained.P50, v.Payable.P10, v.Payable.P50, v.Payable.P90)
	w.style(s, fmt.Sprintf("A%d", row), fmt.Sprintf("H%d", row), w.moneyTotal)
	row += 2
	sums := row
	_ = w.row(s, row, "payable per tonne of black mass (P50)", v.PayablePerTonneBM.P50)
	if v.PayablePerKWh != nil {
		row++
		_ = w.row(s, row, "payable per kWh received (P50)", v.PayablePerKWh.P50)
	}
	if v.NetOfReagents != nil {
		row++
		_ = w.row(s, row, "reagent cost (P50)", v.ReagentCost.P50)
		row++
		_ = w.row(s, row, "payable net of reagents P10 / P50 / P90", v.NetOfReagents.P10, v.NetOfReagents.P50, v.NetOfReagents.P90)
	}
	w.style(s, fmt.Sprintf("B%d", sums), fmt.Sprintf("D%d", row), w.money)
	for _, n := range v.Notes {
		row++
		_ = w.row(s, row, n)
	}
	_ = f.SetColWidth(s, "A", "A", 40)
	_ = f.SetColWidth(s, "B", "H", 14)
	_ = f.SetColWidth(s, "I", "I", 30)
	w.printSetup(s, true)
	return nil
}
