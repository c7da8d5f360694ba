package sheet_test

import (
	"bytes"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/sheet"
)

// A quote's workbook says what was weighed: the wet mass, its moisture and the dry mass the
// black mass rests on, as the terminal and the JSON do.
func TestSummaryShowsWeighing(t *testing.T) {
	r := sampleReport(t, 3)
	r.Weighing = &assay.Weighing{WetMassKg: 212, MoistureWtPct: dist.Stat{P10: 8, P50: 8, P90: 8, Mean: 8},
		MoistureBasis: "given for the quote", DryMassKg: dist.Stat{P10: 195.04, P50: 195.04, P90: 195.04, Mean: 195.04}}
	var buf bytes.Buffer
	if err := sheet.Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, _ := f.GetRows(sheet.Summary)
	for _, row := range rows {
		if len(row) > 1 && row[0] == "Weighed" {
			if s := strings.Join(row[1:], " "); !strings.Contains(s, "212") || !strings.Contains(s, "195") ||
				!strings.Contains(s, "8") {
				t.Errorf("weighed row %q", s)
			}
			return
		}
	}
	t.Errorf("no Weighed row on the summary")
}
