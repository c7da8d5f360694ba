package sheet

import "strings"

// assayWidths are the Assay sheet's columns (A4 landscape at 100 %).
var assayWidths = []float64{20, 11, 11, 11, 11, 12, 12, 13, 30}

// assay lays out the lab assay, its reconciliation with the estimate and the mix fit, when given.
func (w *writer) assay() error {
	r := w.r
	if r.Assay == nil {
		return nil
	}
	p, err := w.newPage(AssaySheet, true, assayWidths...)
	if err != nil {
		return err
	}
	p.title("Lab assay: " + r.Assay.File)
	if rc := r.Reconciliation; rc != nil {
		p.header("element", "estimate wt%", "estimate σ (wt%)", "assay wt%", "assay σ (wt%)", "difference (σ)", "reading")
		for _, c := range rc.Comparisons {
			reading := c.Interpretation
			vals := []any{c.Element, fixed(c.EstimateWtPct, 2), fixed(c.EstimateSigma, 2), fixed(c.AssayWtPct, 2), fixed(c.AssaySigma, 2), fixed(c.Z, 1), as(indented, reading)}
			if strings.HasPrefix(c.AssayText, "<") { // below the detection limit: the limit, not its middle
				vals[3], vals[4] = strings.TrimSuffix(c.AssayText, " wt%"), "range"
			}
			if c.Flag {
				// A disagreement beyond the threshold is coloured, so it is seen on paper too.
				vals[6] = as(indented, "DISAGREES: "+reading)
				for i := range vals {
					vals[i] = as(alert, vals[i])
				}
			}
			p.add(vals...)
		}
	} else {
		p.header("element", "assay wt%", "σ (wt%)", "σ assumed")
		for _, v := range r.Assay.Values {
			if v.Censored {
				p.add(v.Element, strings.TrimSuffix(v.Text(), " wt%"), "range", as(indented, yesNo(v.SigmaAssumed)))
				continue
			}
			p.add(v.Element, fixed(v.WtPct, 2), fixed(v.SigmaWtPct, 2), as(indented, yesNo(v.SigmaAssumed)))
		}
	}
	if m := r.Mix; m != nil {
		p.blank()
		p.keepRows(len(m.Components))
		p.header("mix component", "best fit (kg/kg)", "P10 (kg/kg)", "P50 (kg/kg)", "P90 (kg/kg)", "95 % low (kg/kg)", "95 % high (kg/kg)",
			"cathode share P50")
		for _, c := range m.Components {
			vals := []any{c.Name, c.Best, c.KgPerKg.P10, c.KgPerKg.P50, c.KgPerKg.P90, c.Interval95[0], c.Interval95[1]}
			if c.CathodeShare != nil {
				vals = append(vals, frac(c.CathodeShare.P50))
			}
			p.add(vals...)
		}
		p.blank()
		for _, n := range m.Notes {
			p.paragraph(n, fine)
		}
	}
	return nil
}
