package recover

import (
	"math"
)

// tally gathers one stage's flows over the samples: slices are [sample].
type tally struct {
	reagentMol map[string][]float64 // reagent name -> mol
	solids     map[string]*solidTally
	solidOrder []string
	gasMol     map[string][]float64 // formula -> mol
	waterKg    map[string][]float64 // water to (+) or from (-) the solution, by cause
	kWh, hours []float64
	figures    map[string][]float64 // the stage's own numbers (stages, recoveries ...)
	figOrder   []string
	warnings   map[string]int // warning -> samples it arose in
	warned     map[string]int // warning -> last sample + 1 it was counted for
}

// solidTally is a product or cake: its phases' mol and its wet-to-dry ratio.
type solidTally struct {
	name, kind string // kind: "product" or "cake"
	phaseMol   map[string][]float64
	phases     []string
	wetRatio   []float64
}

func newTally(n int) *tally {
	return &tally{reagentMol: map[string][]float64{}, solids: map[string]*solidTally{}, gasMol: map[string][]float64{},
		waterKg: map[string][]float64{}, kWh: make([]float64, n), hours: make([]float64, n), figures: map[string][]float64{},
		warnings: map[string]int{}}
}

// ctx is one sample's run through the stages.
type ctx struct {
	i     int
	n     int
	t     *Tables
	led   *ledger
	tl    *tally // the current stage's tally
	strip *State // the cobalt strip liquor, once solvent extraction has made it
	pH    float64
}

func col(m map[string][]float64, k string, n int) []float64 {
	v, ok := m[k]
	if !ok {
		v = make([]float64, n)
		m[k] = v
	}
	return v
}

// reagent adds mol of a reagent: the ledger takes its elements, and a solution's water joins s.
func (c *ctx) reagent(s *State, name string, mol float64) {
	if mol <= 0 {
		return
	}
	r := c.t.reagents[name]
	col(c.tl.reagentMol, name, c.n)[c.i] += mol
	c.led.addIn(c.t.composition(r.Formula), mol)
	if r.DensityGPerML > 0 && s != nil {
		activeKg := mol * c.t.molarMass(r.Formula) / 1000
		c.water(s, "reagents' water", activeKg*(100/r.WtPct-1))
	}
}

// solid records mol of a phase leaving the solution into a named product or cake.
func (c *ctx) solid(name, kind, phase string, mol float64) {
	if mol <= 0 {
		return
	}
	st, ok := c.tl.solids[name]
	if !ok {
		st = &solidTally{name: name, kind: kind, phaseMol: map[string][]float64{}, wetRatio: make([]float64, c.n)}
		c.tl.solids[name] = st
		c.tl.solidOrder = append(c.tl.solidOrder, name)
	}
	if _, ok := st.phaseMol[phase]; !ok {
		st.phases = append(st.phases, phase)
	}
	col(st.phaseMol, phase, c.n)[c.i] += mol
	c.led.addOut(c.t.composition(phase), mol)
}

// gas records mol of a gas given off.
func (c *ctx) gas(formula string, mol float64) {
	if mol <= 0 {
		return
	}
	col(c.tl.gasMol, formula, c.n)[c.i] += mol
	c.led.addOut(c.t.composition(formula), mol)
}

// water changes the solution's water by kg (negative: leaves it) and books it under cause.
func (c *ctx) water(s *State, cause string, kg float64) {
	col(c.tl.waterKg, cause, c.n)[c.i] += kg
	s.setWater(s.WaterKg + kg)
}

// waterMol books mol of water formed (positive) or taken up (negative) by the reactions.
func (c *ctx) waterMol(s *State, mol float64) {
	c.water(s, "reactions", mol*c.t.molarMass("H2O")/1000)
}

// figure records one of the stage's own numbers.
func (c *ctx) figure(name string, v float64) {
	if _, ok := c.tl.figures[name]; !ok {
		c.tl.figOrder = append(c.tl.figOrder, name)
	}
	col(c.tl.figures, name, c.n)[c.i] = v
}

// warn records a warning for sample c.i (once per sample).
func (c *ctx) warn(msg string) {
	if c.tl.warned == nil {
		c.tl.warned = map[string]int{}
	}
	if w, ok := c.tl.warned[msg]; ok && w == c.i+1 {
		return
	}
	c.tl.warned[msg] = c.i + 1
	c.tl.warnings[msg]++
}

// take moves mol of element el out of the solution (never below zero).
func take(s *State, el string, mol float64) float64 {
	mol = math.Min(mol, s.Mol[el])
	if mol <= 0 {
		return 0
	}
	s.Mol[el] -= mol
	return mol
}

// baseInfo is how a base neutralises acid: mol per H+, the cation and its count, CO2 per mol.
type baseInfo struct {
	perH   float64 // mol base per mol H+
	cation string
	perMol float64 // cation per mol base
	co2    float64 // CO2 per mol base
	water  float64 // water formed per mol base
}

