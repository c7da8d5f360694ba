package intake_test

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/intake"
	"blackmass/feed/manifest"
)

func hasNote(notes []string, parts ...string) bool {
	return slices.ContainsFunc(notes, func(n string) bool {
		for _, p := range parts {
			if !strings.Contains(n, p) {
				return false
			}
		}
		return true
	})
}

// A manifest as a bench writes it: a totals row (checked against the lines), a line of free
// text, and a notes block below a blank row are read past with a note naming each line; a
// quoted decimal comma with a leading zero is a decimal; volts and charge in one cell give the
// energy; a line with a total mass and no count is one bag weighed whole.
func TestTrailingRowsAndBenchCells(t *testing.T) {
	t.Parallel()
	lines, info, err := readFile(t, "trailing-rows-GH-0702.csv", intake.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(lines) != 5 {
		t.Fatalf("%d lines, want 5", len(lines))
	}
	for _, want := range [][]string{
		{"line 9: a totals row", "count 162 matches", "total_mass 32.5 kg matches"},
		{"line 10: free text", "checked by the intake clerk"},
		{"line 12: text below a blank row", "ends the table"},
		{"2 rows after the end of the table (line 12)"},
		{"line 8: no count", "12.4 kg", "bag weighed whole"},
		{"line 6: capacity \"3.6V 3000mAh\"", "3.6 V", "10.8 Wh"},
		{"line 7: capacity \"18V 5Ah\"", "18 V", "90 Wh"},
	} {
		if !hasNote(info.Notes, want...) {
			t.Errorf("no note %q in\n%s", want, strings.Join(info.Notes, "\n"))
		}
	}
	// "0,045 kWh" is 45 Wh; 3.6 V × 3 Ah = 10.8 Wh; 18 V × 5 Ah = 90 Wh.
	for i, want := range map[int]float64{1: 45, 2: 10.8, 3: 90} {
		if math.Abs(lines[i].EnergyWh-want) > 1e-9 {
			t.Errorf("line %d: %v Wh, want %v", lines[i].Num, lines[i].EnergyWh, want)
		}
	}
	bag := lines[4]
	if !bag.CountUnknown || bag.Count != 1 || bag.MassKg != 12.4 || !bag.MassOnly() {
		t.Errorf("bag: %+v", bag)
	}
	r := estimateLines(t, lines, 200)
	if r.BlackMassKg.P50 <= 0 || r.Lot.LinesByMassOnly != 1 {
		t.Errorf("estimate of the lot: black mass %v, lines by mass %d", r.BlackMassKg, r.Lot.LinesByMassOnly)
	}
}

// A totals row that disagrees with the lines says so, without stopping the reading.
func TestTotalsRowMismatch(t *testing.T) {
	t.Parallel()
	in := "id,chemistry,format,capacity,count,mass\na1,LCO,pouch,11 Wh,10,45 g\na2,LCO,pouch,11 Wh,5,45 g\nSum,,,,16,0.7 kg\n"
	var n int
	info, err := intake.ReadCSV(strings.NewReader(in), "m.csv", intake.Options{Catalogue: cathodetest.Catalogue(t)}, func(manifest.Line) error { n++; return nil })
	if err != nil {
		t.Fatal(err)
	}
	if n != 2 || !hasNote(info.Notes, "line 4: a totals row", "count 16, but the lines above hold 15 items", "mass 0.7 kg, but the lines above weigh 0.675 kg") {
		t.Errorf("%d lines, notes %q", n, info.Notes)
	}
}

// Bad variants: a line after the end of the table, an unquoted decimal comma in a
// comma-separated file, volts in the capacity that disagree with the voltage column.
func TestTrailingRowErrors(t *testing.T) {
	t.Parallel()
	for name, want := range map[string][]string{
		"line-after-table-end.csv":   {"line-after-table-end.csv:6: a manifest line after the end of the table", "above line 5"},
		"unquoted-decimal-comma.csv": {"unquoted-decimal-comma.csv:3: a value in column 7", `"3" and "5 Ah"`, "semicolons"},
		"volts-disagree.csv":         {`volts-disagree.csv:3: voltage "36": disagrees with the capacity's 18 V`},
	} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "bad", name))
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		_, err = intake.ReadCSV(strings.NewReader(string(b)), name, intake.Options{Catalogue: cathodetest.Catalogue(t)}, func(manifest.Line) error { n++; return nil })
		for _, w := range want {
			if err == nil || !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %v, want %q", name, err, w)
			}
		}
	}
}

