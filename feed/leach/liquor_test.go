package leach_test

import (
	"math"
	"testing"

	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// The per-sample liquor is the one the report summarises: its concentrations give the report's
// percentiles, its iron splits into Fe(II) and Fe(III) that add up, and its charges balance
// in every sample (atomic weights CIAAW 2021; charges from the ions' formulas).
func TestLiquorSamplesMatchTheReport(t *testing.T) {
	t.Parallel()
	kg := map[string]float64{"LiNi0.6Mn0.2Co0.2O2": 0.6, "LiFePO4": 0.2, "Fe": 0.05, "Al": 0.03, "Cu": 0.04, "C": 0.3}
	for _, route := range []cathode.Route{cathode.SulfuricPeroxide, cathode.Hydrochloric, cathode.SulfuricSelective} {
		o := leach.DefaultOptions()
		o.Route, o.AcidWtPct = route, leach.DefaultAcidWtPct(route)
		lr, err := leach.PlanFor(tables(t), kg, o, 3, 200)
		if err != nil {
			t.Fatal(err)
		}
		ls := lr.LiquorSamples
		if ls == nil || len(ls.VolumeL) != 200 || ls.Anion != lr.Liquor.Anion {
			t.Fatalf("%s: liquor samples %+v", route, ls)
		}
		for el, c := range lr.Liquor.Elements {
			gPerL := make([]float64, len(ls.VolumeL))
			for i, v := range ls.VolumeL {
				gPerL[i] = ls.ElementKg[el][i] * 1000 / v
			}
			st := dist.Summarise(gPerL)
			near(t, route.String()+" "+el+" P50 g/L", st.P50, c.GPerL.P50, 1e-9*(1+c.GPerL.P50))
			near(t, route.String()+" "+el+" P90 g/L", st.P90, c.GPerL.P90, 1e-9*(1+c.GPerL.P90))
		}
		es := tables(t).Elements()
		for i := range ls.VolumeL {
			near(t, "Fe(II)+Fe(III)", ls.Fe2Kg[i]+ls.Fe3Kg[i], ls.ElementKg["Fe"][i], 1e-12)
			if ls.Fe2Kg[i] < -1e-15 || ls.Fe3Kg[i] < 0 {
				t.Fatalf("%s sample %d: negative iron %g / %g", route, i, ls.Fe2Kg[i], ls.Fe3Kg[i])
			}
			pos := ls.FreeAcidMol[i] * route.AcidProtons()
			for el, kgs := range ls.ElementKg {
				z := cathode.AqueousCharge(el)
				if el == "Fe" {
					pos += 2*ls.Fe2Kg[i]*1000/es.Weight("Fe") + 3*ls.Fe3Kg[i]*1000/es.Weight("Fe")
					continue
				}
				pos += z * kgs[i] * 1000 / es.Weight(el)
			}
			neg := ls.AnionMol[i] * route.AnionCharge()
			near(t, route.String()+" charge balance", pos, neg, 1e-9*neg)
		}
	}
}

// The liquor's water closes the mass balance: what goes in (black mass, acid and reductant as
// bought, make-up water at 0.998 21 kg/L, CRC Handbook at 20 °C) comes out as the dissolved
// metals, the anion, the free H+, the water and the gases (atomic weights CIAAW 2021). LiCoO2 dissolves
// whole with peroxide to spare, in HCl (Cl2) and by a bench recipe; short of peroxide at 90 °C the
// oxides' own oxygen leaves as O2 and the Co left keeps 1.5 O per Co(III) in the residue. One
// sample, so that its gases are the report's.
func TestLiquorWaterClosesTheMassBalance(t *testing.T) {
	t.Parallel()
	lt := tables(t)
	m := func(f string) float64 {
		g, err := lt.MolarMassG(f)
		if err != nil {
			t.Fatal(err)
		}
		return g / 1000
	}
	for _, c := range []struct {
		name string
		mut  func(*leach.Options)
	}{
		{"peroxide to spare", func(o *leach.Options) {}},
		{"peroxide short at 90 °C", func(o *leach.Options) { o.ReductantExcess, o.TemperatureC = 0.5, 90 }},
		{"hydrochloric", func(o *leach.Options) { o.Route, o.AcidWtPct = cathode.Hydrochloric, 32 }},
		{"bench recipe", func(o *leach.Options) { o.RecipeAcidMolPerL, o.RecipeH2O2VolPct, o.AcidExcess = 2, 8, 0 }},
	} {
		o := leach.DefaultOptions()
		o.ExtractionOverride = map[string]float64{"*": 1}
		c.mut(&o)
		lr, err := leach.PlanFor(lt, map[string]float64{"LiCoO2": 1}, o, 1, 1)
		if err != nil {
			t.Fatal(err)
		}
		ls := lr.LiquorSamples
		in := 1 + lr.WaterL.P50*0.99821
		for _, r := range lr.Reagents {
			in += r.Kg.P50 // every sample alike: the masses are fixed and the dose follows them
		}
		anion := m("SO4")
		if o.Route == cathode.Hydrochloric {
			anion = m("Cl")
		}
		out := ls.ElementKg["Li"][0] + ls.ElementKg["Co"][0] + ls.AnionMol[0]*anion +
			ls.FreeAcidMol[0]*o.Route.AcidProtons()*m("H") + ls.WaterKg[0]
		coLeftMol := 1/m("LiCoO2") - ls.ElementKg["Co"][0]/m("Co")
		out += coLeftMol * (m("Co") + 1.5*m("O"))
		for name, g := range lr.Gases {
			out += g.Mol.P50 * m(name)
		}
		if math.Abs(in-out) > 1e-9*in {
			t.Errorf("%s: %.9g kg in, %.9g kg out", c.name, in, out)
		}
		if ls.WaterKg[0] <= 0 || math.Abs(lr.Liquor.WaterKg.P50-ls.WaterKg[0]) > 1e-6*ls.WaterKg[0] {
			t.Errorf("%s: water %v kg", c.name, ls.WaterKg[0])
		}
	}
}

// Saturation is per kg of water. Nickel metal in sulfuric acid (Ni + H2SO4 → NiSO4 + H2) forms no
// water, so the liquor's water is the make-up water and the acid's 2 %: at 0.4 kg Ni in 5 L (a
// bench recipe of 3.5 mol/L acid) the ratio is the salt's g per 100 g of that water over its
// solubility, 37.74 g per 100 g water at 20 °C (CRC Handbook, 91st ed., aqueous solubility of
// inorganic compounds at various temperatures): NiSO4 is least soluble at the cool end of 20-60 °C.
func TestSaturationPerKgOfWater(t *testing.T) {
	t.Parallel()
	lt := tables(t)
	o := leach.DefaultOptions()
	o.Reductant, o.RecipeAcidMolPerL, o.LiquorVolumeL, o.AcidExcess, o.FreeAcidMolPerL = "none", 3.5, 5, 0, 0
	o.ExtractionOverride = map[string]float64{"*": 1}
	lr, err := leach.PlanFor(lt, map[string]float64{"Ni": 0.4}, o, 1, 10)
	if err != nil {
		t.Fatal(err)
	}
	acidKg := 3.5 * 5 * 98.072 / 1000 / 0.98 // H2SO4 98.072 g/mol (CIAAW 2021)
	waterKg := lr.WaterL.P50*0.99821 + acidKg*0.02
	near(t, "water kg", lr.Liquor.WaterKg.P50, waterKg, 1e-9)
	niSO4G := 400 / 58.6934 * 154.75 // NiSO4 154.75 g/mol (CIAAW 2021)
	const niSO4At20C = 37.74
	want := niSO4G / (niSO4At20C * 10 * waterKg)
	near(t, "NiSO4 saturation", lr.Saturation["NiSO4"].P50, want, 0.002*want)
	if perLitre := niSO4G / (niSO4At20C * 10 * lr.Liquor.VolumeL.P50); !(perLitre < 0.6 && want > 0.6) {
		t.Fatalf("the case should fall either side of the warning: %.3f per litre, %.3f per kg water", perLitre, want)
	}
	if !hasWarning(lr, "NiSO4 reaches") {
		t.Errorf("no NiSO4 warning at %.0f %% of its solubility: %q", 100*want, lr.Warnings)
	}
}
