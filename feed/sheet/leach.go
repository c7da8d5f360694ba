package sheet

import (
	"blackmass/feed/leach"
	"fmt"
	"maps"
	"math"
	"slices"
)

// leachWidths are the Leach sheet's columns: portrait, a little wider than the page, so that it
// prints fitted to the width at LeachScale and its tables and calculator take one page.
func leachWidths(paper int) []float64 {
	wd := []float64{36, 9.5, 9.5, 9.5, 9.5, 14, 11, 11}
	units := (PrintableWidthPt(paper, false)/LeachScale/0.75 - 5*float64(len(wd))) / 7
	for _, u := range wd[1:] {
		units -= u
	}
	wd[0] = math.Floor(units*4) / 4
	return wd
}

// LeachScale is the scale the Leach sheet prints at (fitted to the page width): 10 pt type
// prints at 8.7 pt.
const LeachScale = 0.87

// fmtSig3 shows a formula's result to three significant figures (from 0.1 up), the value not
// being known when the format is chosen.
const fmtSig3 = "[>=100]#,##0;[>=10]#,##0.0;#,##0.00"

func (w *writer) leach() error {
	r := w.r
	l := r.Leach
	p, err := w.newPage(Leach, false, leachWidths(w.paperSize())...)
	if err != nil {
		return err
	}
	s := Leach
	if l == nil {
		p.add("No leach plan in this report.")
		return nil
	}
	p.title("Leach plan: " + l.Route)
	p.blank()
	p.header("reagent", "P10 kg", "P50 kg", "P90 kg", "P50 L", "× stoichiometry (P50)", "price per kg (edit)", "cost at P50")
	first := p.row
	for _, g := range l.Reagents {
		row := p.add(g.Name, g.Kg.P10, g.Kg.P50, g.Kg.P90, g.Litres.P50, fixed(g.Ratio.P50, 2))
		// An unpriced reagent has a blank price and no cost, not a price of 0.
		if price := priceOf(l, g); price > 0 {
			w.set(s, 7, row, as(edit, money(price)))
		} else {
			w.set(s, 7, row, cellValue{fmt: fmtMoney, b: edit})
		}
		w.formula(s, fmt.Sprintf("H%d", row), fmt.Sprintf(`IF(ISNUMBER(G%d),C%d*G%d,"not priced")`, row, row, row))
		w.style(s, fmt.Sprintf("H%d", row), fmt.Sprintf("H%d", row), w.styleOf(plain, fmtMoney))
	}
	row := p.add(boldText("total reagent cost (P50)"))
	w.formula(s, fmt.Sprintf("H%d", row), fmt.Sprintf(`IF(COUNT(H%d:H%d)=0,"not priced",SUM(H%d:H%d))`, first, row-1, first, row-1))
	w.style(s, fmt.Sprintf("H%d", row), fmt.Sprintf("H%d", row), w.styleOf(bold, fmtMoney))
	p.add(as(wrapped, "Shaded cells are inputs: type a price per kg of the reagent as bought and its cost follows; a blank price is not priced, never free."))
	p.blank()
	names := slices.Sorted(maps.Keys(l.Gases))
	p.keepRows(len(names) + 1)
	p.header("gas", "P50 mol", "P50 m³", "P90 m³", "at")
	for _, name := range names {
		g := l.Gases[name]
		p.add(name, g.Mol.P50, g.M3STP.P50, g.M3STP.P90, as(indented, l.GasReference))
	}
	p.blank()
	var syms []string
	for _, sym := range r.ElementOrder {
		if _, ok := l.Liquor.Elements[sym]; ok {
			syms = append(syms, sym)
		}
	}
	p.keepRows(len(syms) + 4)
	p.header("liquor", "P10", "P50", "P90", "unit")
	p.add("volume", l.Liquor.VolumeL.P10, l.Liquor.VolumeL.P50, l.Liquor.VolumeL.P90, as(indented, "L"))
	p.add("make-up water", l.WaterL.P10, l.WaterL.P50, l.WaterL.P90, as(indented, "L"))
	p.add("free acid", l.FreeAcidMolPerL.P10, l.FreeAcidMolPerL.P50, l.FreeAcidMolPerL.P90, as(indented, "mol/L"))
	p.add(l.Liquor.Anion, l.Liquor.AnionMolPerL.P10, l.Liquor.AnionMolPerL.P50, l.Liquor.AnionMolPerL.P90, as(indented, "mol/L"))
	p.blank()
	p.keepRows(len(syms))
	p.header("element", "P10 g/L", "P50 g/L", "P90 g/L", "P50 mol/L", "extraction P50")
	for _, sym := range syms {
		c := l.Liquor.Elements[sym]
		var ext any
		if e, ok := l.Liquor.ExtractionReached[sym]; ok {
			ext = frac(e.P50)
		}
		p.add(sym, c.GPerL.P10, c.GPerL.P50, c.GPerL.P90, c.MolPerL.P50, ext)
	}
	p.blank()
	sats := slices.Sorted(maps.Keys(l.Saturation))
	p.keepRows(len(sats))
	p.header("salt", "saturation P50", "saturation P90", "least soluble at (°C)")
	for _, k := range sats {
		p.add(k, frac(l.Saturation[k].P50), frac(l.Saturation[k].P90), fixed(l.SaturationAtC[k], 0))
	}
	p.blank()
	p.keepRows(calculatorRows(l))
	p.row = w.recipeCalculator(p) + 1
	p.blank()
	return nil
}

// calculatorRows is about how many rows the dosing calculator takes.
func calculatorRows(l *leach.Report) int { return 10 + 6*min(len(l.Reagents)-1, 1) }

// recipeCalculator lays out the dosing as live formulas, in the mode the plan used: the
// planner's (excess over stoichiometry, free-acid target) or the bench recipe's (acid molarity,
// peroxide vol%). Edit the shaded cells and the quantities and the make-up water follow. Inputs
// are the report's P50 values: in recipe mode the result equals the Monte Carlo P50 above; in
// planner mode it is close to it (the P50 of a sum is not the sum of P50s). It returns the last
// row used.
func (w *writer) recipeCalculator(p *page) int {
	s, l := p.s, w.r.Leach
	st := l.Settings
	recipe := st.RecipeAcidMolPerL > 0
	title := "Dosing calculator, planner mode (edit the shaded cells; P50 inputs)"
	if recipe {
		title = "Dosing calculator, bench-recipe mode (edit the shaded cells; P50 inputs)"
	}
	p.header(title, "")
	a, b := fmt.Sprintf("A%d", p.row-1), fmt.Sprintf("B%d", p.row-1)
	_ = w.f.MergeCell(s, a, b)
	acid := l.Reagents[0]
	cells := map[string]string{}
	put := func(key, label string, v float64, editable bool) {
		c := kg(v)
		if editable {
			c.b = edit
		}
		row := p.add(label, c)
		cells[key] = fmt.Sprintf("$B$%d", row)
	}
	formula := func(key, label, expr string) {
		row := p.add(label)
		w.formula(s, fmt.Sprintf("B%d", row), expr)
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("B%d", row), w.styleOf(plain, fmtSig3))
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
	return p.row - 1
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
