package sheet

import (
	"blackmass/cathode"
	"fmt"

	"github.com/xuri/excelize/v2"
)

func (w *writer) metals() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(Metals); err != nil {
		return err
	}
	s := Metals
	if err := w.header(s, 1, "element", "P10 kg", "P50 kg", "P90 kg", "mean kg", "P10 wt%", "P50 wt%", "P90 wt%"); err != nil {
		return err
	}
	for i, sym := range r.ElementOrder {
		a := r.Elements[sym]
		if err := w.row(s, i+2, sym, a.Kg.P10, a.Kg.P50, a.Kg.P90, a.Kg.Mean, a.WtPct.P10, a.WtPct.P50, a.WtPct.P90); err != nil {
			return err
		}
	}
	last := len(r.ElementOrder) + 1
	metals := 1 // the chart shows the leading metals of the display order
	for _, sym := range r.ElementOrder {
		if !cathode.IsMetal(sym) {
			break
		}
		metals++
	}
	w.style(s, "B2", fmt.Sprintf("E%d", last), w.num3)
	w.style(s, "F2", fmt.Sprintf("H%d", last), w.pct)
	_ = f.SetColWidth(s, "A", "H", 12)
	w.printSetup(s, true)
	return w.rangeChart(s, fmt.Sprintf("A%d", last+3), "Metals in the black mass: P50 with P10–P90 (kg)", 2, max(metals, 2), "B", "C", "D")
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
