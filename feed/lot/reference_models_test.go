package lot

import (
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
	"blackmass/feed/dist"
)

// cellModelMetalTolerance is how far outside the model's P10–P90 a published cell's metal per Ah
// may lie: these cells set the utilisation's spread (its P10 and P90 on the lowest and highest of
// them), and the catalogue's capacity is drawn around them too; beyond 10 % the model is off.
const cellModelMetalTolerance = 0.10

// Published cells weighed from their published geometry (testdata/reference/cell_models.csv):
// the share of its cathode's capacity each cell delivers lies inside the model's declared
// utilisation range, and the metal its cathode holds per Ah of nameplate inside the model's band.
func TestReferenceCellModels(t *testing.T) {
	tab := readReference(t, "cell_models.csv")
	cat := cathodetest.Catalogue(t)
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	p := m.get("all", "cathode_utilisation")
	if p == nil {
		t.Fatal("data/model.csv has no all/cathode_utilisation")
	}
	// The utilisation is global: any item's draws give its P10–P90.
	us := cellDraws(t, "NCA", referenceFormat(t, "pouch"), 0, 1)
	x := make([]float64, len(us))
	for i, d := range us {
		x[i] = d.g.utilisation
	}
	ust := dist.Summarise(x)
	lo, hi := ust.P10, ust.P90
	util := coverage{name: "published cells, cathode utilisation"}
	metal := coverage{name: "published cells, metal in the cathode per Ah"}
	for _, r := range tab.Rows {
		cell := r.Str("cell")
		u := referenceOptional(t, r, "utilisation")
		if u == 0 {
			e := cat.Lookup(r.Str("chemistry"))
			if e == nil {
				t.Fatalf("%s: %s not catalogued", cell, r.Str("chemistry"))
			}
			ah := referenceFloat(t, r, "nameplate_ah")
			volumeM3 := referenceFloat(t, r, "area_m2") * referenceFloat(t, r, "thickness_um") * 1e-6 * referenceFloat(t, r, "active_volume_share")
			massG := volumeM3 * referenceFloat(t, r, "site_density_mol_m3") * e.MolarMassGPerMol()
			u = ah * 1000 / massG / e.CapacityMAhPerG.Mode
			t.Logf("%-34s %-9s cathode %7.2f g for %6.2f Ah: %5.1f mAh/g of a practical %3.0f", cell, e.Key, massG, ah, ah*1000/massG, e.CapacityMAhPerG.Mode)
			checkCellModelMetal(t, &metal, cell, e, e.Key, r.Str("format"), ah, massG)
			if plain := r.Str("plain_label"); plain != e.Key {
				checkCellModelMetal(t, &metal, cell, e, plain, r.Str("format"), ah, massG)
			}
		}
		util.add(u >= lo && u <= hi)
		t.Logf("%-34s utilisation %.3f  model P10–P90 %.3f–%.3f, range %.2f–%.2f  [%s]", cell, u, lo, hi, p.Range.Min, p.Range.Max, r.Str("basis"))
		if u < p.Range.Min || u > p.Range.Max {
			t.Errorf("%s: utilisation %.3f outside the declared %.2f–%.2f it sets (%s)", cell, u, p.Range.Min, p.Range.Max, r.Str("source"))
		}
	}
	report(util)
	report(metal)
}

// checkCellModelMetal compares the metal in a published cell's cathode (massG of material e) with
// the model's P10–P90 for one item labelled label, of that format and nameplate ah.
func checkCellModelMetal(t *testing.T, cov *coverage, cell string, e *cathode.Entry, label, format string, ah, massG float64) {
	t.Helper()
	ds := cellDraws(t, label, referenceFormat(t, format), 0, ah)
	x := make([]float64, len(ds))
	for _, tm := range e.Formula.MassFractions(e.Formula.Elements()) {
		if tm.Symbol == "O" || tm.Symbol == "P" {
			continue
		}
		for i, d := range ds {
			x[i] = d.b.cam * tm.Amount / ah
		}
		st := dist.Summarise(x)
		pub := massG * tm.Amount / ah
		off := outside(pub, st.P10, st.P90)
		cov.add(off == 0)
		t.Logf("%-34s %-2s published %6.3f g/Ah  model (%s) P10–P90 %6.3f–%6.3f", cell, tm.Symbol, pub, label, st.P10, st.P90)
		if off > cellModelMetalTolerance {
			t.Errorf("%s %s: published %.3f g/Ah is %.0f %% outside the model's %.3f–%.3f for %s", cell, tm.Symbol, pub, 100*off, st.P10, st.P90, label)
		}
	}
}
