package sheet

import (
	"bytes"
	"fmt"
	"io"
	"math"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/calibrate"
)

// Sheet names of the calibration workbook.
const (
	CalibrationSheet = "Calibration"
	CalibrationLots  = "Lots"
)

// WriteCalibration writes the calibration workbook: the figures per element and the factors,
// with a chart of the estimate against the assay (before: the model; after: each lot predicted
// from the others), and every lot's values on their own sheet. It formats; it computes nothing.
func WriteCalibration(w io.Writer, o *calibrate.Outcome) error {
	f := excelize.NewFile()
	defer f.Close()
	if err := f.SetSheetName("Sheet1", CalibrationSheet); err != nil {
		return err
	}
	if _, err := f.NewSheet(CalibrationLots); err != nil {
		return err
	}
	bold, err := f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: 11, Family: "Calibri"}, Fill: excelize.Fill{Type: "pattern", Pattern: 1,
		Color: []string{"D9E2D0"}}, Border: []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}},
		Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	if err != nil {
		return err
	}
	spans, err := calibrationLots(f, o, bold)
	if err != nil {
		return err
	}
	if err := calibrationSummary(f, o, bold, spans); err != nil {
		return err
	}
	paper, orient, one, auto, fit := PaperA4, "portrait", 1, 0, true
	side, top, band := MarginSideIn, MarginTopIn, MarginHeaderIn
	for _, s := range []string{CalibrationSheet, CalibrationLots} {
		_ = f.SetPageLayout(s, &excelize.PageLayoutOptions{Size: &paper, Orientation: &orient, FitToWidth: &one, FitToHeight: &auto})
		_ = f.SetSheetProps(s, &excelize.SheetPropsOptions{FitToPage: &fit})
		_ = f.SetPageMargins(s, &excelize.PageLayoutMarginsOptions{Left: &side, Right: &side, Top: &top, Bottom: &top,
			Header: &band, Footer: &band})
		_ = f.SetHeaderFooter(s, &excelize.HeaderFooterOptions{
			OddHeader: "&L" + escapeHF(fmt.Sprintf("Calibration %d", o.Calibration.Version)) + "&C" + escapeHF(s) + "&RPage &P of &N",
			OddFooter: "&L" + escapeHF("blackmass: a calibration from the bench's own assays; planning figures only")})
	}
	f.SetActiveSheet(0)
	_ = f.SetDocProps(&excelize.DocProperties{Title: fmt.Sprintf("Calibration %d", o.Calibration.Version), Creator: "blackmass",
		Created: "2000-01-01T00:00:00Z", Modified: "2000-01-01T00:00:00Z"})
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		return err
	}
	return normaliseZip(buf.Bytes(), w, nil)
}

// calibrationLots writes every lot of the fit, element by element, and returns each element's rows.
func calibrationLots(f *excelize.File, o *calibrate.Outcome, hdr int) ([]span, error) {
	s := CalibrationLots
	head := []any{"element", "lot", "assay kg", "estimate kg (model)", "predicted kg (other lots)", "sd kg", "z", "below detection"}
	if err := f.SetSheetRow(s, "A1", &head); err != nil {
		return nil, err
	}
	_ = f.SetCellStyle(s, "A1", "H1", hdr)
	_ = f.SetRowHeight(s, 1, 45)
	row := 1
	var spans []span
	kgStyle := map[string]int{}
	for _, e := range o.Report.Elements {
		if len(e.Points) == 0 {
			continue
		}
		spans = append(spans, span{e.Element, row + 1, row + len(e.Points)})
		for _, p := range e.Points {
			row++
			cell, _ := excelize.CoordinatesToCellName(1, row)
			vals := []any{e.Element, p.Lot, p.MeasuredKg, p.EstimateKg, p.PredictedKg, p.SDKg, p.Z, yesNo(p.Censored)}
			if err := f.SetSheetRow(s, cell, &vals); err != nil {
				return nil, err
			}
			// Each mass to three significant figures, z to two decimals.
			for k, v := range []float64{p.MeasuredKg, p.EstimateKg, p.PredictedKg, p.SDKg} {
				col, code := 3+k, sigFmt(v)
				if _, ok := kgStyle[code]; !ok {
					kgStyle[code], _ = f.NewStyle(&excelize.Style{CustomNumFmt: ptr(code)})
				}
				c, _ := excelize.CoordinatesToCellName(col, row)
				_ = f.SetCellStyle(s, c, c, kgStyle[code])
			}
		}
	}
	if num, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.00")}); err == nil && row > 1 {
		_ = f.SetCellStyle(s, "G2", fmt.Sprintf("G%d", row), num)
	}
	if mid, err := f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{Horizontal: "center"}}); err == nil && row > 1 {
		_ = f.SetCellStyle(s, "H2", fmt.Sprintf("H%d", row), mid)
	}
	// A4 portrait at 100 %: the eight columns print within 530 pt; the charts' cells (J on) do not print.
	_ = f.SetColWidth(s, "A", "A", 9)
	_ = f.SetColWidth(s, "B", "B", 13)
	_ = f.SetColWidth(s, "C", "G", 10.5)
	_ = f.SetColWidth(s, "H", "H", 11)
	_ = f.SetPanes(s, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"})
	_ = f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: fmt.Sprintf("'%s'!$1:$1", s), Scope: s})
	_ = f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Area", RefersTo: fmt.Sprintf("'%s'!$A$1:$H$%d", s, row), Scope: s})
	return spans, nil
}

