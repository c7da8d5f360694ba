package recover

import (
	"fmt"
	"io/fs"
	"math"
	"sort"
	"sync"

	"blackmass/cathode"
	"blackmass/data"
)

// Tables are the recovery planner's reference tables. Load them once with LoadTables and pass
// them down; Plan requires them.
type Tables struct {
	params    map[string]Param // "stage/parameter"
	ksp       map[string]hydroxide
	salts     map[string][][2]float64 // salt -> (°C, g per 100 g water), sorted
	saltSrc   map[string]string
	reagents  map[string]Reagent
	sx        map[string]sxMetal
	elements  *cathode.Elements
	kspSource string
	// formulas caches parsed formulas (formula -> *parsedFormula); safe for concurrent use.
	formulas sync.Map
}

// Param is one ranged parameter of a stage.
type Param struct {
	Stage, Name    string
	Min, Mode, Max float64
	Unit, Source   string
}

// Reagent is a reagent as bought: its active share and, for a solution, its density.
type Reagent struct {
	Name, Formula string
	WtPct         float64
	DensityGPerML float64 // 0 for a solid or gas
	// OrderAs names it on the order sheet; empty when it is not bought (air, ozone made on site).
	OrderAs string
	Source  string
}

// hydroxide is a hydroxide's solubility constant: M(OH)n + n H+ = M + n H2O.
type hydroxide struct {
	phase, metal          string
	charge, logK, dHkJ    float64
	offLo, offMode, offHi float64
	source                string
}

// sxMetal is a metal's distribution against pH for the extractant.
type sxMetal struct {
	metal               string
	lo, mode, hi, slope float64
	source              string
}

// LoadTables reads recover_params.csv, recover_ksp.csv, recover_solubility.csv,
// recover_reagents.csv, recover_sx.csv and the atomic weights from fsys.
func LoadTables(fsys fs.FS) (*Tables, error) {
	es, err := cathode.LoadElements(fsys)
	if err != nil {
		return nil, err
	}
	t := &Tables{elements: es, params: map[string]Param{}, ksp: map[string]hydroxide{},
		salts: map[string][][2]float64{}, saltSrc: map[string]string{}, reagents: map[string]Reagent{},
		sx: map[string]sxMetal{}}
	for _, read := range []func(fs.FS) error{t.readParams, t.readKsp, t.readSalts, t.readReagents, t.readSX} {
		if err := read(fsys); err != nil {
			return nil, err
		}
	}
	return t, nil
}

func (t *Tables) readParams(fsys fs.FS) error {
	tb, err := data.ReadTable(fsys, "recover_params.csv")
	if err != nil {
		return err
	}
	for _, r := range tb.Rows {
		lo, mode, hi, err := r.Range("", "")
		if err != nil {
			return err
		}
		p := Param{Stage: r.Str("stage"), Name: r.Str("parameter"), Min: lo, Mode: mode, Max: hi, Unit: r.Str("unit"),
			Source: r.Str("source")}
		k := p.Stage + "/" + p.Name
		if _, dup := t.params[k]; dup {
			return r.Errorf("parameter %s given twice", k)
		}
		t.params[k] = p
	}
	return nil
}

func (t *Tables) readKsp(fsys fs.FS) error {
	tb, err := data.ReadTable(fsys, "recover_ksp.csv")
	if err != nil {
		return err
	}
	for _, r := range tb.Rows {
		h := hydroxide{phase: r.Str("phase"), metal: r.Str("metal"), source: r.Str("source")}
		for col, v := range map[string]*float64{"charge": &h.charge, "log_k": &h.logK, "delta_h_kJ": &h.dHkJ} {
			if *v, err = r.Float(col); err != nil {
				return err
			}
		}
		if h.offLo, h.offMode, h.offHi, err = r.Range("offset", ""); err != nil {
			return err
		}
		if h.charge < 1 || h.charge > 3 {
			return r.Errorf("charge %g: want 1, 2 or 3", h.charge)
		}
		t.ksp[h.metal] = h
	}
	return nil
}

