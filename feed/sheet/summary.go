package sheet

import (
	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/value"
	"fmt"
	"maps"
	"slices"
	"strings"

	"github.com/xuri/excelize/v2"
)

// summaryWidths are the summary's printed columns: a label, then six numbers (A4 portrait at
// 100 %).
var summaryWidths = []float64{24, 10.5, 10.5, 10.5, 15, 12, 10.5}

// summary is the first one or two pages: everything a bench acts on (the lot, its black mass
// and metals, what to order, the gases to vent, the liquor, the value, every warning and the
// cautions); the other sheets are its appendices.
func (w *writer) summary() error {
	r := w.r
	if err := w.f.SetSheetName("Sheet1", Summary); err != nil {
		return err
	}
	p, err := w.newPage(Summary, false, summaryWidths...)
	if err != nil {
		return err
	}
	in := r.Inputs
	p.title("Black-mass intake sheet, lot " + shorten(w.lotID(), 80))
	p.blank()
	p.add(boldText("Lot id"), in.LotID)
	p.add(boldText("Supplier"), in.Supplier)
	w.set(Summary, 2, p.add(boldText("Received (date)")), cellValue{fmt: fmtDate, b: edit})
	w.set(Summary, 2, p.add(boldText("Operator")), cellValue{fmt: fmtText, b: edit})
	p.add(boldText("Input file"), in.File)
	p.add(boldText("Input SHA-256"), in.SHA256)
	if r.Lot.Lines > 0 {
		p.add(boldText("Lines / items / cells"), fmt.Sprintf("%s / %s / %s", thousands(r.Lot.Lines), thousands(r.Lot.Items), thousands(r.Lot.Cells)))
		p.add(boldText("Nameplate energy (kWh)"), kg(r.Lot.NameplateKWh))
	}
	if r.Basis != "" {
		p.add(boldText("Basis"), r.Basis)
	}
	if wg := r.Weighing; wg != nil && wg.MoistureWtPct.P90 == 0 {
		p.add(boldText("Weighed"), fmt.Sprintf("%s kg (moisture 0 wt%%, %s)", sig3(wg.WetMassKg), shorten(wg.MoistureBasis, 80)))
	} else if wg != nil {
		p.add(boldText("Weighed"), fmt.Sprintf("%s kg wet, %s kg dry (moisture %s wt%%, %s)", sig3(wg.WetMassKg),
			sig3(wg.DryMassKg.P50), sig3(wg.MoistureWtPct.P50), shorten(wg.MoistureBasis, 80)))
	}
	p.add(boldText("Monte Carlo"), fmt.Sprintf("%d samples, seed %d; P10, P50, P90: 10th, 50th, 90th percentiles", in.Samples, in.Seed))
	p.blank()
	if err := w.summaryMetals(p); err != nil {
		return err
	}
	w.summaryOrder(p)
	w.summaryLeach(p)
	w.summaryValue(p)
	w.summaryNotes(p)
	w.printArea(Summary, len(summaryWidths), p.row)
	return nil
}

