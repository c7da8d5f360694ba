package intake_test

import (
	"strings"
	"testing"

	"blackmass/feed/intake"
)

// FuzzReadLiquor: a liquor file is read, or refused naming the file.
func FuzzReadLiquor(f *testing.F) {
	f.Add("element,value,unit\nLi,3.2,g/L\nFe(III),300,mg/L\nfree_acid,0.3,mol/L\nanion,chloride,\nvolume,1.2,m3\n")
	f.Add("element,value,unit\nCo,1,ppm\n")
	f.Fuzz(func(t *testing.T, text string) {
		m, err := intake.ReadLiquor(strings.NewReader(text), "l.csv")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "l.csv") {
				t.Fatalf("error without the file: %v", err)
			}
			return
		}
		for el, v := range m.GPerL {
			if !(v >= 0 && v <= 500) {
				t.Fatalf("%s %g g/L read", el, v)
			}
		}
	})
}

func TestReadLiquor(t *testing.T) {
	m, err := intake.ReadLiquor(strings.NewReader("\ufeffElement,Value,Unit\nLi,3.2,g/L\nFe,900,mg/L\nFe(III),300,mg/L\n"+
		"free_acid,0.3,mol/L\nanion,chloride,\nvolume,1.2,m3\n"), "l.csv")
	if err != nil {
		t.Fatal(err)
	}
	if m.GPerL["Li"] != 3.2 || m.GPerL["Fe"] != 0.9 || m.Fe3GPerL != 0.3 || m.FreeAcidMolPerL != 0.3 || m.Anion != "Cl" ||
		m.VolumeL != 1200 {
		t.Errorf("read %+v", m)
	}
	for _, c := range []struct{ in, want string }{
		{"", "l.csv: empty file"},
		{"element,value\nLi,1\n", "l.csv:1: missing column \"unit\""},
		{"element,value,unit\nfree_acid,0.3,g/L\n", "l.csv:2: unit \"g/L\": free acid is in mol/L"},
		{"element,value,unit\nanion,nitrate,\n", "l.csv:2: value \"nitrate\""},
		{"element,value,unit\nLi,900,g/L\n", "l.csv:2: value \"900\": above 500 g/L"},
		{"element,value,unit\nFe,1,g/L\nFe(III),2,g/L\n", "more Fe(III) than the 1 g/L of Fe"},
		{"element,value,unit\nfree_acid,0.3,mol/L\n", "l.csv: no element given"},
		{"element,value,unit\nS,3,g/L\n", "l.csv:2: element \"S\""},
	} {
		_, err := intake.ReadLiquor(strings.NewReader(c.in), "l.csv")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.in, err, c.want)
		}
	}
}

func TestReadReagentPrices(t *testing.T) {
	rp, err := intake.ReadReagentPrices(strings.NewReader("reagent,price_per_kg,currency,source\nNaOH,0.45,eur,x\nKMnO4,4,EUR,y\n"), "p.csv")
	if err != nil || rp.PerKg["NaOH"] != 0.45 || rp.Currency != "EUR" || rp.Line["KMnO4"] != 3 {
		t.Fatalf("%+v %v", rp, err)
	}
	for _, c := range []struct{ in, want string }{
		{"reagent,price_per_kg,source\nNaOH,1,x\n", "p.csv:1: missing column \"currency\""},
		{"reagent,price_per_kg,currency,source\nNaOH,1,EUR,x\nNaOH,2,EUR,x\n", "p.csv:3: reagent \"NaOH\": priced twice"},
		{"reagent,price_per_kg,currency,source\nNaOH,-1,EUR,x\n", "p.csv:2: price_per_kg \"-1\""},
		{"reagent,price_per_kg,currency,source\nNaOH,1,EUR,x\nKMnO4,1,USD,x\n", "p.csv:3: currency \"USD\""},
	} {
		if _, err := intake.ReadReagentPrices(strings.NewReader(c.in), "p.csv"); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.in, err, c.want)
		}
	}
}
