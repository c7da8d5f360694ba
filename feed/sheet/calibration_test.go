package sheet

import (
	"archive/zip"
	"bytes"
	"fmt"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/calibrate"
)

// calibrationOutcome fits invented lots of one chemistry and format, their cobalt 0.8 of the
// estimate.
func calibrationOutcome(t *testing.T) *calibrate.Outcome {
	t.Helper()
	var lots []calibrate.Lot
	for i, kg := range []float64{10, 14, 20, 28, 40} {
		lots = append(lots, calibrate.Lot{ID: fmt.Sprintf("INV-%d", i+1), Measures: []calibrate.Measure{{Element: "Co",
			MeasuredKg: 0.8 * kg * (1 + 0.02*float64(i-2)), MeasuredSDKg: 0.03 * kg, EstimateSDKg: 0.15 * kg,
			Parts: []calibrate.Part{{Family: "NMC622", Format: "pack", Kg: kg}}}}})
	}
	c, r, err := calibrate.Fit(lots, calibrate.DefaultOptions(time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC)))
	if err != nil {
		t.Fatal(err)
	}
	c.Version = 4
	return &calibrate.Outcome{Register: "bench.db", Calibration: c, Report: r,
		Skipped: []calibrate.Skipped{{Lot: "INV-9", Reason: "its assay holds no element the estimate tracks"}}}
}

// The calibration workbook holds the figures, every lot, a chart over the lots' rows, and the
// same outcome gives the same bytes.
func TestCalibrationWorkbook(t *testing.T) {
	t.Parallel()
	o := calibrationOutcome(t)
	var a, b bytes.Buffer
	if err := WriteCalibration(&a, o); err != nil {
		t.Fatal(err)
	}
	if err := WriteCalibration(&b, o); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("the same calibration gave different bytes")
	}
	zr, err := zip.NewReader(bytes.NewReader(a.Bytes()), int64(a.Len()))
	if err != nil {
		t.Fatal(err)
	}
	chart := false
	for _, f := range zr.File {
		chart = chart || f.Name == "xl/charts/chart1.xml"
	}
	if !chart {
		t.Error("no chart")
	}
	f, err := excelize.OpenReader(bytes.NewReader(a.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, _ := f.GetRows(CalibrationLots)
	if len(rows) != 6 || rows[1][1] != "INV-1" {
		t.Errorf("lots sheet: %v", rows)
	}
	if v, _ := f.GetCellValue(CalibrationSheet, "A1"); v != "Calibration 4 of register bench.db" {
		t.Errorf("A1 %q", v)
	}
	all, _ := f.GetRows(CalibrationSheet)
	found := false
	for _, r := range all {
		found = found || (len(r) > 1 && r[0] == "INV-9")
	}
	if !found {
		t.Error("the skipped lot is not named")
	}
}
