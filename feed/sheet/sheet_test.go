package sheet_test

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"regexp"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/leach"
	"blackmass/feed/report"
	"blackmass/feed/run"
	"blackmass/feed/sheet"
	"blackmass/feed/value"
)

func sampleReport(tb testing.TB, lines int) *report.Report {
	tb.Helper()
	return reportWith(tb, lines, leach.DefaultOptions())
}

func reportWith(tb testing.TB, lines int, lo leach.Options, edits ...func(*run.Options)) *report.Report {
	tb.Helper()
	var b strings.Builder
	b.WriteString("id,description,chemistry,format,capacity,cells_per_pack,count,mass\n")
	rows := []string{"LCO,pouch,3000 mAh,,3,45 g", "NMC811,cylindrical,4.8 Ah,,7,69 g", "LFP,pack,960 Wh,15s4p,1,9 kg", "NMC622,module,5.2 kWh,12s2p,1,31 kg"}
	for i := range lines {
		fmt.Fprintf(&b, "L%d,item %d,%s\n", i, i, rows[i%len(rows)])
	}
	tables, err := run.DefaultTables()
	if err != nil {
		tb.Fatal(err)
	}
	o := run.Options{Seed: 1, Samples: 200, Leach: &lo, KeepLines: true, Containers: value.DefaultContainers(),
		Inputs: report.Inputs{LotID: "=cmd|' /C calc'!A0", Version: "test"}}
	for _, e := range edits {
		e(&o)
	}
	r, err := run.Estimate(tables, o, run.Manifest{Name: "gen.csv", R: strings.NewReader(b.String())})
	if err != nil {
		tb.Fatal(err)
	}
	return r
}

