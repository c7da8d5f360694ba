package recover_test

import (
	"testing"

	"blackmass/feed/recover"
)

// The other Mn oxidants by hand, per kg Mn removed (modes: removal 0.99, excess x = 1.1, O3 use
// 0.7, SO2 use 0.8): Mn2+ + O3 + H2O -> MnO2 + O2 + 2 H+, 0.874 kg O3 (47.997/54.938) × x / use;
// Mn2+ + SO2 + O2 + 2 H2O -> MnO2 + SO4 2- + 4 H+, 1.166 kg SO2 (64.06/54.938) × x / use;
// Mn2+ + S2O8 2- + 2 H2O -> MnO2 + 2 SO4 2- + 4 H+, 4.334 kg Na2S2O8 (238.1/54.938) × x, and NaOH for
// 4 H+ plus 2 per excess persulfate decomposed: (4 + 2(x − 1))·39.997/54.938.
func TestOtherMnOxidants(t *testing.T) {
	t.Parallel()
	mnKg, x := 0.99*5, 1.1
	for _, c := range []struct {
		oxidant string
		kgPerKg float64
	}{{"O3", 0.874 * x / 0.7}, {"SO2", 1.166 * x / 0.8}, {"Na2S2O8", 4.334 * x}} {
		r := plan(t, one(1000, map[string]float64{"Mn": 5, "Li": 1}, 0), steps(step(recover.KindManganese,
			func(s *recover.Step) { s.Oxidant = c.oxidant })), 1)
		if got := reagentKg(t, r, "manganese", c.oxidant); !near(got, c.kgPerKg*mnKg, 2e-3) {
			t.Errorf("%s %g kg, want %g", c.oxidant, got, c.kgPerKg*mnKg)
		}
		if c.oxidant == "Na2S2O8" {
			if got, want := reagentKg(t, r, "manganese", "NaOH"), (4+2*(x-1))*39.997/54.938*mnKg; !near(got, want, 2e-3) {
				t.Errorf("NaOH with persulfate %g kg, want %g", got, want)
			}
		}
	}
}

// Products by hand, per kg metal (modes: precipitant excess 1.05, crystal yield 0.9):
// NiSO4 + 2 NaOH -> Ni(OH)2 + Na2SO4: 1.363 kg NaOH (79.994/58.693) × excess, 1.580 kg Ni(OH)2;
// NiSO4 + Na2CO3 -> NiCO3 + Na2SO4: 1.806 kg Na2CO3 (105.99/58.693) × excess, 2.022 kg NiCO3;
// CoSO4·7H2O: 4.770 kg per kg Co (281.1/58.933); Ni electrowinning 913.3 Ah/kg, so
// kWh/kg = 0.9133·U/CE (modes U 3.5 V, CE 0.95).
func TestMetalProducts(t *testing.T) {
	t.Parallel()
	ni := one(1000, map[string]float64{"Ni": 10, "Li": 1}, 0)
	r := plan(t, ni, steps(step(recover.KindNickel, nil)), 1)
	if got := reagentKg(t, r, "nickel", "NaOH"); !near(got, 1.363*10*1.05, 2e-3) {
		t.Errorf("NaOH %g kg, want %g", got, 1.363*10*1.05)
	}
	if got := phaseKg(t, solid(t, r, "Ni(OH)2"), "Ni(OH)2"); !near(got, 1.580*10, 1e-3) {
		t.Errorf("Ni(OH)2 %g kg, want %g", got, 1.580*10)
	}
	r = plan(t, ni, steps(step(recover.KindNickel, func(s *recover.Step) { s.Product = "carbonate" })), 1)
	if got := reagentKg(t, r, "nickel", "Na2CO3"); !near(got, 1.806*10*1.05, 2e-3) {
		t.Errorf("Na2CO3 %g kg, want %g", got, 1.806*10*1.05)
	}
	if got := phaseKg(t, solid(t, r, "NiCO3"), "NiCO3"); !near(got, 2.022*10, 1e-3) {
		t.Errorf("NiCO3 %g kg, want %g", got, 2.022*10)
	}
	r = plan(t, ni, steps(step(recover.KindNickel, func(s *recover.Step) { s.Product = "electrowin" })), 1)
	nkg := solid(t, r, "Ni cathode").DryKg.P50
	if got := r.Stages[0].KWh.P50 / nkg; !near(got, 0.9133*3.5/0.95, 1e-3) {
		t.Errorf("Ni %g kWh/kg, want %g", got, 0.9133*3.5/0.95)
	}
	co := one(1000, map[string]float64{"Co": 10}, 0)
	// CoSO4 + H2C2O4 + 2 H2O -> CoC2O4·2H2O + H2SO4: 2.139 kg H2C2O4·2H2O (126.07/58.933) per kg Co
	// in the liquor times the excess (mode 1.2), 3.105 kg product (182.98/58.933) per kg Co
	// precipitated (yield mode 0.9).
	r = plan(t, co, steps(step(recover.KindSX, nil), step(recover.KindCobalt, func(s *recover.Step) { s.Product = "oxalate" })), 1)
	inStrip := 10 * figure(t, r, "sx", "Co extracted")
	for _, g := range r.Stages[1].Reagents {
		if g.Name == "H2C2O4" && !near(g.Commercial.P50, 2.139*inStrip*1.2, 2e-3) {
			t.Errorf("oxalic acid dihydrate %g kg, want %g", g.Commercial.P50, 2.139*inStrip*1.2)
		}
	}
	if got := phaseKg(t, solid(t, r, "CoC2O4·2H2O"), "CoC2O4·2H2O"); !near(got, 3.105*inStrip*0.9, 2e-3) {
		t.Errorf("CoC2O4·2H2O %g kg, want %g", got, 3.105*inStrip*0.9)
	}
	r = plan(t, co, steps(step(recover.KindSX, nil), step(recover.KindCobalt, func(s *recover.Step) { s.Product = "sulfate" })), 1)
	coKg := 10 * figure(t, r, "sx", "Co extracted") * 0.9
	if got := phaseKg(t, solid(t, r, "CoSO4·7H2O"), "CoSO4·7H2O"); !near(got, 4.770*coKg, 1e-3) {
		t.Errorf("CoSO4·7H2O %g kg, want %g", got, 4.770*coKg)
	}
}
