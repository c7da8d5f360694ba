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

// recoveryWidths are the Recovery sheet's printed columns: the item, P10/P50/P90, the unit and a
// note (A4 portrait at 100 %).
var recoveryWidths = []float64{33, 10, 10, 10, 8, 22}

// recovery writes the Recovery sheet: each stage's reagents, solids, gases, electricity and
// figures (P10/P50/P90 with the unit), the products and their value, where each element goes
// with a chart, the water balance and the cautions. One page wide; each table is kept whole on
// a page with its own header row.
func (w *writer) recovery() error {
	rec := w.r.Recovery
	if rec == nil {
		return nil
	}
	p, err := w.newPage(RecoverySheet, false, recoveryWidths...)
	if err != nil {
		return err
	}
	p.title("Recovery plan after the leach")
	p.paragraph("Flowsheet: "+strings.Join(rec.Flowsheet, " | "), small)
	p.blank()
	rw := &recoveryRows{p: p}
	for i, sr := range rec.Stages {
		rw.table(fmt.Sprintf("%d. %s", i+1, sr.Kind), stageRows(sr), sr.Description)
	}
	rw.table("Products", productRows(rec))
	rw.table("Recovery reagents to order: all stages, as bought", reagentRows(rec))
	rw.table("Where each element goes: share of liquor + reagents", fateRows(rec))
	var water []statRow
	for _, f := range rec.Water {
		water = append(water, statRow{name: f.Name, v: f.Kg, unit: "kg"})
	}
	rw.table("Water balance (+ into the solution, − out of it)", water)
	p.keepRows(2)
	p.section("Warnings and cautions")
	for _, wn := range rec.Warnings {
		p.paragraph("warning: "+wn, plain)
	}
	seen := map[string]bool{}
	for _, sr := range rec.Stages {
		for _, c := range sr.Cautions {
			if !seen[c] {
				seen[c] = true
				p.paragraph("• "+c, plain)
			}
		}
	}
	for _, c := range rec.Cautions {
		p.paragraph("• "+c, plain)
	}
	p.blank()
	// The chart and its data start a page of their own, so that the chart is not cut.
	cell, _ := excelize.CoordinatesToCellName(1, p.row)
	_ = w.f.InsertPageBreak(p.s, cell)
	p.usedPt = 0
	first, last := rw.chartData(rec)
	chartRow := p.row + 1
	// The chart covers about 22 rows below its data; the print area reaches past it.
	w.printArea(RecoverySheet, len(recoveryWidths), chartRow+22)
	return w.recoveryChart(first, last, chartRow)
}

// statRow is one row of a recovery table: P10/P50/P90 with a unit and a note; money rows in the
// money format.
type statRow struct {
	name, unit, note string
	v                dist.Stat
	money            bool
}

// recoveryRows writes the sheet's tables.
type recoveryRows struct{ p *page }

// table writes a titled table of rows, kept whole on a page with its header, the title's
// description (if any) wrapped below it.
func (r *recoveryRows) table(title string, rows []statRow, description ...string) {
	if len(rows) == 0 {
		return
	}
	p := r.p
	p.keepRows(len(rows) + 2 + 2*len(description))
	p.section(title)
	for _, d := range description {
		p.paragraph(d, small)
	}
	p.header("item", "P10", "P50", "P90", "unit", "note")
	for _, s := range rows {
		num := kg
		if s.money {
			num = money
		}
		p.add(wrap(s.name), num(s.v.P10), num(s.v.P50), num(s.v.P90), as(indented, s.unit), s.note)
	}
	p.blank()
}

// stageRows are a stage's reagents, solids, gases, electricity and figures.
func stageRows(sr recover.StageReport) []statRow {
	var rows []statRow
	for _, g := range sr.Reagents {
		n := fmt.Sprintf("as bought %g %%: %s kg", g.WtPct, sig3(g.Commercial.P50))
		if g.Litres != nil {
			n += ", " + sig3(g.Litres.P50) + " L"
		}
		rows = append(rows, statRow{name: "reagent " + g.Name, v: g.Kg, unit: "kg", note: n + " (P50)"})
	}
	for _, sol := range sr.Solids {
		rows = append(rows, statRow{name: sol.Kind + " " + sol.Name + ", dry", v: sol.DryKg, unit: "kg"})
		if sol.WetKg != nil {
			rows = append(rows, statRow{name: sol.Kind + " " + sol.Name + ", wet", v: *sol.WetKg, unit: "kg",
				note: "filter-cake moisture as a range"})
		}
		for k, e := range sol.Elements {
			if k == 4 || e.WtPct.P50 < 0.01 {
				break
			}
			rows = append(rows, statRow{name: "   " + e.Name + " in it", v: e.WtPct, unit: "wt%"})
		}
	}
	for _, g := range sr.Gases {
		rows = append(rows, statRow{name: "gas " + g.Formula, v: g.Kg, unit: "kg",
			note: sig3(g.Litres.P50) + " L at 0 °C, 1 atm (P50)"})
	}
	if sr.KWh != nil {
		rows = append(rows, statRow{name: "electricity", v: *sr.KWh, unit: "kWh"},
			statRow{name: "electrowinning time", v: *sr.Hours, unit: "h", note: "at the current density and cathode area set"})
	}
	for _, f := range sr.Figures {
		rows = append(rows, statRow{name: f.Name, v: f.Value})
	}
	return rows
}