func ptr[T any](v T) *T { return &v }

// calibrationSummary writes the figures per element, the factors, the lots left out, and the
// charts of estimate against assay over the Lots sheet's rows.
func calibrationSummary(f *excelize.File, o *calibrate.Outcome, hdr int, spans []span) error {
	s, c, r := CalibrationSheet, o.Calibration, o.Report
	rows := [][]any{
		{fmt.Sprintf("Calibration %d of register %s", c.Version, o.Register)},
		{fmt.Sprintf("fitted %s from %d of %d assayed and weighed lots", c.CreatedAt.Format("2006-01-02 15:04 MST"),
			len(r.Used), r.Lots)},
		{"method: " + c.Method},
		{"bias: mean ln(assay/estimate), 0 for none; after: each lot predicted from the others. " +
			"Coverage: share of lots whose assay fell inside the P10-P90 (80 % claimed)."},
		{},
		{"element", "lots", "bias before", "bias after", "coverage before", "coverage after", "lots that disagree", "not fitted because"},
	}
	for _, e := range r.Elements {
		rows = append(rows, []any{e.Element, e.Lots, e.BiasBefore, e.BiasAfter, e.CoverageBefore, e.CoverageAfter,
			len(e.Disagree), e.Skipped})
	}
	rows = append(rows, []any{}, []any{"element", "chemistry", "format", "factor", "sd", "prior sd", "lots"})
	factorHead := len(rows)
	for _, e := range c.Elements {
		for _, fa := range e.Factors {
			format := fa.Format
			if format == "" {
				format = "(others pooled)"
			}
			rows = append(rows, []any{e.Element, fa.Family, format, fa.Mean, fa.SD, fa.PriorSD, fa.Lots})
		}
	}
	factorEnd := len(rows)
	if len(r.LeftOut) > 0 {
		rows = append(rows, []any{}, []any{"left out", "reason"})
		for _, l := range r.LeftOut {
			rows = append(rows, []any{l.Lot, l.Reason})
		}
	}
	for _, sk := range o.Skipped {
		rows = append(rows, []any{sk.Lot, "could not take part: " + sk.Reason})
	}
	for i, v := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		if err := f.SetSheetRow(s, cell, &v); err != nil {
			return err
		}
	}
	_ = f.SetCellStyle(s, "A6", "H6", hdr)
	_ = f.SetRowHeight(s, 6, 30)
	fh := fmt.Sprintf("A%d", factorHead)
	_ = f.SetCellStyle(s, fh, fmt.Sprintf("G%d", factorHead), hdr)
	// A4 portrait at 100 %: eight columns within the 530 pt between the margins.
	_ = f.SetColWidth(s, "A", "B", 10)
	_ = f.SetColWidth(s, "C", "C", 15)
	_ = f.SetColWidth(s, "D", "H", 11.5)
	const pageUnits = 10 + 10 + 15 + 5*11.5
	wrap, _ := f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	for i := 1; i <= 4; i++ { // the heading's sentences, wrapped over the page's width
		_ = f.MergeCell(s, fmt.Sprintf("A%d", i), fmt.Sprintf("H%d", i))
		_ = f.SetCellStyle(s, fmt.Sprintf("A%d", i), fmt.Sprintf("H%d", i), wrap)
		// 11 pt text: 10/11 of the characters of 10 pt per unit, lines of 15 pt.
		_ = f.SetRowHeight(s, i, float64(textLines(fmt.Sprint(rows[i-1][0]), pageUnits*bodyPt/11, false))*15+1)
	}
	for i := factorEnd + 1; i <= len(rows); i++ { // the reasons, wrapped beside their lots
		if len(rows[i-1]) == 2 {
			_ = f.MergeCell(s, fmt.Sprintf("B%d", i), fmt.Sprintf("H%d", i))
			_ = f.SetCellStyle(s, fmt.Sprintf("B%d", i), fmt.Sprintf("H%d", i), wrap)
		}
	}
	_ = f.SetCellStyle(s, "H7", fmt.Sprintf("H%d", 6+len(r.Elements)), wrap)
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.000")}); err == nil {
		_ = f.SetCellStyle(s, "C7", fmt.Sprintf("D%d", 6+len(r.Elements)), st)
		_ = f.SetCellStyle(s, fmt.Sprintf("D%d", factorHead+1), fmt.Sprintf("F%d", factorEnd), st)
	}
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0 %")}); err == nil {
		_ = f.SetCellStyle(s, "E7", fmt.Sprintf("F%d", 6+len(r.Elements)), st)
	}
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0")}); err == nil {
		_ = f.SetCellStyle(s, "B7", fmt.Sprintf("B%d", 6+len(r.Elements)), st)
		_ = f.SetCellStyle(s, "G7", fmt.Sprintf("G%d", 6+len(r.Elements)), st)
	}
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.0")}); err == nil {
		_ = f.SetCellStyle(s, fmt.Sprintf("G%d", factorHead+1), fmt.Sprintf("G%d", factorEnd), st)
	}
	return calibrationCharts(f, o, spans, len(rows)+2)
}

