package feed_test

import (
	"math"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/feed"
	"blackmass/feed/intake"
)

func leachLCO(t *testing.T, mut func(*feed.LeachOptions)) *feed.LeachReport {
	t.Helper()
	o := feed.DefaultLeachOptions()
	o.ExtractionOverride = map[string]float64{"*": 1}
	if mut != nil {
		mut(&o)
	}
	lr, err := feed.PlanLeachFor(map[string]float64{"LiCoO2": 1}, o, 1, 20)
	if err != nil {
		t.Fatal(err)
	}
	return lr
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g ± %g", what, got, want, tol)
	}
}

// Per kg of pure LiCoO2 at stoichiometry: 1.503 kg H2SO4 and 0.174 kg H2O2 (R1), 1.490 kg HCl
// and 0.362 kg Cl2 (R5): REFERENCES §5b, from the balanced equations of the leaching literature.
func TestLeachStoichiometryLiCoO2(t *testing.T) {
	lr := leachLCO(t, nil)
	near(t, "stoich kg H2SO4", lr.Reagents[0].StoichKg.P50, 1.503, 0.0075)
	near(t, "stoich kg H2O2", lr.Reagents[1].StoichKg.P50, 0.174, 0.001)
	lr = leachLCO(t, func(o *feed.LeachOptions) { o.Route = cathode.Hydrochloric; o.AcidWtPct = 32 })
	near(t, "stoich kg HCl", lr.Reagents[0].StoichKg.P50, 1.490, 0.0075)
	near(t, "kg Cl2", lr.Gases["Cl2"].Mol.P50*cathode.MolarMassOf("Cl2")/1000, 0.362, 0.002)
}

// Worked example (computed from 2LiCoO2 + 3H2SO4 + H2O2 → ...): 100 g/L of LiCoO2 leached with
// 2 mol/L H2SO4 consumes 1.5 × 100/97.871 = 1.533 mol/L, leaving about 0.47 mol/L free acid.
func TestLeachWorkedFreeAcid(t *testing.T) {
	lr := leachLCO(t, func(o *feed.LeachOptions) { o.RecipeAcidMolPerL = 2; o.RecipeH2O2VolPct = 5 })
	near(t, "free acid mol/L", lr.FreeAcidMolPerL.P50, 0.467, 0.005)
	near(t, "Co g/L", lr.Liquor.Elements["Co"].GPerL.P50, 100*0.60215, 0.05) // Co is 60.2 wt% of LiCoO2 (CIAAW 2021)
	near(t, "volume L", lr.Liquor.VolumeL.P50, 10, 1e-9)
	near(t, "acid ratio", lr.Reagents[0].Ratio.P50, 2/1.5/(100/97.871), 0.01)
}

// Litres from kg through the density table: 98 % H2SO4 is 1.836 g/mL at 20 °C (CRC Handbook /
// Perry's), 32 % HCl 1.159 g/mL (Perry's), 30 % H2O2 1.11 g/mL (reagent data).
func TestReagentDensities(t *testing.T) {
	for _, c := range []struct {
		r       string
		wt, rho float64
	}{{"H2SO4", 98, 1.836}, {"HCl", 32, 1.159}, {"H2O2", 30, 1.11}, {"HCl", 20.2, 1.099}} {
		d, err := feed.Density(c.r, c.wt)
		if err != nil {
			t.Fatal(err)
		}
		near(t, c.r+" density", d, c.rho, 0.002)
	}
	lr := leachLCO(t, nil)
	r := lr.Reagents[0]
	near(t, "litres = kg / density", r.Litres.P50, r.Kg.P50/1.8361, 1e-6)
	near(t, "kg commercial = kg pure / 0.98", r.Kg.P50, r.KgPure.P50/0.98, 1e-9)
	if _, err := feed.Density("H2SO4", 5); err == nil {
		t.Error("density outside the table should be an error")
	}
}

// Conservation and charge balance on a real lot, every route.
func TestLeachChargeBalanceAndScaling(t *testing.T) {
	for _, route := range cathode.Routes() {
		lr := leachLot(t, route, 100)
		if lr.Liquor.ChargeResidual > 1e-9 {
			t.Errorf("%s: liquor charge balance off by %.3g relative", route, lr.Liquor.ChargeResidual)
		}
		// Doubling pulp density halves the volume and doubles the concentrations.
		lr2 := leachLot(t, route, 200)
		near(t, route.String()+" volume", lr2.Liquor.VolumeL.P50, lr.Liquor.VolumeL.P50/2, 1e-6*lr.Liquor.VolumeL.P50)
		for el, c := range lr.Liquor.Elements {
			near(t, route.String()+" "+el+" g/L", lr2.Liquor.Elements[el].GPerL.P50, 2*c.GPerL.P50, 1e-6*c.GPerL.P50)
		}
	}
	// Zero extraction of an element gives none of it in the liquor.
	o := feed.DefaultLeachOptions()
	o.ExtractionOverride = map[string]float64{"Co": 0}
	lr, err := feed.PlanLeachFor(map[string]float64{"LiCoO2": 1, "LiNi0.8Mn0.1Co0.1O2": 1}, o, 1, 50)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := lr.Liquor.Elements["Co"]; ok {
		t.Errorf("Co in liquor with zero extraction: %+v", lr.Liquor.Elements["Co"])
	}
	if lr.Liquor.ChargeResidual > 1e-9 {
		t.Errorf("partial extraction: charge residual %g", lr.Liquor.ChargeResidual)
	}
}

func leachLot(t *testing.T, route cathode.Route, pulp float64) *feed.LeachReport {
	t.Helper()
	cat, _ := cathode.DefaultCatalogue()
	m, _ := feed.DefaultModel()
	lot := feed.NewLot(m, false)
	if err := readCSV(strings.NewReader(mixed), "t.csv", intake.Options{Catalogue: cat}, lot.Add); err != nil {
		t.Fatal(err)
	}
	o := feed.DefaultLeachOptions()
	o.Route, o.PulpDensityGPerL = route, pulp
	if route == cathode.Hydrochloric {
		o.AcidWtPct = 32
	}
	r, _, err := lot.Estimate(feed.EstimateOptions{Seed: 1, Samples: 300, Leach: &o})
	if err != nil {
		t.Fatal(err)
	}
	return r.Leach
}
