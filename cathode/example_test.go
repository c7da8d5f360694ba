package cathode_test

import (
	"fmt"

	"blackmass/cathode"
)

func ExampleParseFormula() {
	f, err := cathode.ParseFormula("LiNi1/3Mn1/3Co1/3O2")
	if err != nil {
		panic(err)
	}
	es := cathode.DefaultElements()
	m := f.MolarMass(es)
	fmt.Printf("M = %.3f g/mol, q = %.1f mAh/g\n", m, cathode.TheoreticalCapacityMAhPerG(1, m))
	_, err = cathode.ParseFormula("LiCoQ2")
	fmt.Println(err)
	// Output:
	// M = 96.460 g/mol, q = 277.9 mAh/g
	// formula "LiCoQ2": at position 5: unknown element: Q
}

func ExampleDissolve() {
	f, _ := cathode.ParseFormula("LiCoO2")
	sp, _ := cathode.NewSpecies(f)
	for _, r := range cathode.Routes() {
		rx, _ := cathode.Dissolve(sp, r, nil)
		fmt.Println(rx.Equation())
	}
	// Output:
	// 2 LiCoO2 + 3 H2SO4 + H2O2 → Li2SO4 + 2 CoSO4 + 4 H2O + O2↑
	// 2 LiCoO2 + 8 HCl → 2 LiCl + 2 CoCl2 + 4 H2O + Cl2↑
	// LiCoO2 → residue
}

func ExampleCatalogue_ParseLabel() {
	cat, err := cathode.DefaultCatalogue()
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, label := range []string{"NCM 5:2:3", "LMO+NMC532 70/30", "Li-ion"} {
		ch, _ := cat.ParseLabel(label)
		fmt.Printf("%-18q %s (%d components, unknown=%v)\n", label, ch.Key, len(ch.Components), ch.Unknown)
	}
	_, err = cat.ParseLabel("NMC812x")
	fmt.Println(err)
	// Output:
	// "NCM 5:2:3"        NMC532 (1 components, unknown=false)
	// "LMO+NMC532 70/30" LMO+NMC532 70/30 (2 components, unknown=false)
	// "Li-ion"           unknown (8 components, unknown=true)
	// unknown chemistry label "NMC812x"; nearest known: NMC811, NMC111, NMC532
}