// Batteries that are not lithium-ion are read (not refused as unknown chemistries), kept out of
// the black mass, and listed counted and weighed with what they would bring.
func TestOtherBatteriesKeptApart(t *testing.T) {
	t.Parallel()
	lines, _, err := readFile(t, "other-batteries-GH-0703.csv", intake.Options{})
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[string]int{}
	for _, l := range lines {
		if l.NonLithium != nil {
			kinds[l.NonLithium.Kind] = l.Num
		}
	}
	want := map[string]int{"NiMH": 5, "NiCd": 6, "lead-acid": 7, "alkaline": 8, "zinc-carbon": 9, "zinc-air": 10}
	for k, n := range want {
		if kinds[k] != n {
			t.Errorf("%s: line %d, want %d", k, kinds[k], n)
		}
	}
	r := estimateLines(t, lines, 200)
	alone := estimateLines(t, lines[:1], 200)
	if r.BlackMassKg != alone.BlackMassKg || r.Lot.Lines != 1 || r.Lot.Items != 60 {
		t.Errorf("other batteries changed the black mass: %v vs %v (lines %d, items %d)", r.BlackMassKg, alone.BlackMassKg, r.Lot.Lines, r.Lot.Items)
	}
	// Measured masses: 80 × 27 g, 6 × 0.9 kg, 3 × 2.4 kg, 200 × 23 g, none, 30 × 0.8 g.
	wantKg := map[string]float64{"NiMH": 2.16, "NiCd": 5.4, "lead-acid": 7.2, "alkaline": 4.6, "zinc-carbon": 0, "zinc-air": 0.024}
	if len(r.NonLithium) != len(wantKg) {
		t.Fatalf("non-lithium lines %+v", r.NonLithium)
	}
	for _, nl := range r.NonLithium {
		if math.Abs(nl.MassKg-wantKg[nl.Kind]) > 1e-9 {
			t.Errorf("%s: %v kg, want %v", nl.Kind, nl.MassKg, wantKg[nl.Kind])
		}
		if !slices.Contains(r.Warnings, nl.Warning) {
			t.Errorf("%s: no warning in the report", nl.Kind)
		}
	}
	if nl := r.NonLithium[5]; nl.Kind != "zinc-air" || nl.Items != 30 {
		t.Errorf("zinc-air: %+v", nl)
	}
	if nl := r.NonLithium[4]; nl.LinesWithoutMass != 1 {
		t.Errorf("zinc-carbon: %+v", nl)
	}
}

// A manifest with a per-item mass column and a total mass column: most lines give one item's
// mass, a bag weighed whole gives its total, and a line giving both is read when they agree
// (count × mass = total mass) and refused, naming the line and column, when they do not.
func TestMassAndTotalMassColumns(t *testing.T) {
	t.Parallel()
	hdr := "id,chemistry,format,capacity,count,mass,total_mass\n"
	lines, err := readString(t, hdr+
		"p1,NMC532,pack,90 Wh,40,0.62 kg,\n"+
		"p2,Li-ion,cylindrical,,,,9.5 kg\n"+
		"p3,NMC622,pack,180 Wh,12,,13.8 kg\n"+
		"p4,LFP,pack,960 Wh,2,8.9 kg,17.8 kg\n")
	if err != nil {
		t.Fatal(err)
	}
	if len(lines) != 4 {
		t.Fatalf("%d lines, want 4", len(lines))
	}
	// p1: 0.62 kg each; p2: one bag of 9.5 kg; p3: 13.8 kg / 12 = 1.15 kg each; p4: 8.9 kg each
	// (2 × 8.9 = 17.8 kg, the total given).
	for i, want := range []float64{0.62, 9.5, 1.15, 8.9} {
		if math.Abs(lines[i].MassKg-want) > 1e-9 {
			t.Errorf("line %d: %v kg per item, want %v", lines[i].Num, lines[i].MassKg, want)
		}
	}
	if !lines[1].CountUnknown {
		t.Errorf("line %d: a bag weighed whole should have an unknown count", lines[1].Num)
	}
	_, err = readString(t, hdr+"p1,NMC532,pack,90 Wh,40,0.62 kg,\np4,LFP,pack,960 Wh,2,8.9 kg,20 kg\n")
	var ie *intake.Error
	if !errors.As(err, &ie) || ie.Line != 3 || ie.Column != "total_mass" || !strings.Contains(ie.Reason, "17.8") {
		t.Errorf("count × mass 17.8 kg against a total of 20 kg: got %v, want an error on line 3, column total_mass, naming 17.8 kg", err)
	}
}
