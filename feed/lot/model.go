package lot

import (
	"fmt"
	"io/fs"
	"slices"
	"strings"
	"sync"

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
// coated side (mAh/cm²), foil thicknesses (µm), electrolyte fill (g per m² of coated side).
var formatDesignNames = []string{"areal_capacity", "al_foil_thickness", "cu_foil_thickness", "electrolyte_per_area"}

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
	for _, p := range m.list {
		if !strings.HasPrefix(p.Scope, "chemistry ") {
			continue
		}
		if !slices.Contains(chemistryDesignNames, p.Name) {
			return nil, fmt.Errorf("model.csv: %s/%s: a chemistry sets only %v", p.Scope, p.Name, chemistryDesignNames)
		}
		if p.Range.Min <= 0 {
			return nil, fmt.Errorf("model.csv: %s/%s must be positive", p.Scope, p.Name)
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

var defaultModel = sync.OnceValues(func() (*Model, error) { return LoadModel(data.FS) })

// DefaultModel returns the model embedded in the program.
func DefaultModel() (*Model, error) { return defaultModel() }

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
	arealMAhCm2, alUm, cuUm, elGPerM2 float64
	bc, sep, casing                   float64
	kind                              casingKind
	overhead                          float64
}

// paramSet is every parameter's draws, or its most likely value when samples == 0. The draws
// are kept once, per parameter (the drawer's); a sample's globals and design are gathered from
// them when asked, so no second copy of every draw is held.
type paramSet struct {
	m       *Model
	d       *dist.Drawer
	globals [][]float64 // [global name][sample]
	formats map[manifest.Format]*formatDraws
}

// formatDraws are one format's design parameters, each over the samples.
type formatDraws struct {
	areal, al, cu, el, bc, sep, cas, over []float64
	kind                                  casingKind
}

func newParamSet(m *Model, seed uint64, samples int) *paramSet {
	ps := &paramSet{m: m, d: dist.NewDrawer(seed, samples), formats: map[manifest.Format]*formatDraws{}}
	ps.globals = make([][]float64, len(globalNames))
	for i, name := range globalNames {
		ps.globals[i] = ps.values("all", name)
	}
	return ps
}

// format returns format f's design draws, drawn when first asked for: a lot draws only its own
// formats (each parameter has its own stream, so when it is drawn does not change its draws).
func (ps *paramSet) format(f manifest.Format) *formatDraws {
	if fd := ps.formats[f]; fd != nil {
		return fd
	}
	sc := f.String()
	fd := &formatDraws{areal: ps.values(sc, "areal_capacity"), al: ps.values(sc, "al_foil_thickness"), cu: ps.values(sc, "cu_foil_thickness"),
		el: ps.values(sc, "electrolyte_per_area"), bc: ps.values(sc, "binder_carbon"), sep: ps.values(sc, "separator")}
	for k, name := range casingNames {
		if ps.m.get(sc, name) != nil {
			fd.cas, fd.kind = ps.values(sc, name), casingKind(k)
		}
	}
	fd.over = make([]float64, max(ps.d.Samples(), 1))
	if f.IsAssembly() {
		fd.over = ps.values(sc, sc+"_overhead")
	}
	ps.formats[f] = fd
	return fd
}

// global returns the "all" parameters at sample s.
func (ps *paramSet) global(s int) globals {
	g := ps.globals
	return globals{g[0][s], g[1][s], g[2][s], g[3][s], g[4][s], g[5][s], g[6][s], g[7][s], g[8][s], g[9][s], g[10][s], g[11][s], g[12][s], g[13][s], g[14][s]}
}

// design returns format f's cell design at sample s.
func (ps *paramSet) design(f manifest.Format, s int) design {
	return ps.format(f).at(s)
}

// at returns the format's cell design at sample s.
func (d *formatDraws) at(s int) design {
	return design{d.areal[s], d.al[s], d.cu[s], d.el[s], d.bc[s], d.sep[s], d.cas[s], d.kind, d.over[s]}
}

// chemistryDesignNames are the design parameters a chemistry may set for its own cells, in
// place of its format's (scope "chemistry <key>" in model.csv): the cells of some chemistries
// were built one way (the first LiFePO4 cells as thin power electrodes).
var chemistryDesignNames = []string{"areal_capacity"}

// designOf returns the cell design of chemistry ch in format f at sample s: the format's, with
// the chemistry's own design parameters where it is a single material that has them.
func (ps *paramSet) designOf(ch *cathode.Chemistry, f manifest.Format, s int) design {
	d := ps.design(f, s)
	if a := ps.chemAreal(ch); a != nil {
		d.arealMAhCm2 = a[s]
	}
	return d
}

// chemAreal returns the draws of chemistry ch's own areal capacity, nil when it takes its
// format's (a blend, or a material without a row of its own).
func (ps *paramSet) chemAreal(ch *cathode.Chemistry) []float64 {
	if len(ch.Components) != 1 {
		return nil
	}
	scope := "chemistry " + ch.Components[0].Entry.Key
	p := ps.m.get(scope, "areal_capacity")
	if p == nil {
		return nil
	}
	return ps.rangeValues(scope+"/areal_capacity", p.Range)
}

// arealBounds is the range of areal capacities the model allows chemistry ch in format f: the
// chemistry's own where it has one (see designOf), else the format's.
func (ps *paramSet) arealBounds(ch *cathode.Chemistry, f manifest.Format) (lo, hi float64) {
	p := ps.m.get(f.String(), "areal_capacity")
	if len(ch.Components) == 1 {
		if q := ps.m.get("chemistry "+ch.Components[0].Entry.Key, "areal_capacity"); q != nil {
			p = q
		}
	}
	return p.Range.Min, p.Range.Max
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

// massOnly is what the energy of a group's lines known by weight only is drawn from: each
// component's Wh/kg across its plausible band and the assembly overhead, per sample.
type massOnly struct {
	kg   float64
	band [][]float64 // [component][sample] Wh/kg
	over []float64   // [sample]; nil for a cell format
}

// massOnlyDraws returns the draws a group's lines known by weight only need (none when it has
// no such lines).
func (ps *paramSet) massOnlyDraws(g *group) massOnly {
	mo := massOnly{kg: g.massOnlyKg}
	if g.massOnlyKg == 0 {
		return mo
	}
	mo.band = make([][]float64, len(g.chem.Components))
	for j, c := range g.chem.Components {
		mo.band[j] = ps.rangeValues("chemistry "+c.Entry.Key+"/specific_energy", c.Entry.SpecificEnergyWhPerKg)
	}
	if g.format.IsAssembly() {
		mo.over = ps.values(g.format.String(), g.format.String()+"_overhead")
	}
	return mo
}

// wh is the energy of the lines known by weight only at sample i with component shares: their
// mass times the specific energy of the drawn chemistry (the components' drawn Wh/kg weighted by
// the drawn shares), lowered by the drawn overhead of an assembly.
func (mo massOnly) wh(i int, shares []float64) float64 {
	if mo.kg == 0 {
		return 0
	}
	w := 0.0
	for j := range mo.band {
		w += shares[j] * mo.band[j][i]
	}
	if mo.over != nil {
		w *= 1 - mo.over[i]
	}
	return mo.kg * w
}