// productRows are the products, and their value where priced.
func productRows(rec *recover.Report) []statRow {
	var rows []statRow
	for _, pr := range rec.Products {
		rows = append(rows, statRow{name: pr.Name, v: pr.DryKg, unit: "kg"})
	}
	if v := rec.Value; v != nil {
		for _, it := range v.Items {
			rows = append(rows, statRow{name: "value of " + it.Name, v: it.Value, unit: v.Currency, money: true,
				note: fmt.Sprintf("at %s per kg as %s", sig3(it.PricePerKg), it.Item)})
		}
		note := ""
		if len(v.Unpriced) > 0 {
			note = "without " + strings.Join(v.Unpriced, ", ") + ": not priced"
		}
		rows = append(rows, statRow{name: "products' value", v: v.Total, unit: v.Currency, money: true, note: note})
	}
	return rows
}

// reagentRows are the recovery's reagents as bought, and their cost where priced.
func reagentRows(rec *recover.Report) []statRow {
	var rows []statRow
	for _, g := range rec.Reagents {
		note := ""
		if g.Litres != nil {
			note = sig3(g.Litres.P50) + " L (P50), " + sig3(g.Litres.P90) + " L (P90)"
		}
		rows = append(rows, statRow{name: fmt.Sprintf("%s %g %%", g.Name, g.WtPct), v: g.Commercial, unit: "kg", note: note})
	}
	if c := rec.Cost; c != nil {
		for _, it := range c.Items {
			rows = append(rows, statRow{name: "cost of " + it.Name, v: it.Kg, unit: c.Currency, money: true})
		}
		note := ""
		if len(c.Unpriced) > 0 {
			note = "without " + strings.Join(c.Unpriced, ", ") + ": not priced"
		}
		rows = append(rows, statRow{name: "recovery reagents' cost", v: c.Total, unit: c.Currency, money: true, note: note})
		if c.Net != nil {
			rows = append(rows, statRow{name: "products' value less the reagents' cost", v: *c.Net, unit: c.Currency, money: true})
		}
	}
	return rows
}

// fateRows are where each element goes, as shares of what came in.
func fateRows(rec *recover.Report) []statRow {
	var rows []statRow
	for _, f := range rec.Fates {
		for _, t := range f.To {
			if t.WtPct.P50 < 0.05 && t.WtPct.P90 < 0.05 {
				continue
			}
			rows = append(rows, statRow{name: f.Element + " to " + t.Name, v: t.WtPct, unit: "%",
				note: "of " + sig3(f.InKg.P50) + " kg in (P50)"})
		}
	}
	return rows
}

// chartGroups are the destinations the chart sums: products, cakes, what stays in solution.
var chartGroups = []string{"products", "cakes", "in solution"}

// chartData writes the chart's table, each liquor metal's P50 share to products, cakes and the
// solutions left, and returns its first and last data rows.
func (r *recoveryRows) chartData(rec *recover.Report) (first, last int) {
	p := r.p
	kinds := map[string]string{"effluent": chartGroups[2], "cobalt circuit liquor": chartGroups[2]}
	for _, pr := range rec.Products {
		kinds[pr.Name] = chartGroups[0]
	}
	for _, sr := range rec.Stages {
		for _, s := range sr.Solids {
			if s.Kind == "cake" {
				kinds[s.Name] = chartGroups[1]
			}
		}
	}
	p.section("Chart data: P50 share of each metal (%)")
	p.header("metal", chartGroups[0], chartGroups[1], chartGroups[2])
	first = p.row
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
		p.add(f.Element, fixed(share[chartGroups[0]], 1), fixed(share[chartGroups[1]], 1), fixed(share[chartGroups[2]], 1))
	}
	return first, p.row - 1
}

func isChartMetal(el string) bool {
	switch el {
	case "Li", "Co", "Ni", "Mn", "Al", "Fe", "Cu":
		return true
	}
	return false
}

// recoveryChart draws where each metal goes as 100 % stacked bars, below the chart's data.
func (w *writer) recoveryChart(first, last, row int) error {
	if last < first {
		return nil
	}
	s := RecoverySheet
	ref := func(col string) string { return fmt.Sprintf("'%s'!$%s$%d:$%s$%d", s, col, first, col, last) }
	colours := []string{"1F3864", "BF9000", "8FAADC"}
	var series []excelize.ChartSeries
	for k, col := range []string{"B", "C", "D"} {
		series = append(series, excelize.ChartSeries{Name: fmt.Sprintf("'%s'!$%s$%d", s, col, first-1), Categories: ref("A"),
			Values: ref(col), Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{colours[k]}}})
	}
	dark := excelize.Font{Color: "000000", Size: 10}
	return w.f.AddChart(s, fmt.Sprintf("A%d", row), &excelize.Chart{Type: excelize.BarPercentStacked, Series: series,
		Title: excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "Where each metal goes (P50)",
			Font: &excelize.Font{Color: "000000", Size: 12, Bold: true}}}},
		Legend:    excelize.ChartLegend{Position: "bottom"},
		XAxis:     excelize.ChartAxis{Font: dark},
		YAxis:     excelize.ChartAxis{MajorGridLines: true, Font: dark},
		Dimension: excelize.ChartDimension{Width: 560, Height: 300}})
}
