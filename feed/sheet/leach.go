package sheet

import (
	"blackmass/feed/leach"
	"fmt"
	"maps"
	"slices"
)

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
	if err := w.header(s, row, "salt", "saturation ratio P50", "P90", "least soluble at °C"); err != nil {
		return err
	}
	satFirst := row + 1
	for _, k := range slices.Sorted(maps.Keys(l.Saturation)) {
		row++
		_ = w.row(s, row, k, l.Saturation[k].P50, l.Saturation[k].P90, l.SaturationAtC[k])
	}
	w.style(s, fmt.Sprintf("B%d", satFirst), fmt.Sprintf("C%d", row), w.num3)
	_ = f.SetColWidth(s, "A", "A", 36)
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
	if l.Prices == nil {
		return 0
	}
	if g.Name == l.Reagents[0].Name {
		return l.Prices.AcidPerKg
	}
	return l.Prices.ReductantPerKg
}
