package recover

import "math"

// lithium precipitates Li2CO3 with Na2CO3 (Li2SO4 + Na2CO3 -> Li2CO3 + Na2SO4), hot, after
// boiling off a share of the water if asked, leaving the mother liquor saturated in Li2CO3 at
// the stage temperature; or Li3PO4 with Na3PO4 (3 Li2SO4 + 2 Na3PO4 -> 2 Li3PO4 + 3 Na2SO4).
// The transition metals and calcium left come down with the carbonate as MCO3.
func (p *planner) lithium(c *ctx, st Step, s *State) {
	const stage = KindLithium
	if st.Evaporate > 0 {
		c.water(s, "evaporated", -st.Evaporate*s.WaterKg)
		na2so4 := min(s.Mol["Na"]/2, s.Mol["S"]) * p.t.molarMass("Na2SO4") / 10 / s.WaterKg // g per 100 g water
		if na2so4 > p.t.solubility("Na2SO4", st.TemperatureC) {
			c.warn("the evaporation takes Na2SO4 past its solubility at the stage temperature: it would crystallise " +
				"with the lithium product; evaporate less")
		}
	}
	if st.Product == "phosphate" {
		p.lithiumPhosphate(c, st, s)
		return
	}
	name := "Li2CO3"
	if s.FreeHMol > 0 {
		c.neutralise(s, "Na2CO3", s.FreeHMol)
	}
	// Impurities first: every M2+ left takes its carbonate.
	mol := 0.0
	for _, m := range []string{"Ni", "Co", "Mn", "Cu", "Ca", "Mg", "Zn"} {
		x := take(s, m, s.Mol[m])
		c.solid(name, "product", m+"CO3", x)
		mol += x
	}
	if fe := take(s, "Fe", s.Mol["Fe"]); fe > 0 {
		fe3 := math.Min(s.Fe3Mol, fe)
		s.Fe3Mol -= fe3
		c.solid(name, "product", "Fe(OH)3", fe3)
		c.solid(name, "product", "FeCO3", fe-fe3)
		mol += fe - fe3 + 1.5*fe3 // Fe3+ + 1.5 CO3 2- + 1.5 H2O -> Fe(OH)3 + 1.5 CO2
		c.gas("CO2", 1.5*fe3)
	}
	if al := take(s, "Al", s.Mol["Al"]); al > 0 {
		c.solid(name, "product", "Al(OH)3", al)
		mol += 1.5 * al
		c.gas("CO2", 1.5*al)
	}
	li2 := s.Mol["Li"] / 2
	need := li2 * p.val(c, stage, "na2co3_excess")
	c.reagent(s, "Na2CO3", mol+need)
	s.Mol["Na"] += 2 * (mol + need)
	soluble := p.t.solubility("Li2CO3", st.TemperatureC) / 100 * s.WaterKg * 1000 / p.t.molarMass("Li2CO3")
	x := math.Max(0, math.Min(li2-soluble, need))
	s.Mol["Li"] -= 2 * x
	c.solid(name, "product", "Li2CO3", x)
	p.dissolvedCarbonate(s, need-x)
	c.figure("Li to the product, share", x/math.Max(li2, 1e-300))
	c.figure("Li left in the mother liquor, g/kg water", s.Mol["Li"]*p.t.elements.Weight("Li")/s.WaterKg)
	c.cake(s, name, p.val(c, stage, "cake_wet_ratio"))
}

// lithiumPhosphate precipitates Li3PO4; the excess phosphate stays as phosphoric acid with its
// alkalinity (three H+ short per mol).
func (p *planner) lithiumPhosphate(c *ctx, st Step, s *State) {
	name := "Li3PO4"
	if s.FreeHMol > 0 {
		c.neutralise(s, "NaOH", s.FreeHMol)
	}
	li3 := s.Mol["Li"] / 3
	need := li3 * p.val(c, KindLithium, "na3po4_excess")
	c.reagent(s, "Na3PO4", need)
	s.Mol["Na"] += 3 * need
	soluble := p.t.solubility("Li3PO4", st.TemperatureC) / 100 * s.WaterKg * 1000 / p.t.molarMass("Li3PO4")
	x := math.Max(0, math.Min(li3-soluble, need))
	s.Mol["Li"] -= 3 * x
	c.solid(name, "product", "Li3PO4", x)
	s.Mol["P"] += need - x
	s.FreeHMol -= 3 * (need - x)
	c.figure("Li to the product, share", x/math.Max(li3, 1e-300))
	c.cake(s, name, p.val(c, KindLithium, "cake_wet_ratio"))
}
