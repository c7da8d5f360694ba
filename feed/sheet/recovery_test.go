package sheet_test

import (
	"archive/zip"
	"bytes"
	"io/fs"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/data"
	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/run"
	"blackmass/feed/sheet"
)

// The Recovery sheet: present with a recovery plan, every number formatted, one page wide with
// its header row repeated, the chart of where each metal goes; absent without a plan.
func TestRecoverySheet(t *testing.T) {
	t.Parallel()
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	demo, err := fs.ReadFile(data.FS, "demo/lot-KR-2611.csv")
	if err != nil {
		t.Fatal(err)
	}
	lo := leach.DefaultOptions()
	fsheet := recover.DefaultFlowsheet()
	o := run.Options{Seed: 1, Samples: 200, Leach: &lo, Recover: &fsheet}
	r, err := run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: bytes.NewReader(demo)})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := sheet.Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	b1 := bytes.Clone(buf.Bytes())
	f, err := excelize.OpenReader(bytes.NewReader(b1))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	s := sheet.RecoverySheet
	rows, err := f.GetRows(s)
	if err != nil {
		t.Fatal(err)
	}
	checkRecoveryCells(t, f, s, rows)
	// Each table is kept whole on a page with its own header row (no repeated print title is
	// needed): one header per stage at least.
	headers := 0
	for _, row := range rows {
		if len(row) >= 4 && row[0] == "item" && row[1] == "P10" && row[3] == "P90" {
			headers++
		}
	}
	if headers < len(r.Recovery.Stages) {
		t.Errorf("%d table headers for %d stages", headers, len(r.Recovery.Stages))
	}
	lay, err := f.GetPageLayout(s)
	if err != nil || lay.FitToWidth == nil || *lay.FitToWidth != 1 || lay.Size == nil || *lay.Size != sheet.PaperA4 {
		t.Errorf("page layout %+v, %v: want A4, one page wide", lay, err)
	}
	withChart := charts(t, b1)
	// Without a plan, no sheet.
	o.Recover = nil
	r, err = run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: bytes.NewReader(demo)})
	if err != nil {
		t.Fatal(err)
	}
	buf.Reset()
	if err := sheet.Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	b2 := bytes.Clone(buf.Bytes())
	g, err := excelize.OpenReader(bytes.NewReader(b2))
	if err != nil {
		t.Fatal(err)
	}
	defer g.Close()
	if idx, _ := g.GetSheetIndex(s); idx >= 0 {
		t.Error("a Recovery sheet without a recovery plan")
	}
	if n := charts(t, b2); withChart != n+1 {
		t.Errorf("%d charts with the recovery sheet, %d without: want one more", withChart, n)
	}
}

// charts counts the chart parts of a workbook.
func charts(t *testing.T, b []byte) int {
	t.Helper()
	z, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, f := range z.File {
		if strings.HasPrefix(f.Name, "xl/charts/chart") {
			n++
		}
	}
	return n
}

// checkRecoveryCells wants on the recovery sheet s the reagents, products, electricity, the
// liquor in and the caution, and every number in a number format.
func checkRecoveryCells(t *testing.T, f *excelize.File, s string, rows [][]string) {
	t.Helper()
	wants := []string{"reagent NaOH", "product Co cathode, dry", "electricity", "Li to Li2CO3", "in: liquor", "licensed practice"}
	numbers, found := 0, map[string]bool{}
	for i, row := range rows {
		for j, v := range row {
			cell, _ := excelize.CoordinatesToCellName(j+1, i+1)
			for _, want := range wants {
				if strings.HasPrefix(v, want) || strings.Contains(v, want) {
					found[want] = true
				}
			}
			typ, _ := f.GetCellType(s, cell)
			if typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset {
				continue
			}
			if _, err := f.GetCellValue(s, cell); err != nil || v == "" || strings.ContainsAny(v[:1], "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ") {
				continue
			}
			numbers++
			id, _ := f.GetCellStyle(s, cell)
			st, err := f.GetStyle(id)
			if err != nil || (st.CustomNumFmt == nil && st.NumFmt == 0) {
				t.Errorf("%s!%s = %s has no number format", s, cell, v)
			}
		}
	}
	if numbers < 100 {
		t.Errorf("only %d numbers on the sheet", numbers)
	}
	for _, want := range wants {
		if !found[want] {
			t.Errorf("the sheet lacks %q", want)
		}
	}
}
