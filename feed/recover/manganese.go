package recover

// manganese takes Mn(II) to MnO2 with an oxidant, by electrons: Mn2+ + 2 H2O -> MnO2 + 4 H+ +
// 2 e-, and the Co lost with it Co2+ + 3 H2O -> Co(OH)3 + 3 H+ + e-. The oxidant's half-reaction
// takes the electrons; its excess decomposes. The acid made is neutralised back to the stage pH.
//
//	KMnO4:   MnO4- + 4 H+ + 3 e- -> MnO2 + 2 H2O   (3 Mn2+ + 2 MnO4- + 2 H2O -> 5 MnO2 + 4 H+)
//	NaClO:   ClO- + 2 H+ + 2 e- -> Cl- + H2O
//	O3:      O3 + 2 H+ + 2 e- -> O2 + H2O
//	SO2/air: SO2 + O2 + 2 e- -> SO4 2-
//	Na2S2O8: S2O8 2- + 2 e- -> 2 SO4 2-
func (p *planner) manganese(c *ctx, st Step, s *State) {
	const stage = KindManganese
	cake := "MnO2 cake"
	c.solidName(cake)
	mn := take(s, "Mn", p.val(c, stage, "removal")*s.Mol["Mn"])
	co := take(s, "Co", p.val(c, stage, "co_loss")*s.Mol["Co"])
	c.solid(cake, "cake", "MnO2", mn)
	c.solid(cake, "cake", "Co(OH)3", co)
	s.FreeHMol += 4*mn + 3*co
	c.waterMol(s, -2*mn-3*co)
	e := 2*mn + co
	x := p.val(c, stage, "oxidant_excess")
	switch st.Oxidant {
	case "KMnO4":
		mol := e / 3 * x
		c.reagent(s, "KMnO4", mol)
		s.Mol["K"] += mol
		// The excess: 4 MnO4- + 4 H+ -> 4 MnO2 + 3 O2 + 2 H2O.
		extra := mol - e/3
		c.solid(cake, "cake", "MnO2", mol)
		s.FreeHMol -= 4*(e/3) + extra
		c.waterMol(s, 2*(e/3)+extra/2)
		c.gas("O2", 0.75*extra)
	case "NaClO":
		mol := e / 2 * x
		c.reagent(s, "NaClO", mol)
		s.Mol["Na"] += mol
		s.Mol["Cl"] += mol
		s.FreeHMol -= e // ClO- + 2 H+ + 2 e- -> Cl- + H2O; the excess ClO- -> Cl- + ½ O2
		c.waterMol(s, e/2)
		c.gas("O2", (mol-e/2)/2)
		// In acid the excess would give chlorine instead (ClO- + Cl- + 2 H+ -> Cl2 + H2O): the
		// worst case, beside the balance, for the off-gas treatment.
		c.figure("Cl2 if the excess hypochlorite meets acid, kg (worst case)", (mol-e/2)*p.t.molarMass("Cl2")/1000)
	case "O3":
		mol := e / 2 * x / p.val(c, stage, "o3_use")
		c.reagent(s, "O3", mol)
		s.FreeHMol -= e
		c.waterMol(s, e/2)
		c.gas("O2", e/2+1.5*(mol-e/2))
	case "SO2":
		need := e / 2
		mol := need * x / p.val(c, stage, "so2_use")
		c.reagent(s, "SO2", mol)
		c.reagent(s, "O2", need)
		// What does not react leaves with the off-gas.
		react := need * x
		if react > need { // the excess reacting is oxidised by air: SO2 + ½ O2 + H2O -> SO4 2- + 2 H+
			c.reagent(s, "O2", (react-need)/2)
			s.FreeHMol += 2 * (react - need)
			c.waterMol(s, -(react - need))
		}
		s.Mol["S"] += react
		c.gas("SO2", mol-react)
	case "Na2S2O8":
		mol := e / 2 * x
		c.reagent(s, "Na2S2O8", mol)
		s.Mol["Na"] += 2 * mol
		s.Mol["S"] += 2 * mol
		extra := mol - e/2 // S2O8 2- + H2O -> 2 SO4 2- + 2 H+ + ½ O2
		s.FreeHMol += 2 * extra
		c.waterMol(s, -extra)
		c.gas("O2", extra/2)
	}
	c.toPH(s, st.Base, st.PH)
	if bases[st.Base].cation == "Ca" {
		c.gypsum(s, p.val(c, KindImpurity, "gypsum_log_ksp"))
	}
	c.cake(s, cake, p.val(c, stage, "cake_wet_ratio"))
	c.figure("Mn removed, share", mn/(mn+s.Mol["Mn"]+1e-300))
}
