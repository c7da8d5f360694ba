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
	bold, err := f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}, Fill: excelize.Fill{Type: "pattern", Pattern: 1,
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
	paper, one, auto, fit := PaperA4, 1, 0, true
	for _, s := range []string{CalibrationSheet, CalibrationLots} {
		_ = f.SetPageLayout(s, &excelize.PageLayoutOptions{Size: &paper, FitToWidth: &one, FitToHeight: &auto})
		_ = f.SetSheetProps(s, &excelize.SheetPropsOptions{FitToPage: &fit})
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
	row := 1
	var spans []span
	for _, e := range o.Report.Elements {
		if len(e.Points) == 0 {
			continue
		}
		spans = append(spans, span{e.Element, row + 1, row + len(e.Points)})
		for _, p := range e.Points {
			row++
			cell, _ := excelize.CoordinatesToCellName(1, row)
			vals := []any{e.Element, p.Lot, p.MeasuredKg, p.EstimateKg, p.PredictedKg, p.SDKg, p.Z, p.Censored}
			if err := f.SetSheetRow(s, cell, &vals); err != nil {
				return nil, err
			}
		}
	}
	if num, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.000")}); err == nil && row > 1 {
		_ = f.SetCellStyle(s, "C2", fmt.Sprintf("G%d", row), num)
	}
	_ = f.SetColWidth(s, "A", "A", 9)
	_ = f.SetColWidth(s, "B", "B", 16)
	_ = f.SetColWidth(s, "C", "H", 14)
	_ = f.SetPanes(s, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"})
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
	_ = f.SetColWidth(s, "A", "A", 12)
	_ = f.SetColWidth(s, "B", "H", 14)
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.000")}); err == nil {
		_ = f.SetCellStyle(s, "C7", fmt.Sprintf("D%d", 6+len(r.Elements)), st)
		_ = f.SetCellStyle(s, fmt.Sprintf("D%d", factorHead+1), fmt.Sprintf("F%d", factorEnd), st)
	}
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0 %")}); err == nil {
		_ = f.SetCellStyle(s, "E7", fmt.Sprintf("F%d", 6+len(r.Elements)), st)
	}
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: ptr("0.0")}); err == nil {
		_ = f.SetCellStyle(s, fmt.Sprintf("G%d", factorHead+1), fmt.Sprintf("G%d", factorEnd), st)
	}
	return calibrationCharts(f, o, spans, len(rows)+2)
}

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
		cell, _ := excelize.CoordinatesToCellName(1+5*(i%2), at+18*(i/2))
		if err := f.AddChart(CalibrationSheet, cell, &excelize.Chart{Type: excelize.Scatter, Series: series,
			Title:     title(sp.element + ": assay against estimate (kg)"),
			XAxis:     excelize.ChartAxis{MajorGridLines: true, Title: title("estimate kg")},
			YAxis:     excelize.ChartAxis{MajorGridLines: true, Title: title("assay kg")},
			Legend:    excelize.ChartLegend{Position: "bottom"},
			Dimension: excelize.ChartDimension{Width: 440, Height: 340}}); err != nil {
			return err
		}
	}
	return nil
}
