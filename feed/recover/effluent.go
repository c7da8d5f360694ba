package recover

// effluent sizes the sodium salt left in the final solution (Na2SO4, or NaCl on a chloride
// liquor) and whether it would crystallise at the effluent temperature: Na2SO4·10H2O
// (mirabilite) below 32.38 °C, anhydrous above. The crystals are reported, not removed.
func (p *planner) effluent(c *ctx, st Step, s *State) {
	salt, perNa, mw := "Na2SO4", 0.5, p.t.molarMass("Na2SO4")
	anion := s.Mol["S"]
	if p.anion == "Cl" {
		salt, perNa, mw = "NaCl", 1, p.t.molarMass("NaCl")
		anion = s.Mol["Cl"]
	}
	mol := min(s.Mol["Na"]*perNa, anion)
	kg := mol * mw / 1000
	c.figure(salt+" in the effluent, kg", kg)
	c.figure("effluent water, kg", s.WaterKg)
	c.figure("effluent, L", s.VolumeL)
	sol := p.t.solubility(salt, st.TemperatureC)
	c.figure(salt+" solubility at the effluent temperature, g/100 g water", sol)
	c.figure(salt+", g/100 g water", 100*kg/s.WaterKg)
	cryst := 0.0
	if 100*kg/s.WaterKg > sol {
		// Solve (m0 − x)/(W − w·x) = S/100 for x kg of Na2SO4 crystallising, w the water it
		// takes per kg (10 H2O per Na2SO4 as the decahydrate).
		w := 0.0
		if salt == "Na2SO4" && st.TemperatureC < mirabiliteC {
			w = 10 * p.t.molarMass("H2O") / mw
		}
		cryst = (kg - sol/100*s.WaterKg) / (1 - sol/100*w)
		hyd := cryst * (1 + w)
		c.figure("would crystallise, kg (decahydrate below 32.4 °C)", hyd)
		c.warn(salt + " would crystallise from the effluent at its temperature: keep it warm or crystallise it on purpose")
	} else {
		c.figure("would crystallise, kg (decahydrate below 32.4 °C)", 0)
	}
}

// mirabiliteC is the decahydrate-anhydrous transition of Na2SO4, 32.38 °C (from memory).
const mirabiliteC = 32.38