// thousands prints a count with thousands separators.
func thousands(n int) string {
	s := fmt.Sprint(n)
	for i := len(s) - 3; i > 0 && s[i-1] != '-'; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// summaryMetals is the black mass and every element in it, the metals first, in kg and wt% with
// P10–P90; each element's mean kg is in the column after the printed ones, and the chart of the
// metals beside the table, on screen (out of the print area).
func (w *writer) summaryMetals(p *page) error {
	r := w.r
	metals := 0
	for _, sym := range r.ElementOrder {
		if !cathode.IsMetal(sym) {
			break
		}
		metals++
	}
	p.keepRows(len(r.ElementOrder) + 2)
	p.section("Black mass and every element in it")
	head := p.header("", "P10 kg", "P50 kg", "P90 kg", "P10 wt%", "P50 wt%", "P90 wt%")
	w.set(Summary, summaryMeanCol, head, cellValue{v: "mean kg", b: headNum})
	p.add(boldText("Black mass"), kg(r.BlackMassKg.P10), kg(r.BlackMassKg.P50), kg(r.BlackMassKg.P90))
	first := p.row
	for _, sym := range r.ElementOrder {
		a := r.Elements[sym]
		row := p.add(sym, kg(a.Kg.P10), kg(a.Kg.P50), kg(a.Kg.P90), fixed(a.WtPct.P10, 2), fixed(a.WtPct.P50, 2), fixed(a.WtPct.P90, 2))
		w.set(Summary, summaryMeanCol, row, kg(a.Kg.Mean))
	}
	p.blank()
	col, _ := excelize.ColumnNumberToName(summaryMeanCol)
	_ = w.f.SetColWidth(Summary, col, col, summaryMeanWidth)
	chartAt, _ := excelize.CoordinatesToCellName(summaryMeanCol+2, head)
	return w.rangeChart(Summary, chartAt, "Metals in the black mass: P50 with P10–P90 (kg)", first, first+max(metals, 1)-1, "B", "C", "D")
}

// summaryMeanCol is the column, after the printed ones, of each element's mean kg.
const summaryMeanCol = 8

const summaryMeanWidth = 10

// orderUnits picks kg and L for a bench's amounts, t and m³ from a tonne or a cubic metre.
func orderUnits(o *value.OrderSheet) (massUnit, volUnit string, perKg, perL float64) {
	massUnit, volUnit, perKg, perL = "kg", "L", 1, 1
	for _, l := range o.Lines {
		if l.Kg.P90 >= 1000 {
			massUnit, perKg = "t", 0.001
		}
		if l.Litres != nil && l.Litres.P90 >= 1000 {
			volUnit, perL = "m³", 0.001
		}
	}
	return
}

// suggestion is the container to buy a reagent in, or why there is none.
func suggestion(l value.OrderLine) string {
	if c := l.Suggested; c != nil {
		return fmt.Sprintf("%d × %s", c.Count, c.Container)
	}
	return "no container of its kind given"
}

func (w *writer) summaryOrder(p *page) {
	o := w.r.Order
	if o == nil || len(o.Lines) == 0 {
		return
	}
	mu, vu, perKg, perL := orderUnits(o)
	cur := o.Currency
	if cur == "" {
		cur = "no currency"
	}
	p.keepRows(len(o.Lines) + 3)
	p.section("Reagents to order (" + o.Basis + ")")
	p.header("reagent", "P50 "+mu, "P90 "+mu, "P90 "+vu, "buy (P90)", "cost P90 ("+cur+")")
	for _, l := range o.Lines {
		var litres any
		if l.Litres != nil {
			litres = kg(l.Litres.P90 * perL)
		}
		var cost any = "not priced"
		if l.CostP90 != nil {
			cost = money(*l.CostP90)
		}
		p.add(wrap(l.Reagent), kg(l.Kg.P50*perKg), kg(l.Kg.P90*perKg), litres, as(indented, suggestion(l)), cost)
	}
	if l := w.r.Leach; l != nil {
		p.add("make-up water", nil, nil, kg(l.WaterL.P90*perL), "")
	}
	p.blank()
}

func (w *writer) summaryLeach(p *page) {
	l := w.r.Leach
	if l == nil {
		return
	}
	names := slices.Sorted(maps.Keys(l.Gases))
	p.keepRows(len(names) + 2)
	p.section("Gases given off (" + l.GasReference + "): vent for the P90")
	p.header("gas", "P50 mol", "P50 m³", "P90 m³")
	for _, name := range names {
		g := l.Gases[name]
		p.add(as(wrapped, name), kg(g.Mol.P50), kg(g.M3STP.P50), kg(g.M3STP.P90))
	}
	if len(names) == 0 {
		p.add("none in the plan")
	}
	p.blank()
	var syms []string
	for _, sym := range w.r.ElementOrder {
		if _, ok := l.Liquor.Elements[sym]; ok && cathode.IsMetal(sym) {
			syms = append(syms, sym)
		}
	}
	// The liquor's volume and its metals are two tables, each kept whole: the second may start
	// the next page rather than move both there.
	p.keepRows(4)
	p.section("Leach liquor (" + l.Route + ")")
	p.header("", "P10", "P50", "P90", "unit")
	p.add(boldText("liquor volume"), kg(l.Liquor.VolumeL.P10), kg(l.Liquor.VolumeL.P50), kg(l.Liquor.VolumeL.P90), as(indented, "L"))
	p.add(boldText("free acid"), kg(l.FreeAcidMolPerL.P10), kg(l.FreeAcidMolPerL.P50), kg(l.FreeAcidMolPerL.P90), as(indented, "mol/L"))
	p.blank()
	p.keepRows(len(syms) + 1)
	p.header("liquor metal", "P10 g/L", "P50 g/L", "P90 g/L", "extraction P50")
	for _, sym := range syms {
		c := l.Liquor.Elements[sym]
		var ext any
		if e, ok := l.Liquor.ExtractionReached[sym]; ok {
			ext = frac(e.P50)
		}
		p.add(sym, kg(c.GPerL.P10), kg(c.GPerL.P50), kg(c.GPerL.P90), ext)
	}
	p.blank()
}

func (w *writer) summaryValue(p *page) {
	v := w.r.Value
	if v == nil {
		if w.r.Lot.Lines > 0 {
			p.add(boldText("Value"), "no prices given (run with --prices FILE)")
			p.blank()
		}
		return
	}
	p.keepRows(5)
	p.section("Value at the prices of " + v.PricesFile)
	p.header("", "P10 ("+v.Currency+")", "P50 ("+v.Currency+")", "P90 ("+v.Currency+")")
	row := func(label string, s dist.Stat) { p.add(label, money(s.P10), money(s.P50), money(s.P90)) }
	row("payable value", v.Payable)
	if v.ReagentCost != nil {
		row("reagent cost", *v.ReagentCost)
	}
	if v.NetOfReagents != nil {
		row("payable net of reagents", *v.NetOfReagents)
	}
	row("payable per tonne of black mass", v.PayablePerTonneBM)
	if rec := w.r.Recovery; rec != nil && rec.Value != nil && rec.Value.Currency == v.Currency {
		row("recovered products instead (recovery plan)", rec.Value.Total)
	}
	p.blank()
}

// summaryNotes writes every warning, then the cautions.
func (w *writer) summaryNotes(p *page) {
	r := w.r
	warnings := slices.Clone(r.Warnings)
	cautions := slices.Clone(r.Safety)
	if l := r.Leach; l != nil {
		warnings = append(warnings, l.Warnings...)
		cautions = append(slices.Clone(l.Safety), cautions...)
	}
	if rec := r.Recovery; rec != nil {
		for _, wn := range rec.Warnings {
			warnings = append(warnings, "recovery "+wn)
		}
		cautions = append(cautions, "Recovery stages: oxidisers, caustic, flammable extraction diluents, acid mist and "+
			"hydrogen at electrowinning, cobalt and nickel compounds: see the Recovery sheet's cautions.")
	}
	for _, part := range []struct {
		title string
		list  []string
	}{{"Warnings", warnings}, {"Cautions", cautions}} {
		if len(part.list) == 0 {
			continue
		}
		first := cellHeight(part.list[0], p.width(1, len(p.widths)), wrapped)
		p.keep(rowPt + first)
		p.section(part.title)
		for _, t := range part.list {
			p.paragraph("• "+strings.TrimSpace(t), wrapped)
		}
		p.blank()
	}
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