func (t *Tables) readSalts(fsys fs.FS) error {
	tb, err := data.ReadTable(fsys, "recover_solubility.csv")
	if err != nil {
		return err
	}
	for _, r := range tb.Rows {
		tc, err := r.Float("temperature_C")
		if err != nil {
			return err
		}
		g, err := r.Float("g_per_100g_water")
		if err != nil {
			return err
		}
		if g < 0 {
			return r.Errorf("negative solubility %g", g)
		}
		s := r.Str("salt")
		t.salts[s] = append(t.salts[s], [2]float64{tc, g})
		if t.saltSrc[s] == "" {
			t.saltSrc[s] = r.Str("source")
		}
	}
	for _, c := range t.salts {
		sort.Slice(c, func(i, j int) bool { return c[i][0] < c[j][0] })
	}
	return nil
}

func (t *Tables) readReagents(fsys fs.FS) error {
	tb, err := data.ReadTable(fsys, "recover_reagents.csv")
	if err != nil {
		return err
	}
	for _, r := range tb.Rows {
		g := Reagent{Name: r.Str("reagent"), Formula: r.Str("formula"), OrderAs: r.Str("order_as"), Source: r.Str("source")}
		if _, err := t.elements.ParseFormula(g.Formula); err != nil {
			return r.Errorf("formula %q: %v", g.Formula, err)
		}
		if g.WtPct, err = r.Float("wt_pct"); err != nil {
			return err
		}
		if !(g.WtPct > 0 && g.WtPct <= 100) {
			return r.Errorf("wt_pct %g: want more than 0 and at most 100", g.WtPct)
		}
		if r.Str("density_g_per_mL") != "" {
			if g.DensityGPerML, err = r.Float("density_g_per_mL"); err != nil {
				return err
			}
		}
		t.reagents[g.Name] = g
	}
	return nil
}

func (t *Tables) readSX(fsys fs.FS) error {
	tb, err := data.ReadTable(fsys, "recover_sx.csv")
	if err != nil {
		return err
	}
	for _, r := range tb.Rows {
		m := sxMetal{metal: r.Str("metal"), source: r.Str("source")}
		if m.lo, m.mode, m.hi, err = r.Range("ph50", ""); err != nil {
			return err
		}
		if m.slope, err = r.Float("slope"); err != nil {
			return err
		}
		if !(m.slope > 0) {
			return r.Errorf("slope %g: want a positive number", m.slope)
		}
		t.sx[m.metal] = m
	}
	return nil
}

// param returns a parameter; a missing one is a programming or table error.
func (t *Tables) param(stage, name string) (Param, error) {
	p, ok := t.params[stage+"/"+name]
	if !ok {
		return p, fmt.Errorf("recover_params.csv: no parameter %s/%s", stage, name)
	}
	return p, nil
}

// molarMass is the molar mass (g/mol) of a formula the package names.
func (t *Tables) molarMass(formula string) float64 {
	return t.parsed(formula).molarG
}

// composition is the formula's element -> mol per mol. The map is shared: read it, do not change
// it.
func (t *Tables) composition(formula string) map[string]float64 {
	return t.parsed(formula).comp
}

// parsedFormula is a formula as the stages use it, parsed once.
type parsedFormula struct {
	molarG float64
	comp   map[string]float64
}

// parsed returns the formula's molar mass and composition, parsing it the first time it is
// asked for (the stages ask for the same few formulas in every sample).
func (t *Tables) parsed(formula string) *parsedFormula {
	if v, ok := t.formulas.Load(formula); ok {
		return v.(*parsedFormula)
	}
	f, err := t.elements.ParseFormula(formula)
	if err != nil {
		panic("recover: " + formula + ": " + err.Error())
	}
	pf := &parsedFormula{molarG: f.MolarMass(t.elements), comp: map[string]float64{}}
	for _, tm := range f.Terms() {
		pf.comp[tm.Symbol] += tm.Amount
	}
	v, _ := t.formulas.LoadOrStore(formula, pf)
	return v.(*parsedFormula)
}

// solubility is a salt's solubility (g per 100 g water) at tC, interpolated linearly.
func (t *Tables) solubility(salt string, tC float64) float64 {
	c := t.salts[salt]
	if len(c) == 0 {
		return math.Inf(1)
	}
	if tC <= c[0][0] {
		return c[0][1]
	}
	for i := 1; i < len(c); i++ {
		if tC <= c[i][0] {
			f := (tC - c[i-1][0]) / (c[i][0] - c[i-1][0])
			return c[i-1][1] + f*(c[i][1]-c[i-1][1])
		}
	}
	return c[len(c)-1][1]
}