var bases = map[string]baseInfo{
	"NaOH":    {1, "Na", 1, 0, 1},
	"LiOH":    {1, "Li", 1, 0, 1},
	"Na2CO3":  {0.5, "Na", 2, 1, 1},
	"CaCO3":   {0.5, "Ca", 1, 1, 1},
	"Ca(OH)2": {0.5, "Ca", 1, 0, 2},
}

// neutralise adds base to take up h mol of H+ (h > 0), releasing CO2 from a carbonate base.
// Carbonate bases are allowed only to pH 6.3 and below (Validate), where the CO2 leaves.
func (c *ctx) neutralise(s *State, base string, h float64) {
	if h <= 0 {
		return
	}
	b := bases[base]
	mol := h * b.perH
	c.reagent(s, base, mol)
	s.Mol[b.cation] += b.perMol * mol
	s.FreeHMol -= h
	c.gas("CO2", b.co2*mol)
	c.waterMol(s, b.water*mol)
}

// gypsum precipitates CaSO4·2H2O until Ca and sulfate meet its solubility product.
func (c *ctx) gypsum(s *State, logKsp float64) {
	ca, so4 := s.Mol["Ca"], s.Mol["S"]
	kv := math.Pow(10, logKsp) * s.VolumeL * s.VolumeL
	if ca <= 0 || so4 <= 0 || ca*so4 <= kv {
		return
	}
	b := ca + so4
	x := (b - math.Sqrt(b*b-4*(ca*so4-kv))) / 2
	x = math.Min(x, math.Min(ca, so4))
	s.Mol["Ca"] -= x
	s.Mol["S"] -= x
	c.solid(c.cakeName(), "cake", "CaSO4·2H2O", x)
	c.waterMol(s, -2*x)
}

// cakeName is the current stage's cake: the stage's first solid of kind cake, or "cake".
func (c *ctx) cakeName() string {
	for _, n := range c.tl.solidOrder {
		if c.tl.solids[n].kind == "cake" {
			return n
		}
	}
	return "cake"
}

// rKJ is the gas constant in kJ/(mol K) (CODATA 2018: 8.314462618 J/(mol K)).
const rKJ = 8.314462618e-3

// logKAt is log K at tC by van 't Hoff from 25 °C.
func logKAt(logK, dHkJ, tC float64) float64 {
	return logK - dHkJ/(rKJ*math.Ln10)*(1/(tC+273.15)-1/298.15)
}

// residualMol is the mol of metal left dissolved over hydroxide h at pH and tC with offset off.
func (h hydroxide) residualMol(pH, tC, off, vL float64) float64 {
	return math.Pow(10, logKAt(h.logK, h.dHkJ, tC)-h.charge*(pH-off)) * vL
}

// precipitateHydroxide takes metal m (Fe3, Fe2 or an element) down to its residual at pH; the
// H+ freed joins the solution. It returns the mol precipitated.
func (c *ctx) precipitateHydroxide(s *State, h hydroxide, pH, tC, off float64, into, kind string) float64 {
	have := s.Mol[h.metal]
	el := h.metal
	switch h.metal {
	case "Fe3":
		have, el = s.Fe3Mol, "Fe"
	case "Fe2":
		have, el = s.Mol["Fe"]-s.Fe3Mol, "Fe"
	}
	x := have - h.residualMol(pH, tC, off, s.VolumeL)
	if x <= 0 {
		return 0
	}
	s.Mol[el] -= x
	if h.metal == "Fe3" {
		s.Fe3Mol -= x
	}
	s.FreeHMol += h.charge * x
	c.waterMol(s, -h.charge*x)
	c.solid(into, kind, h.phase, x)
	return x
}

// toPH adds base until the solution's free acid is that of pH.
func (c *ctx) toPH(s *State, base string, pH float64) {
	c.neutralise(s, base, s.FreeHMol-freeHAt(pH, s.VolumeL))
}

// cake takes the wet cake's water from the solution: a wet-to-dry ratio on the dry solids.
func (c *ctx) cake(s *State, name string, ratio float64) {
	st, ok := c.tl.solids[name]
	if !ok {
		return
	}
	st.wetRatio[c.i] = ratio
	dry := 0.0
	for _, ph := range st.phases {
		dry += st.phaseMol[ph][c.i] * c.t.molarMass(ph) / 1000
	}
	moist := dry * (ratio - 1)
	if moist > 0.9*s.WaterKg {
		// A cake cannot take the liquor's water: hold it to a share and say so.
		moist = 0.9 * s.WaterKg
		c.warn(name + " would hold more water than the liquor has: the liquor is too concentrated for this stage")
	}
	c.water(s, "cake moisture", -moist)
}

// solidName opens a cake of the current stage before anything precipitates into it, so that a
// later phase (gypsum) joins it.
func (c *ctx) solidName(name string) {
	if _, ok := c.tl.solids[name]; ok {
		return
	}
	c.tl.solids[name] = &solidTally{name: name, kind: "cake", phaseMol: map[string][]float64{},
		wetRatio: make([]float64, c.n)}
	c.tl.solidOrder = append(c.tl.solidOrder, name)
}
