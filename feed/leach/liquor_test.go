package leach_test

import (
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
