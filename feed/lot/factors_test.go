package lot

import (
	"math"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/dist"
	"blackmass/feed/manifest"
)

// twoGroupLot is a lot of two (chemistry, format) groups: LCO pouch cells and NMC622 packs.
func twoGroupLot(t *testing.T) *Lot {
	t.Helper()
	cat := cathodetest.Catalogue(t)
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	l := NewLot(m, false)
	for i, c := range []struct {
		label  string
		format manifest.Format
		wh     float64
		count  int
	}{{"LCO", manifest.Pouch, 15, 400}, {"NMC622", manifest.Pack, 2000, 3}} {
		ch, err := cat.ParseLabel(c.label)
		if err != nil {
			t.Fatal(err)
		}
		if err := l.Add(manifest.Line{Num: i + 2, ChemistryLabel: c.label, Chemistry: &ch, Format: c.format, EnergyWh: c.wh,
			Count: c.count, CellsPerItem: 1}); err != nil {
			t.Fatal(err)
		}
	}
	return l
}

// Sample by sample, the groups' elements sum to the lot's (conservation of mass): their means
// add up to the lot's mean; factors multiply each group's element exactly, leave the black mass
// and the compounds as they were, and the same seed gives the same draws.
func TestFactorsScaleGroupElements(t *testing.T) {
	t.Parallel()
	const seed, n = 3, 500
	res, s, err := twoGroupLot(t).Estimate(seed, n)
	if err != nil {
		t.Fatal(err)
	}
	for _, el := range []string{"Co", "Ni", "Li", "Al", "Cu"} {
		sum := 0.0
		for _, g := range res.Groups {
			sum += g.ElementsKg[el].Mean
		}
		if lot := res.Elements[el].Kg.Mean; math.Abs(sum-lot) > 1e-6*lot {
			t.Errorf("%s: groups' means sum to %g kg, the lot's mean is %g kg", el, sum, lot)
		}
	}
	if _, ok := res.Groups[0].ElementsKg["Ni"]; ok {
		t.Error("the LCO group reports nickel")
	}
	// Co ×0.5 on the LCO pouch group only, Li ×2 on every group; every other factor 1.
	factors := func(keys []FactorKey, d *dist.Drawer) [][]float64 {
		if d.Samples() != n {
			t.Errorf("factors drawn for %d samples, want %d", d.Samples(), n)
		}
		out := make([][]float64, len(keys))
		for i, k := range keys {
			f := 1.0
			switch {
			case k.Element == "Co" && k.Chemistry == "LCO" && k.Format == "pouch":
				f = 0.5
			case k.Element == "Li":
				f = 2
			}
			out[i] = make([]float64, n)
			for j := range out[i] {
				out[i][j] = f
			}
		}
		return out
	}
	cres, cs, err := twoGroupLot(t).EstimateWith(seed, n, factors)
	if err != nil {
		t.Fatal(err)
	}
	lcoCo := groupKg(t, twoGroupLot(t), seed, n, 0, "Co")
	for e, el := range cs.ElementNames {
		for i := range n {
			want := s.Elements[e][i]
			switch el {
			case "Co":
				want -= 0.5 * lcoCo[i]
			case "Li":
				want *= 2
			}
			if got := cs.Elements[e][i]; math.Abs(got-want) > 1e-9*math.Max(want, 1e-9) {
				t.Fatalf("%s sample %d: %g kg calibrated, want %g", el, i, got, want)
			}
		}
	}
	for i := range n {
		if cs.BlackMass[i] != s.BlackMass[i] {
			t.Fatalf("sample %d: black mass %g kg calibrated, %g kg not", i, cs.BlackMass[i], s.BlackMass[i])
		}
	}
	if cres.Groups[0].ElementsKg["Co"] != res.Groups[0].ElementsKg["Co"] {
		t.Error("a group's modelled elements changed with the factors")
	}
	again, _, err := twoGroupLot(t).EstimateWith(seed, n, factors)
	if err != nil || again.Elements["Co"] != cres.Elements["Co"] {
		t.Errorf("same seed, different result: %v", err)
	}
}

// groupKg returns the draws of group gi's element el, drawn again with the same seed.
func groupKg(t *testing.T, l *Lot, seed uint64, n, gi int, el string) []float64 {
	t.Helper()
	only := func(keys []FactorKey, d *dist.Drawer) [][]float64 {
		out := make([][]float64, len(keys))
		for k := range keys {
			out[k] = make([]float64, n)
			if k/len(l.comp.elements) == gi && keys[k].Element == el {
				for j := range out[k] {
					out[k][j] = 1
				}
			}
		}
		return out
	}
	_, s, err := l.EstimateWith(seed, n, only)
	if err != nil {
		t.Fatal(err)
	}
	for e, name := range s.ElementNames {
		if name == el {
			return s.Elements[e]
		}
	}
	t.Fatalf("no element %s", el)
	return nil
}
