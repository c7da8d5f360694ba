package recover

import "math"

// impurity removes Fe, Al and Cu by raising the pH with a base: Fe(II) is oxidised first (H2O2
// or air), phosphate takes Fe(III) then Al as FePO4 and AlPO4, and each hydroxide in the tables
// precipitates down to its solubility at the end pH (van 't Hoff to the stage temperature, the
// sample's offset). Co, Ni and Li are lost to the cake in proportion to the Al hydroxide formed;
// lime or limestone forms gypsum.
func (p *planner) impurity(c *ctx, st Step, s *State) {
	const stage = KindImpurity
	cake := "impurity cake"
	c.solidName(cake)
	cuBefore := s.Mol["Cu"]
	if st.Copper == "cement" {
		p.cement(c, s)
	}
	p.oxidiseFe(c, st, s)
	p.phosphates(c, st, s, cake)
	alBefore := s.Mol["Al"]
	for _, m := range []string{"Fe3", "Al", "Cu", "Fe2", "Ni", "Co", "Mn"} {
		h, ok := p.t.ksp[m]
		if !ok {
			continue
		}
		off := p.draw(stage, "offset "+h.phase, h.offLo, h.offMode, h.offHi, "pH", h.source)[c.i]
		c.precipitateHydroxide(s, h, st.PH, st.TemperatureC, off, cake, "cake")
	}
	alGPerL := (alBefore - s.Mol["Al"]) * p.t.elements.Weight("Al") / s.VolumeL
	share := math.Min(1, alGPerL/p.val(c, stage, "coprecip_al_g_per_l"))
	if st.Base == "LiOH" {
		share *= p.val(c, stage, "lioh_coprecip_factor")
	}
	for _, m := range []struct{ el, phase string }{{"Ni", "Ni(OH)2"}, {"Co", "Co(OH)2"}, {"Li", "LiOH"}} {
		x := take(s, m.el, share*p.val(c, stage, "coprecip_"+m.el)*s.Mol[m.el])
		z := ionCharge(m.el)
		s.FreeHMol += z * x
		c.waterMol(s, -z*x)
		c.solid(cake, "cake", m.phase, x)
	}
	c.toPH(s, st.Base, st.PH)
	if bases[st.Base].cation == "Ca" {
		c.gypsum(s, p.val(c, stage, "gypsum_log_ksp"))
	}
	c.cake(s, cake, p.val(c, stage, "cake_wet_ratio"))
	c.figure("Al to the cake, g/L", alGPerL)
	c.figure("end pH", st.PH)
	if s.Mol["Cu"] > 0.5*cuBefore && cuBefore > 0 {
		c.warn("most Cu stays in the liquor at this pH (its hydroxide overlaps Ni and Co): it follows Co through the " +
			"extraction into the cobalt product; remove it by cementation or its own extraction first")
	}
}

// cement takes Cu out on iron powder first, Cu2+ + Fe -> Cu + Fe2+ (0.8788 kg Fe per kg Cu), the
// powder's excess dissolving in the free acid, Fe + 2 H+ -> Fe2+ + H2; the Fe(II) made is then
// oxidised and precipitated with the rest.
func (p *planner) cement(c *ctx, s *State) {
	cu := s.Mol["Cu"]
	if cu <= 0 {
		return
	}
	x := take(s, "Cu", p.val(c, KindImpurity, "cementation_yield")*cu)
	fe := x * p.val(c, KindImpurity, "fe_powder_excess")
	c.reagent(s, "Fe", fe)
	c.solid("Cu cement", "product", "Cu", x)
	s.Mol["Fe"] += fe
	// Fe(II) from the excess takes 2 H+ each and gives H2.
	s.FreeHMol -= 2 * (fe - x)
	c.gas("H2", fe-x)
	c.figure("Cu cemented, share", x/cu)
}

// oxidiseFe takes Fe(II) to Fe(III): 2 Fe2+ + H2O2 + 2 H+ -> 2 Fe3+ + 2 H2O (the excess
// decomposing, 2 H2O2 -> 2 H2O + O2), or 4 Fe2+ + O2 + 4 H+ -> 4 Fe3+ + 2 H2O with air.
func (p *planner) oxidiseFe(c *ctx, st Step, s *State) {
	fe2 := s.Mol["Fe"] - s.Fe3Mol
	if fe2 <= 1e-15 {
		return
	}
	s.Fe3Mol += fe2
	s.FreeHMol -= fe2
	if st.FeOxidant == "H2O2" {
		mol := fe2 / 2 * p.val(c, KindImpurity, "h2o2_excess")
		c.reagent(s, "H2O2", mol)
		extra := mol - fe2/2
		c.waterMol(s, fe2+extra)
		c.gas("O2", extra/2)
		return
	}
	used := fe2 / 4
	mol := used / p.val(c, KindImpurity, "air_o2_use")
	c.reagent(s, "O2", mol)
	c.gas("O2", mol-used)
	c.waterMol(s, fe2/2)
}

// phosphates precipitate FePO4, then AlPO4, from Fe3+ + H3PO4 -> FePO4 + 3 H+: none below the
// onset pH, all that the phosphate allows from the complete pH, in proportion between.
func (p *planner) phosphates(c *ctx, st Step, s *State, cake string) {
	if s.Mol["P"] <= 0 {
		return
	}
	on, full := p.val(c, KindImpurity, "phosphate_onset_ph"), p.val(c, KindImpurity, "phosphate_complete_ph")
	f := math.Max(0, math.Min(1, (st.PH-on)/math.Max(full-on, 1e-9)))
	fe := f * math.Min(s.Fe3Mol, s.Mol["P"])
	s.Fe3Mol -= fe
	s.Mol["Fe"] -= fe
	s.Mol["P"] -= fe
	al := f * math.Min(s.Mol["Al"], s.Mol["P"])
	s.Mol["Al"] -= al
	s.Mol["P"] -= al
	s.FreeHMol += 3 * (fe + al)
	c.solid(cake, "cake", "FePO4", fe)
	c.solid(cake, "cake", "AlPO4", al)
}
