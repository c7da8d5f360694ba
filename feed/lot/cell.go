package lot

import "blackmass/cathode"

// Compounds of the black mass other than cathode materials, in a fixed order.
const (
	cGraphite = iota
	cCarbonBlack
	cPVDF
	cAluminium
	cCopper
	cSteel
	cLiPF6
	cPolymer
	nFixedCompounds
)

var fixedCompounds = [nFixedCompounds]struct{ name, formula string }{
	{"graphite", "C"}, {"carbon black", "C"}, {"PVDF binder", "C2H2F2"}, {"aluminium (foil, casing)", "Al"},
	{"copper foil", "Cu"}, {"steel (casing, as Fe)", "Fe"}, {"LiPF6 residue", "LiPF6"}, {"separator and film (as polyethylene)", "C2H4"},
}

// cmPerUm converts a foil thickness in µm to cm.
const cmPerUm = 1e-4

// m2PerCm2 converts an area in cm² to m².
const m2PerCm2 = 1e-4

// mix is a chemistry's capacity and voltage at one draw: the cathode-mass-weighted capacity and
// the capacity-weighted voltage of its components.
type mix struct {
	capMAhG, voltV float64
}

// breakdown is the modelled composition of one item (cell, pack or module) in grams, or of a
// group of items.
type breakdown struct {
	cam, graphite, al, cu, bc, electrolyte, separator, casing, cell, item float64
}

// model computes the item breakdown from nameplate energy (Wh) and/or charge (Ah).
func model(energyWh, chargeAh float64, mx mix, f design, g globals) breakdown {
	qAhG := mx.capMAhG / 1000
	var b breakdown
	// The nameplate is what the full cell delivers: a share (utilisation) of what its cathode
	// holds, the rest lost to the anode's first-cycle film or held back by the rating.
	b.cam = (energyWh/mx.voltV + chargeAh) / (qAhG * g.utilisation)
	// The anode is sized against the cathode's whole first-charge capacity.
	capAh := b.cam * qAhG
	b.graphite = capAh * g.np / (g.qGraphiteMAhG / 1000)
	// Both sides of each foil are coated: the foil area is the cathode's capacity over twice the
	// areal capacity. The anode foil is taken as the same area (its overhang is a few per cent).
	foilCm2 := capAh * 1000 / (2 * f.arealMAhCm2)
	b.al = foilCm2 * f.alUm * cmPerUm * g.rhoAlGCm3
	b.cu = foilCm2 * f.cuUm * cmPerUm * g.rhoCuGCm3
	// The electrolyte fills the pores of both coatings and the separator: so much per m² of
	// coated side (two per foil), whatever the loading, so thin electrodes hold more per Ah.
	b.electrolyte = f.elGPerM2 * 2 * foilCm2 * m2PerCm2
	b.cell = (b.cam + b.graphite + b.al + b.cu + b.electrolyte) / (1 - f.bc - f.sep - f.casing)
	b.bc, b.separator, b.casing = f.bc*b.cell, f.sep*b.cell, f.casing*b.cell
	b.item = b.cell / (1 - f.overhead)
	return b
}

// blackMass adds the black-mass compounds of b (grams) into dst (fixed compounds first, then the
// cathode materials at camIdx with shares camShare).
func (b breakdown) blackMass(dst []float64, f design, g globals, camIdx []int, camShare []float64) {
	for i, k := range camIdx {
		dst[k] += b.cam * camShare[i] * g.recCAM
	}
	dst[cGraphite] += b.graphite * g.recGraphite
	bc := b.bc * g.recBC
	dst[cPVDF] += bc * g.binderShare
	dst[cCarbonBlack] += bc * (1 - g.binderShare)
	dst[cAluminium] += b.al * g.carryAl
	dst[cCopper] += b.cu * g.carryCu
	switch f.kind {
	case casingSteel:
		dst[cSteel] += b.casing * g.carryCasing
	case casingAl:
		dst[cAluminium] += b.casing * g.carryCasing
	case casingPolymer:
		dst[cPolymer] += b.casing * g.carryPolymer
	}
	dst[cPolymer] += b.separator * g.carryPolymer
	dst[cLiPF6] += b.electrolyte * g.lipf6 * g.residueLiPF6
}

// mixAt returns the chemistry mix at sample s from the components' shares and draws.
func mixAt(comps []cathode.Component, shares []float64, volt, capa [][]float64, s int) mix {
	q, qv := 0.0, 0.0
	for i := range comps {
		qi := capa[i][s]
		q += shares[i] * qi
		qv += shares[i] * qi * volt[i][s]
	}
	return mix{capMAhG: q, voltV: qv / q}
}

// fixedIndices lists the indices of the fixed (non-cathode) compounds.
func fixedIndices() []int {
	out := make([]int, nFixedCompounds)
	for i := range out {
		out[i] = i
	}
	return out
}

// weighed fits a design to a measured item mass: of the cell's parts, the foils and the
// electrolyte scale with the coated area, so with everything else as drawn there is one areal
// capacity at which the modelled item weighs what was measured. It is held to the range of
// areal capacities the model allows (lo..hi); a weight outside what that range can give takes
// the nearer end.
func weighed(energyWh, chargeAh float64, mx mix, f design, g globals, itemG, lo, hi float64) design {
	b := model(energyWh, chargeAh, mx, f, g)
	fixed := b.cam + b.graphite
	byArea := (b.al + b.cu + b.electrolyte) * f.arealMAhCm2 // g × mAh/cm², so byArea/areal is grams
	room := itemG*(1-f.overhead)*(1-f.bc-f.sep-f.casing) - fixed
	a := hi
	if room > 0 {
		a = byArea / room
	}
	f.arealMAhCm2 = min(max(a, lo), hi)
	return f
}
