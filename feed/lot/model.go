package lot

import (
	"fmt"
	"io/fs"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/dist"
	"blackmass/feed/manifest"
)

// maxInactiveShare bounds the sum of a format's largest cell-mass fractions (binder and carbon,
// separator, casing): at or above it too little of the cell is left for the electrodes, foils
// and electrolyte for the model to mean anything (commercial cells are 50-75 % active material;
// common practice).
const maxInactiveShare = 0.6

// Param is one model parameter with its range and source.
type Param struct {
	Scope  string // "all", a format name, or "chemistry <key>"
	Name   string
	Range  cathode.Range
	Unit   string
	Source string
}

// Model holds the cell and black-mass parameters of data/model.csv.
type Model struct {
	params map[string]*Param
	list   []*Param
}

var globalNames = []string{"np_ratio", "graphite_capacity", "lipf6_in_electrolyte", "binder_share", "recovery_cathode",
	"recovery_graphite", "recovery_binder_carbon", "carryover_al_foil", "carryover_cu_foil", "carryover_casing", "residue_lipf6", "carryover_polymer",
	"cathode_utilisation", "al_density", "cu_density"}

// formatFractionNames are a format's parameters that are fractions of the cell mass.
var formatFractionNames = []string{"binder_carbon", "separator"}

// formatDesignNames are a format's parameters sized by the cell's capacity: areal capacity per
// coated side (mAh/cm²), foil thicknesses (µm), electrolyte fill (g per nameplate Ah).
var formatDesignNames = []string{"areal_capacity", "al_foil_thickness", "cu_foil_thickness", "electrolyte_per_ah"}

var casingNames = []string{"casing_steel", "casing_al", "casing_polymer"}

// LoadModel reads model.csv from fsys and checks that every format has its design parameters and exactly
// one casing material, and that the fractions leave room for the active materials.
func LoadModel(fsys fs.FS) (*Model, error) {
	t, err := data.ReadTable(fsys, "model.csv")
	if err != nil {
		return nil, err
	}
	m := &Model{params: map[string]*Param{}}
	for _, r := range t.Rows {
		p := &Param{Scope: r.Str("scope"), Name: r.Str("parameter"), Unit: r.Str("unit"), Source: r.Str("source")}
		if p.Range.Min, p.Range.Mode, p.Range.Max, err = r.Range("", ""); err != nil {
			return nil, err
		}
		if p.Range.Min < 0 {
			return nil, r.Errorf("%s: negative minimum", p.Name)
		}
		if p.Unit == "mass fraction" && p.Range.Max > 1 {
			return nil, r.Errorf("%s: a mass fraction above 1", p.Name)
		}
		k := p.Scope + "/" + p.Name
		if _, dup := m.params[k]; dup {
			return nil, r.Errorf("duplicate parameter %s", k)
		}
		m.params[k] = p
		m.list = append(m.list, p)
	}
	for _, n := range globalNames {
		if m.params["all/"+n] == nil {
			return nil, fmt.Errorf("model.csv: missing parameter all/%s", n)
		}
	}
	for _, f := range manifest.Formats() {
		sum := 0.0
		for _, n := range formatFractionNames {
			p := m.params[f.String()+"/"+n]
			if p == nil {
				return nil, fmt.Errorf("model.csv: missing parameter %s/%s", f, n)
			}
			sum += p.Range.Max
		}
		for _, n := range formatDesignNames {
			p := m.params[f.String()+"/"+n]
			if p == nil {
				return nil, fmt.Errorf("model.csv: missing parameter %s/%s", f, n)
			}
			if p.Range.Min <= 0 {
				return nil, fmt.Errorf("model.csv: %s/%s must be positive", f, n)
			}
		}
		casings := 0
		for _, n := range casingNames {
			if p := m.params[f.String()+"/"+n]; p != nil {
				casings++
				sum += p.Range.Max
			}
		}
		if casings != 1 {
			return nil, fmt.Errorf("model.csv: format %s needs exactly one of %v", f, casingNames)
		}
		if sum >= maxInactiveShare {
			return nil, fmt.Errorf("model.csv: format %s: inactive fractions can reach %.2f of the cell, leaving too little for electrodes", f, sum)
		}
		if f.IsAssembly() && m.params[f.String()+"/"+f.String()+"_overhead"] == nil {
			return nil, fmt.Errorf("model.csv: missing parameter %s/%s_overhead", f, f)
		}
	}
	return m, nil
}

// DefaultModel returns the model embedded in the program.
func DefaultModel() (*Model, error) { return LoadModel(data.FS) }

func (m *Model) get(scope, name string) *Param { return m.params[scope+"/"+name] }

// casingKind says where a format's casing metal goes.
type casingKind int

const (
	casingSteel casingKind = iota
	casingAl
	casingPolymer
)

