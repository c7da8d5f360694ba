package recover

import "math"

// faradayCPerMol is the Faraday constant (CODATA 2018: 96 485.332 12 C/mol).
const faradayCPerMol = 96485.33212

// metalProduct makes the cobalt product from the strip liquor or the nickel product from the
// raffinate: electrowon metal, hydroxide, carbonate, or the sulfate crystallised.
func (p *planner) metalProduct(c *ctx, st Step, s *State, metal string) {
	if s == nil {
		return
	}
	switch st.Product {
	case "electrowin":
		p.electrowin(c, st, s, metal)
	case "hydroxide":
		p.hydroxideProduct(c, st, s, metal)
	case "carbonate":
		p.carbonateProduct(c, st, s, metal)
	case "sulfate":
		p.sulfateProduct(c, st, s, metal)
	case "oxalate":
		p.oxalateProduct(c, s, metal)
	}
}

// electrowin plates the metal: M2+ + H2O -> M + 2 H+ + ½ O2 (the acid regenerated stays in the
// spent electrolyte, which returns to the strip); from a chloride electrolyte M2+ + 2 Cl- -> M + Cl2. Charge = 2F per mol / current efficiency; the
// rest of the current makes hydrogen at the cathode (2 H+ + 2 e- -> H2).
func (p *planner) electrowin(c *ctx, st Step, s *State, metal string) {
	stage := metal2stage(metal)
	ce := p.val(c, stage, "ew_current_efficiency")
	u := p.val(c, stage, "ew_cell_voltage")
	name := metal + " cathode"
	n := take(s, metal, s.Mol[metal])
	c.solid(name, "product", metal, n)
	if n > 0 && metal == "Ni" && s.Mol["Li"] > 0 {
		c.warn("nickel electrowon from a raffinate that holds lithium and sodium: expect a low current efficiency")
	}
	// Cu (more noble) and Ni (close in potential) deposit with Co; Mn, Li, Na and Al stay.
	if metal == "Co" {
		for _, m := range []string{"Ni", "Cu"} {
			x := take(s, m, s.Mol[m])
			c.solid(name, "product", m, x)
			n += x
		}
	}
	if p.anion == "Cl" {
		// From a chloride electrolyte chlorine comes off at the anode: M2+ + 2 Cl- -> M + Cl2.
		s.Mol["Cl"] -= 2 * n
		c.gas("Cl2", n)
	} else {
		s.FreeHMol += 2 * n
		c.waterMol(s, -n)
		c.gas("O2", n/2)
	}
	charge := 2 * n * faradayCPerMol / ce // C
	c.gas("H2", charge/faradayCPerMol/2-n)
	c.tl.kWh[c.i] += charge * u / 3.6e6
	c.tl.hours[c.i] += charge / 3600 / (st.CurrentDensityAPerM2 * st.CathodeAreaM2)
	c.figure("current efficiency", ce)
	c.figure("cell voltage, V", u)
	if p.anion != "Cl" {
		p.acidFigure(c, "acid regenerated", 2*n)
	}
}

// acidFigure records the kg of the liquor's own acid (H2SO4 or HCl) that h mol of H+ make.
func (p *planner) acidFigure(c *ctx, what string, h float64) {
	if p.anion == "Cl" {
		c.figure(what+", kg HCl", h*p.t.molarMass("HCl")/1000)
		return
	}
	c.figure(what+", kg H2SO4", h/2*p.t.molarMass("H2SO4")/1000)
}

func metal2stage(metal string) string {
	if metal == "Ni" {
		return KindNickel
	}
	return KindCobalt
}

// hydroxideProduct neutralises the free acid and precipitates the metal and the other
// hydroxides down to their solubility at the end pH: M2+ + 2 OH- -> M(OH)2.
func (p *planner) hydroxideProduct(c *ctx, st Step, s *State, metal string) {
	name := metal + "(OH)2"
	for _, m := range []string{"Fe3", "Al", "Cu", "Fe2", "Ni", "Co", "Mn"} {
		h, ok := p.t.ksp[m]
		if !ok {
			continue
		}
		kind := "product"
		c.precipitateHydroxide(s, h, st.PH, st.TemperatureC, 0, name, kind)
	}
	base := st.Base
	if base == "" {
		base = "NaOH"
	}
	before := s.FreeHMol
	c.toPH(s, base, st.PH)
	// The excess stays in the solution as alkalinity.
	x := p.val(c, "product", "precipitant_excess")
	extra := (before - s.FreeHMol) * (x - 1)
	c.neutralise(s, base, extra)
	c.cake(s, name, p.val(c, "product", "cake_wet_ratio"))
}

// carbonateProduct takes the free acid with Na2CO3 (CO2 released) and precipitates the metal
// as MCO3: M2+ + CO3 2- -> MCO3, the excess carbonate left dissolved.
func (p *planner) carbonateProduct(c *ctx, st Step, s *State, metal string) {
	name := metal + "CO3"
	if s.FreeHMol > 0 {
		c.neutralise(s, "Na2CO3", s.FreeHMol)
	}
	n := take(s, metal, s.Mol[metal])
	mol := n * p.val(c, "product", "precipitant_excess")
	c.reagent(s, "Na2CO3", mol)
	s.Mol["Na"] += 2 * mol
	c.solid(name, "product", name, n)
	p.dissolvedCarbonate(s, mol-n)
	c.cake(s, name, p.val(c, "product", "cake_wet_ratio"))
}

// dissolvedCarbonate keeps mol of carbonate in the solution as carbonic acid with its
// alkalinity (two H+ short per mol).
func (p *planner) dissolvedCarbonate(s *State, mol float64) {
	if mol <= 0 {
		return
	}
	s.Mol["C"] += mol
	s.FreeHMol -= 2 * mol
}

// oxalateProduct precipitates the oxalate dihydrate from the acid liquor with oxalic acid,
// M2+ + H2C2O4 + 2 H2O -> MC2O4·2H2O + 2 H+ (for Co: 2.139 kg H2C2O4·2H2O and 3.105 kg product per
// kg, 1.664 kg H2SO4 freed), a share of the metal per the yield; the excess acid stays dissolved.
func (p *planner) oxalateProduct(c *ctx, s *State, metal string) {
	phase := metal + "C2O4·2H2O"
	have := s.Mol[metal]
	mol := have * p.val(c, "product", "oxalic_excess")
	c.reagent(s, "H2C2O4", mol)
	n := take(s, metal, p.val(c, "product", "oxalate_yield")*have)
	c.solid(phase, "product", phase, n)
	s.Mol["C"] += 2 * (mol - n)
	s.FreeHMol += 2 * n
	c.waterMol(s, -2*n)
	p.acidFigure(c, "acid freed", 2*n)
	c.cake(s, phase, p.val(c, "product", "cake_wet_ratio"))
}

// sulfateProduct crystallises the metal's sulfate hydrate (CoSO4·7H2O, NiSO4·6H2O) from a
// sulfate liquor, a share per pass; the mother liquor keeps the rest and the free acid.
func (p *planner) sulfateProduct(c *ctx, st Step, s *State, metal string) {
	phase, hyd := "CoSO4·7H2O", 7.0
	if metal == "Ni" {
		phase, hyd = "NiSO4·6H2O", 6
	}
	n := p.val(c, "product", "crystal_yield") * s.Mol[metal]
	n = math.Min(n, s.Mol["S"])
	take(s, metal, n)
	s.Mol["S"] -= n
	c.solid(phase, "product", phase, n)
	c.water(s, "crystal water", -hyd*n*p.t.molarMass("H2O")/1000)
}