// A chart's size in pixels (0.75 pt each), and the rows of 15 pt a row of charts takes: two side
// by side within an A4 portrait page's width, three rows of them to a page's height.
const (
	chartWidthPx  = 335
	chartHeightPx = 290
	chartRows     = 16
)

// span is the rows of one element on the Lots sheet.
type span struct {
	element     string
	first, last int
}

// calibrationCharts adds, per element, the scatter of assay against estimate (the model's, and
// each lot's prediction from the other lots) with the 1:1 line across the element's values, two
// charts to a row from row at. An element has a chart of its own: elements span grams to
// tonnes, and the xlsx library draws the horizontal axis of a scatter on a linear scale only.
func calibrationCharts(f *excelize.File, o *calibrate.Outcome, spans []span, at int) error {
	for i, sp := range spans {
		lo, hi := math.Inf(1), 0.0
		for _, e := range o.Report.Elements {
			if e.Element != sp.element {
				continue
			}
			for _, p := range e.Points {
				for _, v := range []float64{p.MeasuredKg, p.EstimateKg, p.PredictedKg} {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
		// The series' names and the 1:1 line's two points, beside the lots.
		r := 1 + 3*i
		cells := [][]any{{sp.element + " 1:1", lo, hi}, {sp.element + " model estimate"},
			{sp.element + " calibrated, predicted from the other lots"}}
		for k, v := range cells {
			if err := f.SetSheetRow(CalibrationLots, fmt.Sprintf("J%d", r+k), &v); err != nil {
				return err
			}
		}
		for k, v := range []float64{lo, hi} {
			col := string(rune('K' + k))
			if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr(sigFmt(v))}); err == nil {
				_ = f.SetCellStyle(CalibrationLots, fmt.Sprintf("%s%d", col, r), fmt.Sprintf("%s%d", col, r), st)
			}
		}
		ref := func(col string) string {
			return fmt.Sprintf("'%s'!$%s$%d:$%s$%d", CalibrationLots, col, sp.first, col, sp.last)
		}
		name := func(row int) string { return fmt.Sprintf("'%s'!$J$%d", CalibrationLots, row) }
		marker := func(symbol, color string) excelize.ChartMarker {
			return excelize.ChartMarker{Symbol: symbol, Size: 6, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{color}}}
		}
		noLine := excelize.LineOptions{Type: excelize.LineNone}
		line := fmt.Sprintf("'%s'!$K$%d:$L$%d", CalibrationLots, r, r)
		series := []excelize.ChartSeries{
			{Name: name(r + 1), Categories: ref("D"), Values: ref("C"), Marker: marker("circle", "8C6D46"), Line: noLine},
			{Name: name(r + 2), Categories: ref("E"), Values: ref("C"), Marker: marker("diamond", "3F6E8C"), Line: noLine},
			{Name: name(r), Categories: line, Values: line, Marker: excelize.ChartMarker{Symbol: "none"},
				Line: excelize.LineOptions{Type: excelize.LineSolid, Width: 1,
					Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"7F7F7F"}}}},
		}
		title := func(t string) excelize.ChartTitle {
			return excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: t}}}
		}
		// Charts start on a page of their own, two to a row, three rows to a page.
		if i%6 == 0 {
			brk, _ := excelize.CoordinatesToCellName(1, at+chartRows*(i/2))
			_ = f.InsertPageBreak(CalibrationSheet, brk)
		}
		if i%2 == 0 { // rows of a known height under the charts, whatever a viewer's default
			for r := at + chartRows*(i/2); r < at+chartRows*(i/2+1); r++ {
				_ = f.SetRowHeight(CalibrationSheet, r, 15)
			}
		}
		cell, _ := excelize.CoordinatesToCellName(1+4*(i%2), at+chartRows*(i/2))
		if err := f.AddChart(CalibrationSheet, cell, &excelize.Chart{Type: excelize.Scatter, Series: series,
			Title:     title(sp.element + ": assay against estimate (kg)"),
			XAxis:     excelize.ChartAxis{MajorGridLines: true, Title: title("estimate kg")},
			YAxis:     excelize.ChartAxis{MajorGridLines: true, Title: title("assay kg")},
			Legend:    excelize.ChartLegend{Position: "bottom"},
			Dimension: excelize.ChartDimension{Width: chartWidthPx, Height: chartHeightPx}}); err != nil {
			return err
		}
	}
	return nil
}
