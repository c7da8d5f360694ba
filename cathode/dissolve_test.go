package cathode_test

import (
	"math"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
)

func mustReact(t testing.TB, formula string, route cathode.Route) cathode.Reaction {
	t.Helper()
	sp, err := cathode.NewSpecies(mustFormula(t, formula))
	if err != nil {
		t.Fatal(err)
	}
	rx, err := cathode.Dissolve(sp, route, nil)
	if err != nil {
		t.Fatal(err)
	}
	return rx
}

func cation(rx cathode.Reaction, sym string) float64 {
	for _, c := range rx.Cations {
		if c.Symbol == sym {
			return c.Mol
		}
	}
	return 0
}

// Balanced equations of the leaching literature, per mole of solid, reproduced by the charge
// balance (nothing below is typed in per chemistry in the program).
func TestLiteratureEquations(t *testing.T) {
	// 2LiCoO2 + 3H2SO4 + H2O2 -> Li2SO4 + 2CoSO4 + 4H2O + O2 (standard textbook form of the
	// reductive sulfuric leach; e.g. Shin et al., Hydrometallurgy 79 (2005) 172).
	rx := mustReact(t, "LiCoO2", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/LiCoO2", rx.AcidMol, 1.5, 1e-12)
	approx(t, "H2O2/LiCoO2", rx.H2O2ReductantMol+rx.H2O2OxidantMol, 0.5, 1e-12)
	approx(t, "H2O/LiCoO2", rx.WaterMol, 2, 1e-12)
	approx(t, "O2/LiCoO2", rx.O2Mol, 0.5, 1e-12)
	approx(t, "Co2+/LiCoO2", cation(rx, "Co"), 1, 1e-12)

	// 2LiCoO2 + 8HCl -> 2LiCl + 2CoCl2 + Cl2 + 4H2O (Xuan, Otsuki, Chagnes, RSC Adv. 2019, same
	// form for NMC811; Zhang et al., Hydrometallurgy 47 (1998) 259 for LiCoO2).
	rx = mustReact(t, "LiCoO2", cathode.Hydrochloric)
	approx(t, "HCl/LiCoO2", rx.AcidMol, 4, 1e-12)
	approx(t, "Cl2/LiCoO2", rx.Cl2Mol, 0.5, 1e-12)
	approx(t, "H2O/LiCoO2 (HCl)", rx.WaterMol, 2, 1e-12)
	approx(t, "Cl- left/LiCoO2", rx.AnionMol, 3, 1e-12)
	rx = mustReact(t, "LiNi0.8Mn0.1Co0.1O2", cathode.Hydrochloric)
	approx(t, "HCl/NMC811", rx.AcidMol, 4, 1e-12)
	approx(t, "Cl2/NMC811", rx.Cl2Mol, 0.5, 1e-12)

	// 2LiFePO4 + H2SO4 + H2O2 -> Li2SO4 + 2FePO4 + 2H2O (selective oxidative Li leach;
	// Li et al., ACS Sustain. Chem. Eng. 5 (2017) 8017).
	rx = mustReact(t, "LiFePO4", cathode.SulfuricSelective)
	approx(t, "H2SO4/LiFePO4", rx.AcidMol, 0.5, 1e-12)
	approx(t, "H2O2/LiFePO4", rx.H2O2OxidantMol, 0.5, 1e-12)
	approx(t, "FePO4/LiFePO4", rx.ResidueFePO4Mol, 1, 1e-12)
	approx(t, "H2O/LiFePO4", rx.WaterMol, 1, 1e-12)
	approx(t, "Fe2+ in liquor", cation(rx, "Fe"), 0, 0)

	// NCA: 2LiNi0.8Co0.15Al0.05O2 + 3.05H2SO4 + 0.95H2O2 -> ... (balanced from oxidation states: Ni and Co from +3 to +2 take 0.95 e−, given by 0.475 H2O2).
	rx = mustReact(t, "LiNi0.8Co0.15Al0.05O2", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/NCA", rx.AcidMol, 1.525, 1e-12)
	approx(t, "H2O2/NCA", rx.H2O2ReductantMol, 0.475, 1e-12)
	// 2LiMn2O4 + 5H2SO4 + 3H2O2 -> Li2SO4 + 4MnSO4 + 8H2O + 3O2 (balanced from oxidation states: Mn from +3.5 to +2 takes 3 e− per LiMn2O4).
	rx = mustReact(t, "LiMn2O4", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/LMO", rx.AcidMol, 2.5, 1e-12)
	approx(t, "H2O2/LMO", rx.H2O2ReductantMol, 1.5, 1e-12)
	// 2LiFePO4 + 3H2SO4 -> Li2SO4 + 2FeSO4 + 2H3PO4 (full non-oxidative dissolution, R6).
	rx = mustReact(t, "LiFePO4", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/LFP full", rx.AcidMol, 1.5, 1e-12)
	approx(t, "H2O2/LFP full", rx.H2O2ReductantMol+rx.H2O2OxidantMol, 0, 1e-12)
	approx(t, "H3PO4/LFP full", rx.H3PO4Mol, 1, 1e-12)
	// Balanced by hand: 2Al + 3H2SO4 -> Al2(SO4)3 + 3H2, and Cu + H2O2 + H2SO4 -> CuSO4 + 2H2O.
	rx = mustReact(t, "Al", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/Al", rx.AcidMol, 1.5, 1e-12)
	approx(t, "H2/Al", rx.H2Mol, 1.5, 1e-12)
	rx = mustReact(t, "Cu", cathode.SulfuricPeroxide)
	approx(t, "H2SO4/Cu", rx.AcidMol, 1, 1e-12)
	approx(t, "H2O2/Cu", rx.H2O2OxidantMol, 1, 1e-12)
	approx(t, "H2/Cu", rx.H2Mol, 0, 0)
	if rx := mustReact(t, "Cu", cathode.Hydrochloric); !rx.UndissolvedCopper || rx.AcidMol != 0 {
		t.Errorf("Cu in HCl without oxidant should stay undissolved, got %+v", rx)
	}
}

// Per kg of pure LiCoO2 at stoichiometry: 1.503 kg H2SO4 and 0.174 kg H2O2; 1.490 kg HCl and
// 0.362 kg Cl2. Computed from the balanced equations 2LiCoO2 + 3H2SO4 + H2O2 → Li2SO4 + 2CoSO4 + 4H2O + O2
// (Jha et al., Waste Manag. 33 (2013) 1890) and 2LiCoO2 + 8HCl → 2LiCl + 2CoCl2 + Cl2 + 4H2O
// (Zhang et al., Hydrometallurgy 47 (1998) 259) with CIAAW 2021 atomic weights.
func TestPerKgLiCoO2(t *testing.T) {
	es := cathode.DefaultElements()
	m := func(s string) float64 { return mustFormula(t, s).MolarMass(es) / 1000 } // kg/mol
	rx := mustReact(t, "LiCoO2", cathode.SulfuricPeroxide)
	approx(t, "kg H2SO4/kg LCO", rx.PerKg(rx.AcidMol)*m("H2SO4"), 1.503, 0.0075)
	approx(t, "kg H2O2/kg LCO", rx.PerKg(rx.H2O2ReductantMol)*m("H2O2"), 0.174, 0.001)
	rx = mustReact(t, "LiCoO2", cathode.Hydrochloric)
	approx(t, "kg HCl/kg LCO", rx.PerKg(rx.AcidMol)*m("HCl"), 1.490, 0.0075)
	approx(t, "kg Cl2/kg LCO", rx.PerKg(rx.Cl2Mol)*m("Cl2"), 0.362, 0.002)
}

// Metal dissolution rule of thumb (common practice): 10 g of cobalt metal needs about 0.34 mol
// HCl (Co + 2HCl -> CoCl2 + H2), about 56 mL of the HCl-water azeotrope (20.2 wt% HCl, CRC
// Handbook; density 1.098 g/mL at 20 °C for 20 wt% HCl, Perry's table, from memory), so 100 mL
// of it (1.8x) is ample.
func TestCobaltMetalInAzeotrope(t *testing.T) {
	es := cathode.DefaultElements()
	rx := mustReact(t, "Co", cathode.Hydrochloric)
	molHCl := rx.AcidMol * 10 / es.Weight("Co")
	approx(t, "mol HCl for 10 g Co", molHCl, 0.34, 0.005)
	mL := molHCl * mustFormula(t, "HCl").MolarMass(es) / 0.202 / 1.098
	approx(t, "mL azeotrope for 10 g Co", mL, 56, 1)
	if 100/mL < 1.7 {
		t.Errorf("100 mL is only %.2fx stoichiometric", 100/mL)
	}
	approx(t, "H2 from 10 g Co", rx.H2Mol*10/es.Weight("Co"), 10/es.Weight("Co"), 1e-12)
}

// H2 from aluminium in acid: 1.5 mol H2 per mol Al, 0.0556 mol/g, 1.246 L/g at 0 °C and 1 atm
// (2Al + 6H+ → 2Al³⁺ + 3H2; ideal-gas molar volume 22.413 969 L/mol, CODATA 2018).
func TestHydrogenFromAluminium(t *testing.T) {
	es := cathode.DefaultElements()
	rx := mustReact(t, "Al", cathode.SulfuricPeroxide)
	molPerG := rx.H2Mol / es.Weight("Al")
	approx(t, "mol H2 per g Al", molPerG, 0.0556, 0.0001)
	approx(t, "L H2 per g Al", molPerG*22.414, 1.246, 0.0025)
}

// Every catalogue entry and every other black-mass species, on every route, at full and partial
// extraction, conserves every element and closes the liquor's charge balance.
func TestConservation(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	var formulas []string
	for _, e := range cat.Entries() {
		formulas = append(formulas, e.Formula.String())
	}
	formulas = append(formulas, "Al", "Cu", "Fe", "Co", "Ni", "C", "C2H2F2", "LiPF6", "Li2CO3", "Li4Ti5O12", "LiNi0.9Mn0.05Co0.05O2")
	partial := func(sym string) float64 {
		return map[string]float64{"Li": 0.97, "Co": 0.9, "Ni": 0.85, "Mn": 0.7, "Fe": 0.5, "Al": 0.6, "Cu": 0.3}[sym]
	}
	for _, f := range formulas {
		sp, err := cathode.NewSpecies(mustFormula(t, f))
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		for _, route := range cathode.Routes() {
			for _, x := range []cathode.Extraction{nil, partial} {
				rx, err := cathode.Dissolve(sp, route, x)
				if err != nil {
					t.Errorf("%s on %s: %v", f, route, err)
					continue
				}
				checkBalance(t, f, rx)
			}
		}
	}
}

func checkBalance(t *testing.T, name string, rx cathode.Reaction) {
	t.Helper()
	in, out := map[string]float64{}, map[string]float64{}
	add := func(m map[string]float64, formula string, n float64) {
		if n == 0 {
			return
		}
		for _, tm := range mustFormula(t, formula).Terms() {
			m[tm.Symbol] += tm.Amount * n
		}
	}
	add(in, rx.Species.Formula.String(), 1)
	add(in, rx.Route.Acid(), rx.AcidMol)
	add(in, "H2O2", rx.H2O2ReductantMol+rx.H2O2OxidantMol)
	if rx.WaterMol < 0 {
		add(in, "H2O", -rx.WaterMol)
	} else {
		add(out, "H2O", rx.WaterMol)
	}
	for _, c := range rx.Cations {
		out[c.Symbol] += c.Mol
	}
	add(out, rx.Route.Anion(), rx.AnionMol)
	add(out, "H3PO4", rx.H3PO4Mol)
	add(out, "HF", rx.HFMol)
	add(out, "CO2", rx.CO2Mol)
	add(out, "O2", rx.O2Mol)
	add(out, "Cl2", rx.Cl2Mol)
	add(out, "H2", rx.H2Mol)
	for _, r := range rx.Residue {
		out[r.Symbol] += r.Amount
	}
	for _, m := range []map[string]float64{in, out} {
		for sym := range m {
			if d := in[sym] - out[sym]; math.Abs(d) > 1e-9 {
				t.Errorf("%s on %s: %s in %.6g, out %.6g", name, rx.Route, sym, in[sym], out[sym])
			}
		}
	}
	if q := rx.LiquorCharge(); math.Abs(q) > 1e-9 {
		t.Errorf("%s on %s: liquor charge %+.3g at stoichiometry", name, rx.Route, q)
	}
}

func TestEquationText(t *testing.T) {
	for _, c := range []struct {
		formula string
		route   cathode.Route
		want    string
	}{
		// The literature's equations, written back in their published form.
		{"LiCoO2", cathode.SulfuricPeroxide, "2 LiCoO2 + 3 H2SO4 + H2O2 → Li2SO4 + 2 CoSO4 + 4 H2O + O2↑"},
		{"LiCoO2", cathode.Hydrochloric, "2 LiCoO2 + 8 HCl → 2 LiCl + 2 CoCl2 + 4 H2O + Cl2↑"},
		{"LiFePO4", cathode.SulfuricSelective, "2 LiFePO4 + H2SO4 + H2O2 → Li2SO4 + 2 FePO4↓ + 2 H2O"},
	} {
		if got := mustReact(t, c.formula, c.route).Equation(); got != c.want {
			t.Errorf("Equation(%s, %s) = %q, want %q", c.formula, c.route, got, c.want)
		}
	}
}

// Partial selective leach: iron is oxidised only as far as lithium leaves (LiFePO4 → FePO4 + Li+
// + e-), so 90 % lithium extraction needs 0.45 mol H2SO4 and 0.45 mol H2O2 and leaves
// Li0.1FePO4 (R7 scaled; Li et al. 2017 mechanism).
func TestSelectivePartial(t *testing.T) {
	sp, _ := cathode.NewSpecies(mustFormula(t, "LiFePO4"))
	rx, err := cathode.Dissolve(sp, cathode.SulfuricSelective, func(s string) float64 {
		if s == "Li" {
			return 0.9
		}
		return 1
	})
	if err != nil {
		t.Fatal(err)
	}
	approx(t, "H2SO4", rx.AcidMol, 0.45, 1e-12)
	approx(t, "H2O2", rx.H2O2OxidantMol, 0.45, 1e-12)
	approx(t, "FePO4", rx.ResidueFePO4Mol, 0.9, 1e-12)
	want := map[string]float64{"Li": 0.1, "Fe": 1, "P": 1, "O": 4}
	for _, r := range rx.Residue {
		approx(t, "residue "+r.Symbol, r.Amount, want[r.Symbol], 1e-12)
	}
	checkBalance(t, "LiFePO4 90 %", rx)
}

// With no extraction given, the selective route dissolves what it dissolves: the phosphate's
// lithium (LiFePO4 + ½H2SO4 + ½H2O2 → ½Li2SO4 + FePO4 + H2O; Li et al., ACS Sustain. Chem. Eng.
// 5 (2017) 8017, from memory) and none of a layered or spinel oxide, which stays whole for a
// second, reductive leach; the same oxides dissolve fully on the reductive sulfuric route.
func TestSelectiveLeavesOxides(t *testing.T) {
	for _, formula := range []string{"LiCoO2", "LiNi0.6Mn0.2Co0.2O2", "LiMn2O4", "LiNi0.8Co0.15Al0.05O2"} {
		sp, _ := cathode.NewSpecies(mustFormula(t, formula))
		rx, err := cathode.Dissolve(sp, cathode.SulfuricSelective, nil)
		if err != nil {
			t.Fatal(err)
		}
		if rx.AcidMol != 0 || rx.H2O2ReductantMol != 0 || len(rx.Cations) != 0 {
			t.Errorf("%s on the selective route: acid %g, H2O2 %g, cations %v; want it left whole", formula, rx.AcidMol, rx.H2O2ReductantMol, rx.Cations)
		}
		checkBalance(t, formula+" selective", rx)
		full, err := cathode.Dissolve(sp, cathode.SulfuricPeroxide, nil)
		if err != nil {
			t.Fatal(err)
		}
		if full.AcidMol <= 0 || len(full.Cations) == 0 {
			t.Errorf("%s on the reductive route: acid %g, cations %v", formula, full.AcidMol, full.Cations)
		}
	}
	sp, _ := cathode.NewSpecies(mustFormula(t, "LiFePO4"))
	rx, err := cathode.Dissolve(sp, cathode.SulfuricSelective, nil)
	if err != nil {
		t.Fatal(err)
	}
	approx(t, "LiFePO4 H2SO4", rx.AcidMol, 0.5, 1e-12)
	approx(t, "LiFePO4 FePO4", rx.ResidueFePO4Mol, 1, 1e-12)
}

// Layered and spinel oxides holding nickel take Mn(IV) and Co(III) with nickel the rest: Ni(II)
// in NMC111 and LiNi0.5Mn1.5O4, between +2 and +3 in the nickel-rich grades (X-ray absorption:
// Koyama et al., J. Power Sources 119-121 (2003) 644, from memory); a lithium-poor oxide's nickel
// takes the charge the lithium left; where nickel would fall below +2 every metal averages.
func TestOxidationStatesOfNickelOxides(t *testing.T) {
	for _, c := range []struct {
		name, formula string
		want          map[string]float64
	}{
		{"NMC111: Ni(II) with Mn(IV)", "LiNi1/3Mn1/3Co1/3O2", map[string]float64{"Ni": 2, "Mn": 4, "Co": 3}},
		{"NMC532", "LiNi0.5Mn0.3Co0.2O2", map[string]float64{"Ni": 2.4, "Mn": 4, "Co": 3}},
		{"NMC811", "LiNi0.8Mn0.1Co0.1O2", map[string]float64{"Ni": 2.875, "Mn": 4, "Co": 3}},
		{"NCA: Ni(III)", "LiNi0.8Co0.15Al0.05O2", map[string]float64{"Ni": 3, "Co": 3}},
		{"high-voltage spinel", "LiNi0.5Mn1.5O4", map[string]float64{"Ni": 2, "Mn": 4}},
		{"half-delithiated NMC111", "Li0.5Ni1/3Mn1/3Co1/3O2", map[string]float64{"Ni": 3.5, "Mn": 4, "Co": 3}},
		{"no nickel: LMO averages", "LiMn2O4", map[string]float64{"Mn": 3.5}},
		{"nickel would fall below +2: average", "LiNi0.5Mn0.5O1.9", map[string]float64{"Ni": 2.8, "Mn": 2.8}},
		{"iron present: average", "LiNi0.5Fe0.5O2", map[string]float64{"Ni": 3, "Fe": 3}},
	} {
		t.Run(c.name, func(t *testing.T) {
			sp, err := cathode.NewSpecies(mustFormula(t, c.formula))
			if err != nil {
				t.Fatal(err)
			}
			for el, want := range c.want {
				if got := sp.State(el); math.Abs(got-want) > 1e-12 {
					t.Errorf("%s %+.4f, want %+.4f", el, got, want)
				}
			}
		})
	}
}