// globals are the "all" parameters at one draw.
type globals struct {
	np, qGraphiteMAhG, lipf6, binderShare, recCAM, recGraphite, recBC, carryAl, carryCu, carryCasing, residueLiPF6, carryPolymer float64
	// utilisation is the share of the cathode's half-cell capacity the cell delivers at its
	// nameplate (first-cycle lithium loss to the anode, rating margin).
	utilisation float64
	// Densities of the current collectors' metals, g/cm³.
	rhoAlGCm3, rhoCuGCm3 float64
}

// design is one format's cell design at one draw: the current collectors and electrolyte sized by
// capacity, the rest as fractions of the cell mass.
type design struct {
	arealMAhCm2, alUm, cuUm, elGPerAh float64
	bc, sep, casing                   float64
	kind                              casingKind
	overhead                          float64
}

// paramSet is every parameter's draws, or its most likely value when samples == 0.
type paramSet struct {
	m       *Model
	d       *dist.Drawer
	globals []globals
	formats map[manifest.Format][]design
}

func newParamSet(m *Model, seed uint64, samples int) *paramSet {
	ps := &paramSet{m: m, d: dist.NewDrawer(seed, samples), formats: map[manifest.Format][]design{}}
	n := max(samples, 1)
	g := make([][]float64, len(globalNames))
	for i, name := range globalNames {
		g[i] = ps.values("all", name)
	}
	ps.globals = make([]globals, n)
	for s := range n {
		ps.globals[s] = globals{g[0][s], g[1][s], g[2][s], g[3][s], g[4][s], g[5][s], g[6][s], g[7][s], g[8][s], g[9][s], g[10][s], g[11][s], g[12][s], g[13][s], g[14][s]}
	}
	for _, f := range manifest.Formats() {
		sc := f.String()
		areal, al, cu, el := ps.values(sc, "areal_capacity"), ps.values(sc, "al_foil_thickness"), ps.values(sc, "cu_foil_thickness"), ps.values(sc, "electrolyte_per_ah")
		bc, sep := ps.values(sc, "binder_carbon"), ps.values(sc, "separator")
		var cas []float64
		var kind casingKind
		for k, n := range casingNames {
			if m.get(sc, n) != nil {
				cas, kind = ps.values(sc, n), casingKind(k)
			}
		}
		over := make([]float64, n)
		if f.IsAssembly() {
			over = ps.values(sc, sc+"_overhead")
		}
		fr := make([]design, n)
		for s := range n {
			fr[s] = design{areal[s], al[s], cu[s], el[s], bc[s], sep[s], cas[s], kind, over[s]}
		}
		ps.formats[f] = fr
	}
	return ps
}

// values returns the draws of a model parameter (or its mode, as a one-element slice, when the
// set has no samples).
func (ps *paramSet) values(scope, name string) []float64 {
	p := ps.m.get(scope, name)
	if p == nil {
		panic("feed: no parameter " + scope + "/" + name) // checked by LoadModel
	}
	return ps.rangeValues(scope+"/"+name, p.Range)
}

func (ps *paramSet) rangeValues(key string, r cathode.Range) []float64 {
	return ps.d.Draws(key, r.Min, r.Mode, r.Max)
}

// chemistry returns the draws of an entry's nominal voltage (V) and practical capacity (mAh/g),
// shared by every line that uses the entry.
func (ps *paramSet) chemistry(e *cathode.Entry) (voltV, capMAhG []float64) {
	return ps.rangeValues("chemistry "+e.Key+"/voltage", e.VoltageV), ps.rangeValues("chemistry "+e.Key+"/capacity", e.CapacityMAhPerG)
}

// massOnlyWh returns, per sample, the energy of a group's lines known by weight only: their mass
// times the specific energy of the drawn chemistry (each component's Wh/kg drawn across its
// plausible band, weighted by the drawn shares), lowered by the drawn overhead of an assembly.
func (ps *paramSet) massOnlyWh(g *group, shares [][]float64) []float64 {
	n := max(ps.d.Samples(), 1)
	out := make([]float64, n)
	if g.massOnlyKg == 0 {
		return out
	}
	band := make([][]float64, len(g.chem.Components))
	for j, c := range g.chem.Components {
		band[j] = ps.rangeValues("chemistry "+c.Entry.Key+"/specific_energy", c.Entry.SpecificEnergyWhPerKg)
	}
	over := make([]float64, n)
	if g.format.IsAssembly() {
		over = ps.values(g.format.String(), g.format.String()+"_overhead")
	}
	for i := range n {
		w := 0.0
		for j := range band {
			w += shares[i][j] * band[j][i]
		}
		out[i] = g.massOnlyKg * w * (1 - over[i])
	}
	return out
}
