package feed_test

import (
	"bytes"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/cathode"
	"blackmass/feed"
)

// A manifest typed into a spreadsheet by hand (numbers as numbers, a title row above the header
// on another sheet) reads like the CSV.
func TestReadManifestXLSX(t *testing.T) {
	f := excelize.NewFile()
	_ = f.SetSheetName("Sheet1", "Notes")
	_ = f.SetCellValue("Notes", "A1", "received 2026-11-30")
	_, _ = f.NewSheet("Intake")
	_ = f.SetSheetRow("Intake", "A1", &[]any{"# intake list"})
	_ = f.SetSheetRow("Intake", "A2", &[]any{"ID", "Chemistry", "Format", "Capacity", "Qty", "Weight"})
	_ = f.SetSheetRow("Intake", "A3", &[]any{"x1", "NMC811", "pouch", "60 Wh", 10, "0.25 kg"})
	_ = f.SetSheetRow("Intake", "A4", &[]any{"x2", "LFP", "prismatic", "280 Ah", 2, "5.4 kg"})
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		t.Fatal(err)
	}
	cat, _ := cathode.DefaultCatalogue()
	var got []feed.Line
	err := feed.ReadManifestXLSX(bytes.NewReader(buf.Bytes()), "hand.xlsx", "Intake", feed.ManifestOptions{Catalogue: cat}, func(l feed.Line) error {
		got = append(got, l)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 || got[0].Count != 10 || got[0].EnergyWh != 60 || got[1].ChargeAh != 280 || got[0].Num != 3 {
		t.Fatalf("lines: %+v", got)
	}
	err = feed.ReadManifestXLSX(bytes.NewReader(buf.Bytes()), "hand.xlsx", "Nope", feed.ManifestOptions{Catalogue: cat}, func(feed.Line) error { return nil })
	if err == nil || !strings.Contains(err.Error(), `no sheet "Nope"`) {
		t.Errorf("missing sheet: %v", err)
	}
	// The first sheet is the default; here it holds no manifest.
	err = feed.ReadManifestXLSX(bytes.NewReader(buf.Bytes()), "hand.xlsx", "", feed.ManifestOptions{Catalogue: cat}, func(feed.Line) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "hand.xlsx[Notes]:1") {
		t.Errorf("first sheet: %v", err)
	}
	_ = f.SetCellValue("Intake", "E4", -2)
	buf.Reset()
	_ = f.Write(&buf)
	err = feed.ReadManifestXLSX(bytes.NewReader(buf.Bytes()), "hand.xlsx", "Intake", feed.ManifestOptions{Catalogue: cat}, func(feed.Line) error { return nil })
	if err == nil || !strings.Contains(err.Error(), `hand.xlsx[Intake]:4: count "-2"`) {
		t.Errorf("bad count: %v", err)
	}
	if err := feed.ReadManifestXLSX(strings.NewReader("not a zip"), "x.xlsx", "", feed.ManifestOptions{Catalogue: cat}, func(feed.Line) error { return nil }); err == nil {
		t.Error("garbage accepted")
	}
}

func FuzzReadAssay(f *testing.F) {
	f.Add("element,value,unit,uncertainty\nCo,20,wt%,0.5\nLi,35,g/kg,\n")
	f.Add("element,value,unit\nNi,1e5,ppm\n")
	f.Fuzz(func(t *testing.T, s string) {
		a, err := feed.ReadAssay(strings.NewReader(s), "fuzz.csv")
		if err != nil {
			return
		}
		sum := 0.0
		for _, v := range a.Values {
			if !(v.WtPct >= 0 && v.SigmaWtPct >= 0) {
				t.Fatalf("accepted %+v", v)
			}
			sum += v.WtPct
		}
		if sum > 100.5 {
			t.Fatalf("accepted a sum of %v wt%%", sum)
		}
	})
}
