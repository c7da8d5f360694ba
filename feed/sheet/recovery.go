package sheet

import (
	"fmt"
	"strings"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

// RecoverySheet is the recovery plan's sheet, present when the report holds one.
const RecoverySheet = "Recovery"

// recoveryStyles are the sheet's own cell styles.
type recoveryStyles struct {
	section, num, pct, money, text, note int
}

func (w *writer) recoveryStyles() (recoveryStyles, error) {
	var st recoveryStyles
	var err error
	mk := func(s *excelize.Style) int {
		id, e := w.f.NewStyle(s)
		if e != nil && err == nil {
			err = e
		}
		return id
	}
	n3, p1, m2 := "#,##0.000", "0.0", "#,##0.00"
	st.section = mk(&excelize.Style{Font: &excelize.Font{Bold: true}, Fill: excelize.Fill{Type: "pattern", Pattern: 1,
		Color: []string{"EEF2EA"}}, Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	st.num = mk(&excelize.Style{CustomNumFmt: &n3})
	st.pct = mk(&excelize.Style{CustomNumFmt: &p1})
	st.money = mk(&excelize.Style{CustomNumFmt: &m2})
	st.text = mk(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	st.note = mk(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"},
		Font: &excelize.Font{Size: 9}})
	return st, err
}

// recovery writes the Recovery sheet: each stage's reagents, solids, gases, electricity and
// figures (P10/P50/P90 with the unit), the products and their value, where each element goes
// with a chart, the water balance and the cautions. One page wide, its header row repeated.
func (w *writer) recovery() error {
	rec := w.r.Recovery
	if rec == nil {
		return nil
	}
	s := RecoverySheet
	if _, err := w.f.NewSheet(s); err != nil {
		return err
	}
	st, err := w.recoveryStyles()
	if err != nil {
		return err
	}
	_ = w.f.SetCellValue(s, "A1", "Recovery plan after the leach")
	w.style(s, "A1", "A1", w.title)
	_ = w.f.SetCellValue(s, "A2", "Flowsheet: "+strings.Join(rec.Flowsheet, " | "))
	_ = w.f.MergeCell(s, "A2", "F2")
	w.style(s, "A2", "A2", st.note)
	_ = w.f.SetRowHeight(s, 2, 42)
	if err := w.header(s, 3, "stage and item", "P10", "P50", "P90", "unit", "note"); err != nil {
		return err
	}
	rw := &recoveryRows{w: w, s: s, st: st, row: 4}
	for i, sr := range rec.Stages {
		rw.section(fmt.Sprintf("%d. %s: %s", i+1, sr.Kind, sr.Description))
		rw.stage(sr)
	}
	rw.products(rec)
	rw.section("Recovery reagents to order: all stages, as bought")
	for _, g := range rec.Reagents {
		note := ""
		if g.Litres != nil {
			note = fmt.Sprintf("%.4g L (P50), %.4g L (P90)", g.Litres.P50, g.Litres.P90)
		}
		rw.stat(fmt.Sprintf("%s %g %%", g.Name, g.WtPct), g.Commercial, "kg", note, st.num)
	}
	if c := rec.Cost; c != nil {
		for _, it := range c.Items {
			rw.stat("cost of "+it.Name, it.Kg, c.Currency, "", st.money)
		}
		note := ""
		if len(c.Unpriced) > 0 {
			note = "without " + strings.Join(c.Unpriced, ", ") + ": no price given"
		}
		rw.stat("recovery reagents' cost", c.Total, c.Currency, note, st.money)
		if c.Net != nil {
			rw.stat("products' value less the reagents' cost", *c.Net, c.Currency, "", st.money)
		}
	}
	rw.fates(rec)
	rw.section("Water balance (+ into the solution, − out of it)")
	for _, f := range rec.Water {
		rw.stat(f.Name, f.Kg, "kg", "", st.num)
	}
	rw.section("Warnings and cautions")
	for _, wn := range rec.Warnings {
		rw.text("warning: " + wn)
	}
	seen := map[string]bool{}
	for _, sr := range rec.Stages {
		for _, c := range sr.Cautions {
			if !seen[c] {
				seen[c] = true
				rw.text(c)
			}
		}
	}
	for _, c := range rec.Cautions {
		rw.text(c)
	}
	// The chart and its data start a page of their own, so that the chart is not cut.
	_ = w.f.InsertPageBreak(s, rw.cell("A"))
	rw.chartData(rec)
	_ = w.f.SetColWidth(s, "A", "A", 44)
	_ = w.f.SetColWidth(s, "B", "D", 11)
	_ = w.f.SetColWidth(s, "E", "E", 7)
	_ = w.f.SetColWidth(s, "F", "F", 30)
	_ = w.f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: "'" + s + "'!$3:$3", Scope: s})
	w.printSetup(s, false)
	return rw.chart(rec)
}

// recoveryRows writes the sheet's rows one after the other.
type recoveryRows struct {
	w        *writer
	s        string
	st       recoveryStyles
	row      int
	fateRows [2]int // the chart's data rows
}

func (r *recoveryRows) cell(col string) string { return fmt.Sprintf("%s%d", col, r.row) }

func (r *recoveryRows) section(title string) {
	r.row++
	_ = r.w.f.SetCellValue(r.s, r.cell("A"), title)
	_ = r.w.f.MergeCell(r.s, r.cell("A"), r.cell("F"))
	r.w.style(r.s, r.cell("A"), r.cell("F"), r.st.section)
	if n := len([]rune(title)); n > 90 {
		_ = r.w.f.SetRowHeight(r.s, r.row, float64(15*(1+n/90)))
	}
	r.row++
}

// stat writes a P10/P50/P90 row with its unit and note; style is the numbers' format.
func (r *recoveryRows) stat(name string, v dist.Stat, unit, note string, style int) {
	_ = r.w.row(r.s, r.row, name, v.P10, v.P50, v.P90, unit, note)
	r.w.style(r.s, r.cell("B"), r.cell("D"), style)
	r.w.style(r.s, r.cell("F"), r.cell("F"), r.st.note)
	r.row++
}

func (r *recoveryRows) text(t string) {
	_ = r.w.f.SetCellValue(r.s, r.cell("A"), t)
	_ = r.w.f.MergeCell(r.s, r.cell("A"), r.cell("F"))
	r.w.style(r.s, r.cell("A"), r.cell("F"), r.st.text)
	_ = r.w.f.SetRowHeight(r.s, r.row, float64(15*(1+len(t)/110)))
	r.row++
}

func (r *recoveryRows) stage(sr recover.StageReport) {
	for _, g := range sr.Reagents {
		note := fmt.Sprintf("as bought %g %%: %.4g kg", g.WtPct, g.Commercial.P50)
		if g.Litres != nil {
			note += fmt.Sprintf(", %.4g L", g.Litres.P50)
		}
		r.stat("reagent "+g.Name, g.Kg, "kg", note+" (P50)", r.st.num)
	}
	for _, sol := range sr.Solids {
		r.solid(sol)
	}
	for _, g := range sr.Gases {
		r.stat("gas "+g.Formula, g.Kg, "kg", fmt.Sprintf("%.4g L at 0 °C, 1 atm (P50)", g.Litres.P50), r.st.num)
	}
	if sr.KWh != nil {
		r.stat("electricity", *sr.KWh, "kWh", "", r.st.num)
		r.stat("electrowinning time", *sr.Hours, "h", "at the current density and cathode area set", r.st.num)
	}
	for _, f := range sr.Figures {
		r.stat(f.Name, f.Value, "", "", r.st.num)
	}
}

func (r *recoveryRows) solid(sol recover.Solid) {
	r.stat(sol.Kind+" "+sol.Name+", dry", sol.DryKg, "kg", "", r.st.num)
	if sol.WetKg != nil {
		r.stat(sol.Kind+" "+sol.Name+", wet", *sol.WetKg, "kg", "filter-cake moisture as a range", r.st.num)
	}
	for k, e := range sol.Elements {
		if k == 4 || e.WtPct.P50 < 0.01 {
			break
		}
		r.stat("   "+e.Name+" in it", e.WtPct, "wt%", "", r.st.pct)
	}
}

func (r *recoveryRows) products(rec *recover.Report) {
	r.section("Products")
	for _, p := range rec.Products {
		r.stat(p.Name, p.DryKg, "kg", "", r.st.num)
	}
	if v := rec.Value; v != nil {
		for _, it := range v.Items {
			r.stat("value of "+it.Name, it.Value, v.Currency, fmt.Sprintf("at %.4g per kg as %s", it.PricePerKg, it.Item),
				r.st.money)
		}
		note := ""
		if len(v.Unpriced) > 0 {
			note = "without " + strings.Join(v.Unpriced, ", ") + ": no price given"
		}
		r.stat("products' value", v.Total, v.Currency, note, r.st.money)
	}
}

// chartGroups are the destinations the chart sums: products, cakes, what stays in solution.
var chartGroups = []string{"products", "cakes", "in solution"}

// fates writes where each element goes.
func (r *recoveryRows) fates(rec *recover.Report) {
	r.section("Where each element goes: share of liquor + reagents")
	for _, f := range rec.Fates {
		for _, t := range f.To {
			if t.WtPct.P50 < 0.05 && t.WtPct.P90 < 0.05 {
				continue
			}
			r.stat(f.Element+" to "+t.Name, t.WtPct, "%", fmt.Sprintf("of %.4g kg in (P50)", f.InKg.P50), r.st.pct)
		}
	}
}

// chartData writes the chart's table: each liquor metal's P50 share to products, cakes and the
// solutions left.
func (r *recoveryRows) chartData(rec *recover.Report) {
	kinds := map[string]string{"effluent": chartGroups[2], "cobalt circuit liquor": chartGroups[2]}
	for _, p := range rec.Products {
		kinds[p.Name] = chartGroups[0]
	}
	for _, sr := range rec.Stages {
		for _, s := range sr.Solids {
			if s.Kind == "cake" {
				kinds[s.Name] = chartGroups[1]
			}
		}
	}
	r.section("Chart data: P50 share of each metal (%)")
	_ = r.w.row(r.s, r.row, "metal", chartGroups[0], chartGroups[1], chartGroups[2])
	r.w.style(r.s, r.cell("A"), r.cell("D"), r.w.hdr)
	_ = r.w.f.SetRowHeight(r.s, r.row, 30)
	r.row++
	r.fateRows[0] = r.row
	for _, f := range rec.Fates {
		if !isChartMetal(f.Element) {
			continue
		}
		share := map[string]float64{}
		for _, t := range f.To {
			if g, ok := kinds[t.Name]; ok {
				share[g] += t.WtPct.P50
			}
		}
		_ = r.w.row(r.s, r.row, f.Element, share[chartGroups[0]], share[chartGroups[1]], share[chartGroups[2]])
		r.w.style(r.s, r.cell("B"), r.cell("D"), r.st.pct)
		r.row++
	}
	r.fateRows[1] = r.row - 1
}

func isChartMetal(el string) bool {
	switch el {
	case "Li", "Co", "Ni", "Mn", "Al", "Fe", "Cu":
		return true
	}
	return false
}

// chart draws where each metal goes as 100 % stacked bars, below the rows.
func (r *recoveryRows) chart(rec *recover.Report) error {
	first, last := r.fateRows[0], r.fateRows[1]
	if last < first {
		return nil
	}
	ref := func(col string) string { return fmt.Sprintf("'%s'!$%s$%d:$%s$%d", r.s, col, first, col, last) }
	colours := []string{"1F3864", "BF9000", "8FAADC"}
	var series []excelize.ChartSeries
	for k, col := range []string{"B", "C", "D"} {
		series = append(series, excelize.ChartSeries{Name: fmt.Sprintf("'%s'!$%s$%d", r.s, col, first-1), Categories: ref("A"),
			Values: ref(col), Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{colours[k]}}})
	}
	dark := excelize.Font{Color: "000000", Size: 10}
	return r.w.f.AddChart(r.s, fmt.Sprintf("A%d", r.row+1), &excelize.Chart{Type: excelize.BarPercentStacked, Series: series,
		Title: excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "Where each metal goes (P50)",
			Font: &excelize.Font{Color: "000000", Size: 12, Bold: true}}}},
		Legend:    excelize.ChartLegend{Position: "bottom"},
		XAxis:     excelize.ChartAxis{Font: dark},
		YAxis:     excelize.ChartAxis{MajorGridLines: true, Font: dark},
		Dimension: excelize.ChartDimension{Width: 620, Height: 300}})
}
