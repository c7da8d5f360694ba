package sheet

import (
	"blackmass/cathode"
	"fmt"

	"github.com/xuri/excelize/v2"
)

// metalsWidths are the Metals sheet's columns (A4 portrait at 100 %).
var metalsWidths = []float64{12, 10, 10, 10, 10, 10, 10, 10}

func (w *writer) metals() error {
	r := w.r
	p, err := w.newPage(Metals, false, metalsWidths...)
	if err != nil {
		return err
	}
	s := Metals
	p.header("element", "P10 kg", "P50 kg", "P90 kg", "mean kg", "P10 wt%", "P50 wt%", "P90 wt%")
	w.printTitles(s, 1, 1)
	for _, sym := range r.ElementOrder {
		a := r.Elements[sym]
		p.add(sym, a.Kg.P10, a.Kg.P50, a.Kg.P90, a.Kg.Mean, fixed(a.WtPct.P10, 2), fixed(a.WtPct.P50, 2), fixed(a.WtPct.P90, 2))
	}
	metals := 1 // the chart shows the leading metals of the display order
	for _, sym := range r.ElementOrder {
		if !cathode.IsMetal(sym) {
			break
		}
		metals++
	}
	p.blank()
	at := p.row
	return w.rangeChart(s, fmt.Sprintf("A%d", at), "Metals in the black mass: P50 with P10–P90 (kg)", 2, max(metals, 2), "B", "C", "D")
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
