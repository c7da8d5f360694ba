package sheet

import "fmt"

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
		var flagged []int
		for _, c := range rc.Comparisons {
			row++
			reading := c.Interpretation
			if c.Flag {
				reading = "DISAGREES: " + reading
				flagged = append(flagged, row)
			}
			_ = w.row(s, row, c.Element, c.EstimateWtPct, c.EstimateSigma, c.AssayWtPct, c.AssaySigma, c.Z, reading)
		}
		w.style(s, "B4", fmt.Sprintf("F%d", row), w.num3)
		for _, fr := range flagged {
			// A disagreement beyond the threshold is coloured, so it is seen on paper too.
			w.style(s, fmt.Sprintf("A%d", fr), fmt.Sprintf("G%d", fr), w.alert)
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
