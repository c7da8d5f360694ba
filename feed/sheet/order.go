package sheet

import (
	"fmt"
	"strings"
)

// OrderSheetName is the name of the order sheet.
const OrderSheetName = "Order"

// order lays out the order sheet: each reagent for the lot (P50 and P90), per tonne of black
// mass, in the containers named, with its price or the lack of one.
func (w *writer) order() error {
	f, o := w.f, w.r.Order
	if o == nil || len(o.Lines) == 0 {
		return nil
	}
	if _, err := f.NewSheet(OrderSheetName); err != nil {
		return err
	}
	s := OrderSheetName
	cur := o.Currency
	if cur == "" {
		cur = "no currency given"
	}
	_ = f.SetCellValue(s, "A1", "Reagents to order: "+o.Basis)
	w.style(s, "A1", "A1", w.title)
	if err := w.header(s, 3, "reagent", "kg P50", "kg P90", "L P50", "L P90", "kg per t of black mass (P50)", "containers for the P90 amount", "price per kg", "cost P90 ("+cur+")"); err != nil {
		return err
	}
	row := 3
	for _, l := range o.Lines {
		row++
		var lp50, lp90, price, cost any
		if l.Litres != nil {
			lp50, lp90 = l.Litres.P50, l.Litres.P90
		}
		if l.PricePerKg > 0 {
			price = l.PricePerKg
		}
		if l.CostP90 != nil {
			cost = *l.CostP90
		} else {
			cost = "no price given"
		}
		var cs []string
		for _, c := range l.Containers {
			cs = append(cs, fmt.Sprintf("%d × %s", c.Count, c.Container))
		}
		_ = w.row(s, row, l.Reagent, l.Kg.P50, l.Kg.P90, lp50, lp90, l.KgPerTonneBM, strings.Join(cs, " or "), price, cost)
	}
	_ = f.SetColWidth(s, "A", "A", 30)
	_ = f.SetColWidth(s, "B", "E", 13)
	_ = f.SetColWidth(s, "F", "F", 17)
	_ = f.SetColWidth(s, "G", "G", 48)
	_ = f.SetColWidth(s, "H", "I", 14)
	w.style(s, "B4", fmt.Sprintf("F%d", row), w.num3)
	w.style(s, "G4", fmt.Sprintf("G%d", row), w.textAfterNumber)
	w.printSetup(s, true)
	return nil
}