// Ensure the workbook stores numbers as numbers, has every sheet, and its live formulas agree
// with the Go values when evaluated by the calculation engine.
func TestWorkbookContent(t *testing.T) {
	r := sampleReport(t, 40)
	var buf bytes.Buffer
	if err := sheet.Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := f.GetRows(sheet.Lines, excelize.Options{RawCellValue: true})
	if err != nil || len(rows) != 42 { // header, 40 lines, the totals row
		t.Fatalf("lines sheet: %d rows, %v", len(rows), err)
	}
	for _, c := range []string{"E2", "F2", "H2", "Q2", "S2"} { // count, energy, black mass, modelled mass, cathode
		if typ, _ := f.GetCellType(sheet.Lines, c); typ == excelize.CellTypeInlineString || typ == excelize.CellTypeSharedString {
			t.Errorf("Lines!%s is stored as text", c)
		}
	}
	// The summary's table of the black mass lists every element, in the report's order, under
	// the black mass's row: P50 kg in C, mean kg in H.
	summary, _ := f.GetRows(sheet.Summary)
	bm := 0
	for i, row := range summary {
		if len(row) > 0 && row[0] == "Black mass" {
			bm = i + 1
			break
		}
	}
	if bm == 0 {
		t.Fatal("no black-mass row on the summary")
	}
	for i, sym := range r.ElementOrder {
		if a := summary[bm+i][0]; a != sym {
			t.Fatalf("summary row %d: %q, want %s", bm+i+1, a, sym)
		}
		got := cellFloat(t, f, sheet.Summary, fmt.Sprintf("C%d", bm+i+1))
		mean := cellFloat(t, f, sheet.Summary, fmt.Sprintf("H%d", bm+i+1))
		if got != r.Elements[sym].Kg.P50 || mean != r.Elements[sym].Kg.Mean {
			t.Errorf("summary %s P50 %v mean %v, report %v %v", sym, got, mean, r.Elements[sym].Kg.P50, r.Elements[sym].Kg.Mean)
		}
	}
	// Editing the price drives the cost formula.
	_ = f.SetCellValue(sheet.Leach, "G4", 2.5)
	v, err := f.CalcCellValue(sheet.Leach, "H4", excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	want := 2.5 * r.Leach.Reagents[0].Kg.P50
	var got float64
	fmt.Sscan(v, &got)
	if d := got - want; d > 1e-6*want || d < -1e-6*want {
		t.Errorf("cost after editing the price: %v, want %v", got, want)
	}
	// A lot id that looks like a formula is text.
	if fm, _ := f.GetCellFormula(sheet.Summary, "B3"); fm != "" {
		t.Errorf("lot id became a formula %q", fm)
	}
	for _, s := range []string{sheet.Summary, sheet.Leach, sheet.WeighIn} {
		if idx, _ := f.GetSheetIndex(s); idx < 0 {
			t.Errorf("missing sheet %s", s)
		}
	}
}

func cellFloat(t *testing.T, f *excelize.File, s, c string) float64 {
	t.Helper()
	v, err := f.GetCellValue(s, c, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	var x float64
	if _, err := fmt.Sscan(v, &x); err != nil {
		t.Fatalf("%s!%s = %q", s, c, v)
	}
	return x
}

// BenchmarkWorkbook100k writes the workbook of a 100,000-line lot; the lines sheet goes through
// the stream writer, which spills to a temporary file past 16 MB.
func BenchmarkWorkbook100k(b *testing.B) {
	const n = 100_000
	r := sampleReport(b, n)
	b.ReportAllocs()
	for b.Loop() {
		if err := sheet.Write(io.Discard, r); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/line")
}

// The dosing calculator's formulas, evaluated by the calculation engine at the report's own
// settings, give the acid the Monte Carlo quotes (to within the P50-of-a-sum difference), and an
// edited excess factor moves the result as the formula says.
func TestDosingCalculator(t *testing.T) {
	recipe := leach.DefaultOptions()
	recipe.RecipeAcidMolPerL, recipe.RecipeH2O2VolPct = 2.5, 4
	for _, c := range []struct {
		name string
		opt  leach.Options
		tol  float64 // relative: the planner's P50 of a sum differs from the sum of P50s
	}{{"planner", leach.DefaultOptions(), 0.01}, {"recipe", recipe, 1e-6}} {
		t.Run(c.name, func(t *testing.T) {
			r := reportWith(t, 12, c.opt)
			f, err := sheet.Build(r)
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			rows, _ := f.GetRows(sheet.Leach)
			find := func(label string) string {
				for i, row := range rows {
					if len(row) > 0 && row[0] == label {
						return fmt.Sprintf("B%d", i+1)
					}
				}
				t.Fatalf("no row %q", label)
				return ""
			}
			calc := func(cell string) float64 {
				v, err := f.CalcCellValue(sheet.Leach, cell, excelize.Options{RawCellValue: true})
				if err != nil {
					t.Fatalf("%s: %v", cell, err)
				}
				var x float64
				fmt.Sscan(v, &x)
				return x
			}
			near := func(what string, got, want float64) {
				if got < want*(1-c.tol) || got > want*(1+c.tol) {
					t.Errorf("%s: calculator %.6g, report %.6g", what, got, want)
				}
			}
			near("acid kg", calc(find("acid to buy (kg)")), r.Leach.Reagents[0].Kg.P50)
			near("H2O2 kg", calc(find("H2O2 to buy (kg)")), r.Leach.Reagents[1].Kg.P50)
			if c.name == "recipe" {
				near("make-up water L", calc(find("make-up water (L)")), r.Leach.WaterL.P50)
				return
			}
			_ = f.SetCellValue(sheet.Leach, find("acid excess (× stoichiometry)"), 1.3)
			acid := r.Leach.Reagents[0]
			want := (acid.StoichKg.P50*1.3 + r.Leach.Settings.FreeAcidMolPerL*r.Leach.Liquor.VolumeL.P50*acid.MolarMass/1000) / (acid.StrengthWt / 100)
			if got := calc(find("acid to buy (kg)")); got < want*(1-1e-9) || got > want*(1+1e-9) {
				t.Errorf("after editing the excess: %.6f kg, want %.6f", got, want)
			}
		})
	}
}

// BenchmarkWorkbook10kVsStreamFloor compares the whole 10,000-line workbook with the floor: the
// same rows through the xlsx library's stream writer alone. The two alternate in one loop, each
// on a collected heap, and the ratio is reported as x-floor (the goal is at most 1.5).
func BenchmarkWorkbook10kVsStreamFloor(b *testing.B) {
	const n = 10_000
	r := sampleReport(b, n)
	b.ReportAllocs()
	var wholeNs, floorNs int64
	for b.Loop() {
		runtime.GC()
		t0 := time.Now()
		if err := sheet.Write(io.Discard, r); err != nil {
			b.Fatal(err)
		}
		wholeNs += time.Since(t0).Nanoseconds()
		runtime.GC()
		t1 := time.Now()
		streamFloor(b, r)
		floorNs += time.Since(t1).Nanoseconds()
	}
	b.ReportMetric(float64(wholeNs)/float64(b.N)/1e6, "workbook-ms")
	b.ReportMetric(float64(floorNs)/float64(b.N)/1e6, "floor-ms")
	b.ReportMetric(float64(wholeNs)/float64(floorNs), "x-floor")
}

// streamFloor writes the report's lines through the stream writer into an otherwise empty file.
func streamFloor(b *testing.B, r *report.Report) {
	f := excelize.NewFile()
	defer f.Close()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		b.Fatal(err)
	}
	for i, l := range r.Lines {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		row := []any{l.ID, l.Description, l.ChemistryLabel, l.Format, l.CapacityText, "cell", l.CellsPerItem, l.Count, l.MeasuredMassKg, l.Notes, l.Application,
			l.Line, l.Chemistry, l.EnergyWhPerItem, l.ModelMassKgEach, l.MeasuredWhPerKg, l.CathodeKg, l.BlackMassKg, ""}
		if err := sw.SetRow(cell, row); err != nil {
			b.Fatal(err)
		}
	}
	if err := sw.Flush(); err != nil {
		b.Fatal(err)
	}
	if err := f.Write(io.Discard); err != nil {
		b.Fatal(err)
	}
}

// Print setup: A4 by default (Letter on request), the lines sheet at 100 % with its header row
// and id column repeated on every page; every formula stored with its value (read from the raw
// XML, as a viewer that does not recalculate would).
func TestPrintSetupAndCachedValues(t *testing.T) {
	r := sampleReport(t, 8)
	for _, c := range []struct {
		paper int
		name  string
	}{{sheet.PaperA4, "A4"}, {sheet.PaperLetter, "Letter"}} {
		t.Run(c.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := sheet.WriteOn(&buf, r, c.paper); err != nil {
				t.Fatal(err)
			}
			f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			for _, s := range f.GetSheetList() {
				pl, err := f.GetPageLayout(s)
				if err != nil || pl.Size == nil || *pl.Size != c.paper {
					t.Errorf("%s: paper %v, want %d (%v)", s, pl.Size, c.paper, err)
				}
			}
			names := f.GetDefinedName()
			found := false
			for _, n := range names {
				if n.Name == "_xlnm.Print_Titles" && n.Scope == sheet.Lines && strings.Contains(n.RefersTo, "$1:$1") {
					found = true
				}
			}
			if !found {
				t.Errorf("no print titles on the lines sheet: %+v", names)
			}
			zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
			if err != nil {
				t.Fatal(err)
			}
			formulas, withValue := 0, 0
			for _, zf := range zr.File {
				if !strings.HasPrefix(zf.Name, "xl/worksheets/") {
					continue
				}
				rc, _ := zf.Open()
				b, _ := io.ReadAll(rc)
				_ = rc.Close()
				formulas += strings.Count(string(b), "<f>")
				withValue += len(regexp.MustCompile(`</f><v>[^<]*</v>`).FindAll(b, -1))
			}
			if formulas == 0 || formulas != withValue {
				t.Errorf("%d formulas, %d stored with their value", formulas, withValue)
			}
		})
	}
}
