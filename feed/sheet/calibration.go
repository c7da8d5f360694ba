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
		Color: []string{"D9E2D0"}}, Border: []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}}})
	if err != nil {
		return err
	}
	last, err := calibrationLots(f, o, bold)
	if err != nil {
		return err
	}
	if err := calibrationSummary(f, o, bold, last); err != nil {
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

// calibrationLots writes every lot of the fit, element by element, and returns the last row.
func calibrationLots(f *excelize.File, o *calibrate.Outcome, hdr int) (int, error) {
	s := CalibrationLots
	head := []any{"element", "lot", "assay kg", "estimate kg (model)", "predicted kg (other lots)", "sd kg", "z", "below detection"}
	if err := f.SetSheetRow(s, "A1", &head); err != nil {
		return 0, err
	}
	_ = f.SetCellStyle(s, "A1", "H1", hdr)
	row := 1
	for _, e := range o.Report.Elements {
		for _, p := range e.Points {
			row++
			cell, _ := excelize.CoordinatesToCellName(1, row)
			vals := []any{e.Element, p.Lot, p.MeasuredKg, p.EstimateKg, p.PredictedKg, p.SDKg, p.Z, p.Censored}
			if err := f.SetSheetRow(s, cell, &vals); err != nil {
				return 0, err
			}
		}
	}
	_ = f.SetColWidth(s, "A", "A", 9)
	_ = f.SetColWidth(s, "B", "B", 16)
	_ = f.SetColWidth(s, "C", "H", 14)
	_ = f.SetPanes(s, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"})
	return row, nil
}

// calibrationSummary writes the figures per element, the factors, the lots left out, and the
// chart of estimate against assay over the Lots sheet's rows 2 to last.
func calibrationSummary(f *excelize.File, o *calibrate.Outcome, hdr, last int) error {
	s, c, r := CalibrationSheet, o.Calibration, o.Report
	rows := [][]any{
		{fmt.Sprintf("Calibration %d of register %s", c.Version, o.Register)},
		{fmt.Sprintf("fitted %s from %d of %d assayed and weighed lots; method: %s", c.CreatedAt.Format("2006-01-02 15:04 MST"),
			len(r.Used), r.Lots, c.Method)},
		{"bias: mean ln(assay/estimate), 0 for none; after: each lot predicted from the others. Coverage: share of lots whose assay fell inside the P10-P90 (80 % claimed)."},
		{},
		{"element", "lots", "bias before", "bias after", "coverage before", "coverage after", "lots that disagree", "not fitted because"},
	}
	for _, e := range r.Elements {
		rows = append(rows, []any{e.Element, e.Lots, e.BiasBefore, e.BiasAfter, e.CoverageBefore, e.CoverageAfter, len(e.Disagree), e.Skipped})
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
	_ = f.SetCellStyle(s, "A5", "H5", hdr)
	fh := fmt.Sprintf("A%d", factorHead)
	_ = f.SetCellStyle(s, fh, fmt.Sprintf("G%d", factorHead), hdr)
	_ = f.SetColWidth(s, "A", "A", 12)
	_ = f.SetColWidth(s, "B", "H", 14)
	pct := "0 %"
	if st, err := f.NewStyle(&excelize.Style{CustomNumFmt: &pct}); err == nil {
		_ = f.SetCellStyle(s, "E6", fmt.Sprintf("F%d", 5+len(r.Elements)), st)
	}
	return calibrationChart(f, o, last, len(rows)+2)
}

// calibrationChart adds the scatter of assay against estimate, on logarithmic axes (the
// elements span kilograms to tonnes), with the 1:1 line from the smallest to the largest value.
func calibrationChart(f *excelize.File, o *calibrate.Outcome, last, at int) error {
	if last < 2 {
		return nil
	}
	lo, hi := math.Inf(1), 0.0
	for _, e := range o.Report.Elements {
		for _, p := range e.Points {
			for _, v := range []float64{p.MeasuredKg, p.EstimateKg, p.PredictedKg} {
				if v > 0 {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
	}
	if !(hi > 0) {
		return nil
	}
	// The 1:1 line's two points, beside the lots.
	line := []any{"1:1", lo, hi}
	if err := f.SetSheetRow(CalibrationLots, "J1", &line); err != nil {
		return err
	}
	rng := func(col string) string { return fmt.Sprintf("'%s'!$%s$2:$%s$%d", CalibrationLots, col, col, last) }
	marker := func(symbol, color string) excelize.ChartMarker {
		return excelize.ChartMarker{Symbol: symbol, Size: 6, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{color}}}
	}
	noLine := excelize.LineOptions{Type: excelize.LineNone}
	series := []excelize.ChartSeries{
		{Name: "model estimate", Categories: rng("D"), Values: rng("C"), Marker: marker("circle", "8C6D46"), Line: noLine},
		{Name: "calibrated, predicted from the other lots", Categories: rng("E"), Values: rng("C"), Marker: marker("diamond", "3F6E8C"), Line: noLine},
		{Name: "1:1", Categories: fmt.Sprintf("'%s'!$K$1:$L$1", CalibrationLots), Values: fmt.Sprintf("'%s'!$K$1:$L$1", CalibrationLots),
			Marker: excelize.ChartMarker{Symbol: "none"}, Line: excelize.LineOptions{Width: 1}},
	}
	title := func(t string) excelize.ChartTitle {
		return excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: t}}}
	}
	cell, _ := excelize.CoordinatesToCellName(1, at)
	return f.AddChart(CalibrationSheet, cell, &excelize.Chart{Type: excelize.Scatter, Series: series,
		Title:     title("Assay against estimate, every element (kg)"),
		XAxis:     excelize.ChartAxis{LogBase: 10, MajorGridLines: true, Title: title("estimate kg")},
		YAxis:     excelize.ChartAxis{LogBase: 10, MajorGridLines: true, Title: title("assay kg")},
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 720, Height: 480}})
}
