package leach

import (
	"fmt"
	"io/fs"
	"maps"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/dist"
)

// MolarVolumeSTPLPerMol is the ideal-gas molar volume at 0 °C and 101.325 kPa (CODATA: 22.413 969 L/mol).
const MolarVolumeSTPLPerMol = 22.413969

// Options sets the route and the dosing. Give either the planner's form (AcidExcess and
// FreeAcidMolPerL, ReductantExcess) or the bench recipe (RecipeAcidMolPerL and RecipeH2O2VolPct);
// PulpDensityGPerL or LiquorVolumeL fixes the volume.
type Options struct {
	Route            cathode.Route `json:"route"`
	AcidWtPct        float64       `json:"acid_strength_wt_pct"`       // strength of the acid bought (e.g. 98 for H2SO4, 32 for HCl)
	H2O2WtPct        float64       `json:"h2o2_strength_wt_pct"`       // strength of the peroxide bought (30, 35, 50)
	AcidExcess       float64       `json:"acid_excess_factor"`         // factor over stoichiometry (planner form)
	FreeAcidMolPerL  float64       `json:"free_acid_target_mol_per_l"` // free acid to leave in the liquor, mol/L of acid (planner form)
	ReductantExcess  float64       `json:"h2o2_excess_factor"`         // factor over stoichiometric H2O2 (peroxide decomposes in parallel)
	PulpDensityGPerL float64       `json:"pulp_density_g_per_l"`       // black mass per litre of liquor
	LiquorVolumeL    float64       `json:"liquor_volume_l,omitempty"`  // alternatively a fixed liquor volume
	// Bench recipe: acid molarity of the lixiviant and peroxide as vol% of the commercial solution.
	RecipeAcidMolPerL float64 `json:"recipe_acid_mol_per_l,omitempty"`
	RecipeH2O2VolPct  float64 `json:"recipe_h2o2_vol_pct,omitempty"`
	// ExtractionOverride fixes the extraction of listed elements (0..1) instead of drawing it from
	// data/extraction.csv; the key "*" sets every metal.
	ExtractionOverride map[string]float64 `json:"extraction_override,omitempty"`
	AcidPricePerKg     float64            `json:"acid_price_per_kg,omitempty"` // per kg of commercial acid (currency-neutral); 0: no cost
	H2O2PricePerKg     float64            `json:"h2o2_price_per_kg,omitempty"` // per kg of the reductant as bought
	// Reductant names the reductant of the sulfuric routes (H2O2, SO2, Na2S2O5, C6H8O6, or
	// "none"); empty means H2O2.
	Reductant string `json:"reductant,omitempty"`
	// RecipeReductantGPerL doses a solid or gaseous reductant in g per litre of liquor.
	RecipeReductantGPerL float64 `json:"recipe_reductant_g_per_l,omitempty"`
	// TemperatureC is the leach temperature; it sets the share of peroxide that decomposes and
	// how much of the oxides' reduction their own oxygen gives when short of reductant.
	TemperatureC float64 `json:"temperature_C"`
	// Currency names the currency of the reagent prices ("" when not said).
	Currency string `json:"currency,omitempty"`
	// GrowVolume lets the liquor volume grow to hold reagents that exceed it, instead of refusing.
	GrowVolume bool `json:"grow_volume,omitempty"`
}

// Strengths of the commercial acids a bench buys (common practice): concentrated sulfuric acid
// and the usual 32 % hydrochloric acid.
const (
	sulfuricAcidWtPct     = 98
	hydrochloricAcidWtPct = 32
)

// DefaultAcidWtPct is the strength of the acid a route is usually dosed with: 98 % H2SO4 on the
// sulfuric routes, 32 % HCl on the hydrochloric route.
func DefaultAcidWtPct(r cathode.Route) float64 {
	if r == cathode.Hydrochloric {
		return hydrochloricAcidWtPct
	}
	return sulfuricAcidWtPct
}

// DefaultOptions is the planner's default: sulfuric acid 98 % with 30 % peroxide, acid at
// stoichiometry plus 0.5 mol/L free acid, peroxide at 1.5× stoichiometry, 100 g/L pulp density.
func DefaultOptions() Options {
	return Options{Route: cathode.SulfuricPeroxide, AcidWtPct: DefaultAcidWtPct(cathode.SulfuricPeroxide), H2O2WtPct: 30, AcidExcess: 1, FreeAcidMolPerL: 0.5,
		ReductantExcess: 1.5, PulpDensityGPerL: 100, Reductant: "H2O2", TemperatureC: 60}
}

// Reagent is a reagent's demand.
type Reagent struct {
	Name       string     `json:"name"`
	StrengthWt float64    `json:"strength_wt_pct"`
	DensityGmL float64    `json:"density_g_per_mL"`
	MolarMass  float64    `json:"molar_mass_g_per_mol"`
	KgPure     dist.Stat  `json:"kg_pure"`
	Kg         dist.Stat  `json:"kg"`
	Litres     dist.Stat  `json:"litres"`
	Cost       *dist.Stat `json:"cost,omitempty"`
	StoichKg   dist.Stat  `json:"stoichiometric_kg_pure"`
	// Ratio is the dose over what the planned extraction needs; RatioFull over what full
	// dissolution of the lot needs.
	Ratio     dist.Stat `json:"ratio_to_stoichiometry"`
	RatioFull dist.Stat `json:"ratio_to_full_dissolution"`
}

// Limit is a reagent that limited the dissolution: in what share of the samples, and what share
// of the planned dissolution was reached.
type Limit struct {
	Reagent      string    `json:"reagent"`
	SampleShare  float64   `json:"share_of_samples"`
	ReachedShare dist.Stat `json:"reached_share_of_plan"`
}

// Scrubber is the caustic to absorb the chlorine of the hydrochloric route.
type Scrubber struct {
	Reagent  string    `json:"reagent"`
	KgPure   dist.Stat `json:"kg_pure"`
	Kg       dist.Stat `json:"kg"`
	Litres   dist.Stat `json:"litres"`
	Reaction string    `json:"reaction"`
}

// Gas is a gas evolved.
type Gas struct {
	Mol   dist.Stat `json:"mol"`
	M3STP dist.Stat `json:"m3_stp"`
}

// Conc is an element's concentration in the liquor.
type Conc struct {
	GPerL   dist.Stat `json:"g_per_l"`
	MolPerL dist.Stat `json:"mol_per_l"`
}

// Liquor is the expected leach liquor.
type Liquor struct {
	VolumeL        dist.Stat       `json:"volume_l"`
	Elements       map[string]Conc `json:"elements"`
	Anion          string          `json:"anion"`
	AnionMolPerL   dist.Stat       `json:"anion_mol_per_l"`
	ChargeResidual float64         `json:"charge_balance_max_relative_residual"`
	// ExtractionReached is each metal's share of the feed that dissolved with the dose given.
	ExtractionReached map[string]dist.Stat `json:"extraction_reached"`
	// Fe3GPerL is the iron oxidised to Fe(III) by peroxide left after the reduction.
	Fe3GPerL *dist.Stat `json:"fe3_g_per_l,omitempty"`
}

// Report is the leach plan of a lot.
type Report struct {
	Route           string               `json:"route"`
	Settings        Options              `json:"settings"`
	Reagents        []Reagent            `json:"reagents"`
	WaterL          dist.Stat            `json:"make_up_water_l"`
	Gases           map[string]Gas       `json:"gases"`
	GasReference    string               `json:"gas_reference"`
	Liquor          Liquor               `json:"liquor"`
	FreeAcidMolPerL dist.Stat            `json:"free_acid_mol_per_l"`
	Saturation      map[string]dist.Stat `json:"saturation"`
	// SaturationAtC is, per salt, the temperature between the filtered liquor's and the leach's
	// at which it is least soluble: the temperature its saturation ratio is taken at.
	SaturationAtC map[string]float64 `json:"saturation_at_C"`
	TotalCost     *dist.Stat         `json:"total_cost,omitempty"`
	// CostPerSample is the reagent cost of each Monte Carlo sample (for values net of reagents
	// that move coherently with the draws); nil without prices.
	CostPerSample []float64 `json:"-"`
	Limiting      []Limit   `json:"limiting,omitempty"`
	Scrubber      *Scrubber `json:"chlorine_scrubber,omitempty"`
	// PeroxideHeatRiseK is the adiabatic temperature rise if all the peroxide decomposed.
	PeroxideHeatRiseK *dist.Stat   `json:"peroxide_heat_rise_K,omitempty"`
	Warnings          []string     `json:"warnings"`
	Safety            []string     `json:"safety"`
	Assumptions       []string     `json:"assumptions"`
	Extraction        []dist.Param `json:"extraction"`
}

type reagentTable map[string][][2]float64 // reagent -> sorted (wt%, density)

// salt is a liquor salt and its solubility in water against temperature.
type salt struct {
	name, cation, anion string
	// curve is (temperature °C, g per 100 g water), sorted by temperature.
	curve [][2]float64
}

// solubilityPrefix starts solubility.csv's columns, g_per_100g_water_<T>C.
const solubilityPrefix = "g_per_100g_water_"

// gPer100gAt is the solubility at tC, interpolated linearly and held flat beyond the curve's ends.
func (sl salt) gPer100gAt(tC float64) float64 {
	c := sl.curve
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

// leastSoluble is the least solubility over [loC, hiC] and the temperature it falls at. On a
// piecewise-linear curve the least lies at an end of the interval or at a point of the curve.
func (sl salt) leastSoluble(loC, hiC float64) (gPer100g, atC float64) {
	gPer100g, atC = sl.gPer100gAt(loC), loC
	try := func(t float64) {
		if g := sl.gPer100gAt(t); g < gPer100g {
			gPer100g, atC = g, t
		}
	}
	for _, pt := range sl.curve {
		if pt[0] > loC && pt[0] < hiC {
			try(pt[0])
		}
	}
	try(hiC)
	return gPer100g, atC
}

// anionWord names a liquor anion in prose.
var anionWord = map[string]string{"SO4": "sulfate", "Cl": "chloride"}

// filteredLiquorC is the temperature a filtered liquor cools to in the plant (common practice).
const filteredLiquorC = 20.0

// Tables are the leach planner's reference tables: reagent densities, salt solubilities,
// extraction ranges per route, reductants, peroxide loss and lattice oxygen. Load them with
// LoadTables from any fs.FS (a test can hand in its own); DefaultTables are the embedded ones.
type Tables struct {
	reductants []*Reductant
	loss       []byTemperature // share of a peroxide dose that decomposes
	lattice    []byTemperature // share of the oxides' reduction their own oxygen gives (as O2)
	density    reagentTable
	salts      []salt
	extraction map[cathode.Route]map[string]cathode.Range
	sources    map[string]string // "route/element" -> source
	// elements are the atomic weights and potentials read from the same files.
	elements *cathode.Elements
}

// DefaultTables returns the embedded tables (read once).
var DefaultTables = sync.OnceValues(func() (*Tables, error) { return LoadTables(data.FS) })

// molarMassG is the molar mass (g/mol) of a formula this package names (an acid, caustic), with
// the tables' atomic weights. Those formulas are constants, so an error is a programming error.
func (lt *Tables) molarMassG(formula string) float64 {
	m, err := lt.MolarMassG(formula)
	if err != nil {
		panic("leach: " + formula + ": " + err.Error())
	}
	return m
}

// Elements returns the atomic weights the tables were read with.
func (lt *Tables) Elements() *cathode.Elements { return lt.elements }

// MolarMassG is the molar mass (g/mol) of a formula with the tables' atomic weights.
func (lt *Tables) MolarMassG(formula string) (float64, error) {
	f, err := lt.elements.ParseFormula(formula)
	if err != nil {
		return 0, err
	}
	return f.MolarMass(lt.elements), nil
}

// LoadTables reads reagents.csv, solubility.csv, extraction.csv, reductants.csv and
// peroxide_loss.csv and lattice_oxygen.csv from fsys.
func LoadTables(fsys fs.FS) (*Tables, error) {
	es, err := cathode.LoadElements(fsys)
	if err != nil {
		return nil, err
	}
	lt := &Tables{density: reagentTable{}, extraction: map[cathode.Route]map[string]cathode.Range{}, sources: map[string]string{}, elements: es}
	t, err := data.ReadTable(fsys, "reagents.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range t.Rows {
		w, err := r.Float("wt_pct")
		if err != nil {
			return nil, err
		}
		d, err := r.Float("density_g_per_mL")
		if err != nil {
			return nil, err
		}
		lt.density[r.Str("reagent")] = append(lt.density[r.Str("reagent")], [2]float64{w, d})
	}
	for _, v := range lt.density {
		sort.Slice(v, func(i, j int) bool { return v[i][0] < v[j][0] })
	}
	st, err := data.ReadTable(fsys, "solubility.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range st.Rows {
		sl := salt{name: r.Str("salt"), cation: r.Str("cation"), anion: r.Str("anion")}
		for _, col := range st.Header {
			num, ok := strings.CutPrefix(col, solubilityPrefix)
			if !ok || r.Str(col) == "" {
				continue
			}
			degrees, inC := strings.CutSuffix(num, "c") // the table's headers are lower-cased
			tC, err := strconv.ParseFloat(degrees, 64)
			if err != nil || !inC {
				return nil, r.Errorf("column %s: want %s<temperature>C", col, solubilityPrefix)
			}
			g, err := r.Float(col)
			if err != nil {
				return nil, err
			}
			if g <= 0 {
				return nil, r.Errorf("column %s: a solubility must be positive", col)
			}
			sl.curve = append(sl.curve, [2]float64{tC, g})
		}
		if len(sl.curve) == 0 {
			return nil, r.Errorf("%s: no solubility given", sl.name)
		}
		sort.Slice(sl.curve, func(i, j int) bool { return sl.curve[i][0] < sl.curve[j][0] })
		lt.salts = append(lt.salts, sl)
	}
	et, err := data.ReadTable(fsys, "extraction.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range et.Rows {
		route, err := cathode.ParseRoute(r.Str("route"))
		if err != nil {
			return nil, r.Errorf("%v", err)
		}
		var rg cathode.Range
		if rg.Min, rg.Mode, rg.Max, err = r.Range("", ""); err != nil {
			return nil, err
		}
		if !rg.Valid() || rg.Min < 0 || rg.Max > 1 {
			return nil, r.Errorf("extraction range must be ordered within 0..1")
		}
		if lt.extraction[route] == nil {
			lt.extraction[route] = map[string]cathode.Range{}
		}
		lt.extraction[route][r.Str("element")] = rg
		lt.sources[route.String()+"/"+r.Str("element")] = r.Str("source")
	}
	if lt.reductants, err = LoadReductants(fsTables{fsys}, es); err != nil {
		return nil, err
	}
	if lt.loss, err = readByTemperature(fsys, "peroxide_loss.csv", false); err != nil {
		return nil, err
	}
	if lt.lattice, err = readByTemperature(fsys, "lattice_oxygen.csv", true); err != nil {
		return nil, err
	}
	return lt, nil
}

// byTemperature is a share that applies from a temperature up to the next row's.
type byTemperature struct {
	fromC  float64
	r      cathode.Range
	source string
}

// readByTemperature reads a table of shares by temperature (temperature_min_C, min, mode, max,
// source), sorted by temperature. A share lies in [0, 1), or [0, 1] when upToOne.
func readByTemperature(fsys fs.FS, name string, upToOne bool) ([]byTemperature, error) {
	t, err := data.ReadTable(fsys, name)
	if err != nil {
		return nil, err
	}
	var out []byTemperature
	for _, r := range t.Rows {
		var b byTemperature
		if b.fromC, err = r.Float("temperature_min_C"); err != nil {
			return nil, err
		}
		if b.r.Min, b.r.Mode, b.r.Max, err = r.Range("", ""); err != nil {
			return nil, err
		}
		if b.r.Min < 0 || b.r.Max > 1 {
			return nil, r.Errorf("a share lies from 0 to 1")
		}
		if !upToOne && b.r.Max == 1 {
			return nil, r.Errorf("a share lies from 0 up to, not including, 1")
		}
		b.source = r.Str("source")
		out = append(out, b)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].fromC < out[j].fromC })
	return out, nil
}

// at returns the row of rows that applies at temperature tC.
func at(rows []byTemperature, tC float64) byTemperature {
	out := rows[0]
	for _, l := range rows {
		if tC >= l.fromC {
			out = l
		}
	}
	return out
}

// peroxideLoss returns the decomposed share of a peroxide dose at temperature tC.
func (lt *Tables) peroxideLoss(tC float64) byTemperature { return at(lt.loss, tC) }

// latticeOxygen returns the share of the oxides' reduction their own oxygen gives at tC.
func (lt *Tables) latticeOxygen(tC float64) byTemperature { return at(lt.lattice, tC) }

// Density returns the density of a reagent solution (g/mL) at strength wtPct, interpolated
// linearly in the reagent table; an error if wtPct is outside the table.
func Density(reagent string, wtPct float64) (float64, error) {
	lt, err := DefaultTables()
	if err != nil {
		return 0, err
	}
	return lt.Density(reagent, wtPct)
}

// Density is the package-level Density on these tables.
func (lt *Tables) Density(reagent string, wtPct float64) (float64, error) {
	pts := lt.density[reagent]
	if len(pts) == 0 {
		return 0, fmt.Errorf("no density table for %s", reagent)
	}
	if wtPct < pts[0][0] || wtPct > pts[len(pts)-1][0] {
		return 0, fmt.Errorf("no density for %s at %g wt%% (table covers %g–%g wt%%)", reagent, wtPct, pts[0][0], pts[len(pts)-1][0])
	}
	for i := 1; i < len(pts); i++ {
		if wtPct <= pts[i][0] {
			a, b := pts[i-1], pts[i]
			return a[1] + (wtPct-a[0])/(b[0]-a[0])*(b[1]-a[1]), nil
		}
	}
	return pts[len(pts)-1][1], nil
}

var leachSafety = map[cathode.Route][]string{
	cathode.SulfuricPeroxide: {
		"Add black mass slowly to the acid: aluminium and other metals give hydrogen (flammable 4–75 vol% in air); vent the reactor and keep ignition sources away.",
		"Hydrogen peroxide decomposes exothermically to oxygen, faster on Co, Mn, Cu and Fe surfaces: dose gradually, control temperature, keep it away from organic vapours.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin; use compatible vessels and HF-rated protection.",
	},
	cathode.Hydrochloric: {
		"Hydrochloric acid on Co(III), Ni(III/IV) and Mn(IV) oxides evolves chlorine (toxic; IDLH 10 ppm): closed reactor with a caustic scrubber.",
		"Aluminium and other metals give hydrogen (flammable 4–75 vol% in air); concentrated HCl fumes.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin.",
	},
	cathode.SulfuricSelective: {
		"Peroxide as oxidant: exothermic, gives oxygen on decomposition; dose gradually and control temperature.",
		"Metals in the feed give hydrogen; fluoride enters the liquor as HF.",
	},
}

// Input is the black mass to leach, as Monte Carlo samples: the compounds' formulas, their
// masses per sample (kg) and the black mass per sample (kg). Draws gives the planner's own
// parameters (extraction, peroxide loss) from the run's seeded streams.
type Input struct {
	Formulas    []string
	Kg          [][]float64 // [compound][sample]
	BlackMassKg []float64   // [sample]
	Draws       *dist.Drawer
	Tables      *Tables // nil: DefaultTables
}

// Plan computes the leach plan for every sample of the black mass, in three steps:
// the demand (what the planned extraction and full dissolution need), the dose (the planner's
// or the bench recipe's), and what that dose actually dissolves (leachSample: limiting acid and
// electrons), then the liquor, saturation and warnings.
func Plan(s Input, opt Options) (*Report, error) {
	lt := s.Tables
	if lt == nil {
		var err error
		if lt, err = DefaultTables(); err != nil {
			return nil, err
		}
	}
	if err := checkLeachOptions(&opt); err != nil {
		return nil, err
	}
	p, err := newLeachPlanner(s, opt, lt)
	if err != nil {
		return nil, err
	}
	if err := p.run(); err != nil {
		return nil, err
	}
	return p.report()
}

// leachPlanner holds one leach plan's inputs and per-sample results.
type leachPlanner struct {
	s       Input
	opt     Options
	lt      *Tables
	route   cathode.Route
	red     *Reductant
	species []cathode.Species
	molarG  []float64
	ext     map[string][]float64
	ranges  []dist.Param
	lost    []float64 // share of the peroxide dose that decomposes, per sample
	lattice []float64 // share of the planned reduction the oxides' own oxygen can give, per sample
	acidM   float64
	acidRho float64
	redRho  float64 // density of the reductant solution (peroxide), g/mL
	n       int
	// per sample
	vol, acidDose, redDose, acidPlan, redPlan, acidFull, redFull, water []float64
	res                                                                 []redoxResult
	grown                                                               int
}

func newLeachPlanner(s Input, opt Options, lt *Tables) (*leachPlanner, error) {
	if len(s.Formulas) != len(s.Kg) || s.Draws == nil {
		return nil, fmt.Errorf("leach: %d formulas for %d mass columns, or no parameter draws", len(s.Formulas), len(s.Kg))
	}
	p := &leachPlanner{s: s, opt: opt, lt: lt, route: opt.Route, n: len(s.BlackMassKg), ext: map[string][]float64{}}
	p.acidM = lt.molarMassG(p.route.Acid())
	var err error
	if p.acidRho, err = lt.Density(p.route.Acid(), opt.AcidWtPct); err != nil {
		return nil, err
	}
	if p.route != cathode.Hydrochloric && opt.Reductant != "none" {
		if p.red, err = FindReductant(lt.reductants, opt.Reductant); err != nil {
			return nil, err
		}
		if p.red.Form == "solution" {
			if p.redRho, err = lt.Density(p.red.Formula, opt.H2O2WtPct); err != nil {
				return nil, err
			}
		}
	}
	for _, el := range slices.Sorted(maps.Keys(lt.extraction[p.route])) {
		rg := lt.extraction[p.route][el]
		p.ext[el] = s.Draws.Draws("extraction "+p.route.String()+"/"+el, rg.Min, rg.Mode, rg.Max)
		p.ranges = append(p.ranges, dist.Param{Scope: "extraction " + p.route.String(), Name: el, Min: rg.Min, Mode: rg.Mode, Max: rg.Max, Unit: "fraction", Source: lt.sources[p.route.String()+"/"+el]})
	}
	loss := lt.peroxideLoss(opt.TemperatureC)
	p.lost = s.Draws.Draws(fmt.Sprintf("peroxide loss/%g C", loss.fromC), loss.r.Min, loss.r.Mode, loss.r.Max)
	if p.red != nil && p.red.Oxidant {
		p.ranges = append(p.ranges, dist.Param{Scope: "peroxide", Name: fmt.Sprintf("decomposed share at %g °C", opt.TemperatureC), Min: loss.r.Min, Mode: loss.r.Mode, Max: loss.r.Max, Unit: "fraction", Source: loss.source})
	}
	lat := lt.latticeOxygen(opt.TemperatureC)
	p.lattice = s.Draws.Draws(fmt.Sprintf("lattice oxygen/%g C", lat.fromC), lat.r.Min, lat.r.Mode, lat.r.Max)
	if p.route != cathode.Hydrochloric {
		// The share of the oxides' reduction their own oxygen gives (as O2) when short of reductant.
		p.ranges = append(p.ranges, dist.Param{Scope: "oxide oxygen", Name: fmt.Sprintf("reduction share at %g °C", opt.TemperatureC),
			Min: lat.r.Min, Mode: lat.r.Mode, Max: lat.r.Max, Unit: "fraction", Source: lat.source})
	}
	p.species = make([]cathode.Species, len(s.Kg))
	p.molarG = make([]float64, len(s.Kg))
	for c := range s.Kg {
		f, err := lt.elements.ParseFormula(s.Formulas[c])
		if err != nil {
			return nil, err
		}
		if p.species[c], err = cathode.NewSpecies(f); err != nil {
			return nil, err
		}
		p.molarG[c] = f.MolarMass(f.Elements())
	}
	for _, x := range []*[]float64{&p.vol, &p.acidDose, &p.redDose, &p.acidPlan, &p.redPlan, &p.acidFull, &p.redFull, &p.water} {
		*x = make([]float64, p.n)
	}
	p.res = make([]redoxResult, p.n)
	return p, nil
}

// plan returns sample i's planned extraction of an element: the user's, else the route's draw,
// else complete.
func (p *leachPlanner) plan(i int) func(string) float64 {
	return func(sym string) float64 {
		if v, ok := p.opt.ExtractionOverride[sym]; ok {
			return v
		}
		if v, ok := p.opt.ExtractionOverride["*"]; ok {
			return v
		}
		if v, ok := p.ext[sym]; ok {
			return v[min(i, len(v)-1)]
		}
		return 1
	}
}

func (p *leachPlanner) input(i int, plan func(string) float64, hPlus, redMol float64) redoxInput {
	mol := make([]float64, len(p.s.Kg))
	for c, kg := range p.s.Kg {
		mol[c] = kg[i] * 1000 / p.molarG[c]
	}
	es := p.lt.elements
	return redoxInput{route: p.route, species: p.species, mol: mol, plan: plan, hPlus: hPlus, red: p.red, redMol: redMol, lost: p.lost[i], lattice: p.lattice[i],
		metalE0: func(sym string) float64 {
			if el := es.Lookup(sym); el != nil && el.HasPotential {
				return el.StandardPotential
			}
			return 0
		}}
}

// run doses and dissolves every sample.
func (p *leachPlanner) run() error {
	protons := p.route.AcidProtons()
	inf := math.Inf(1)
	full := func(string) float64 { return 1 }
	for i := range p.n {
		plan := p.plan(i)
		need, err := leachSample(p.input(i, plan, inf, inf))
		if err != nil {
			return err
		}
		fullNeed, err := leachSample(p.input(i, full, inf, inf))
		if err != nil {
			return err
		}
		p.acidPlan[i], p.acidFull[i] = need.hPlusUsed/protons, fullNeed.hPlusUsed/protons
		p.redPlan[i], p.redFull[i] = need.redUsed+need.oxidantUsed, fullNeed.redUsed+fullNeed.oxidantUsed
		v := p.opt.LiquorVolumeL
		if v == 0 {
			v = p.s.BlackMassKg[i] * 1000 / p.opt.PulpDensityGPerL
		}
		if p.opt.RecipeAcidMolPerL > 0 {
			p.acidDose[i] = p.opt.RecipeAcidMolPerL * v
		} else {
			p.acidDose[i] = p.acidPlan[i]*p.opt.AcidExcess + p.opt.FreeAcidMolPerL*v
		}
		switch {
		case p.red == nil:
		case p.opt.RecipeH2O2VolPct > 0:
			p.redDose[i] = p.opt.RecipeH2O2VolPct / 100 * v * 1000 * p.redRho * p.opt.H2O2WtPct / 100 / p.red.MolarMassGMol
		case p.opt.RecipeReductantGPerL > 0:
			p.redDose[i] = p.opt.RecipeReductantGPerL * v / p.red.MolarMassGMol
		default:
			p.redDose[i] = p.redPlan[i] * p.opt.ReductantExcess
		}
		// The reagents take up part of the liquor; the rest is make-up water.
		p.water[i] = v - p.acidLitres(p.acidDose[i]) - p.redLitres(p.redDose[i])
		if p.water[i] < 0 && p.water[i] > -1e-9*v {
			p.water[i] = 0 // the reagents fill the volume exactly (a recipe of neat acid)
		}
		if p.water[i] < 0 {
			if !p.opt.GrowVolume {
				return fmt.Errorf("leach: the acid and reductant alone take %.4g L, more than the %.4g L of liquor the pulp density or volume gives: "+
					"lower the dose, use stronger reagents, or let the volume grow with the reagents (--grow-volume)", v-p.water[i], v)
			}
			v -= p.water[i]
			p.water[i] = 0
			p.grown++
		}
		p.vol[i] = v
		got, err := leachSample(p.input(i, plan, p.acidDose[i]*protons, p.redDose[i]))
		if err != nil {
			return err
		}
		got.anionMol = p.acidDose[i]
		switch {
		case p.route == cathode.Hydrochloric:
			got.anionMol = p.acidDose[i] - 2*got.cl2
		case p.red != nil:
			got.anionMol += got.redUsed * p.red.SulfateMol
		}
		p.res[i] = got
	}
	return nil
}

func (p *leachPlanner) acidLitres(mol float64) float64 {
	return mol * p.acidM / 1000 / (p.opt.AcidWtPct / 100) / p.acidRho
}

func (p *leachPlanner) redLitres(mol float64) float64 {
	if p.red == nil || p.red.Form != "solution" {
		return 0 // a gas or a solid takes no liquor volume to speak of
	}
	return mol * p.red.MolarMassGMol / 1000 / (p.opt.H2O2WtPct / 100) / p.redRho
}

// report summarises the samples.
func (p *leachPlanner) report() (*Report, error) {
	n, opt, route := p.n, p.opt, p.route
	lr := &Report{Route: route.String(), Settings: opt, Gases: map[string]Gas{}, Saturation: map[string]dist.Stat{}, SaturationAtC: map[string]float64{},
		GasReference: "ideal gas at 0 °C and 101.325 kPa (22.414 L/mol)", Safety: leachSafety[route], Extraction: p.ranges}
	col := func(f func(i int) float64) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = f(i)
		}
		return out
	}
	acidR := p.reagent(route.Acid(), opt.AcidWtPct, p.acidRho, p.acidM, p.acidDose, p.acidPlan, p.acidFull, opt.AcidPricePerKg)
	lr.Reagents = append(lr.Reagents, acidR)
	var redR *Reagent
	if p.red != nil {
		strength, rho := 100.0, 0.0
		if p.red.Form == "solution" {
			strength, rho = opt.H2O2WtPct, p.redRho
		}
		r := p.reagent(p.red.Key, strength, rho, p.red.MolarMassGMol, p.redDose, p.redPlan, p.redFull, opt.H2O2PricePerKg)
		lr.Reagents = append(lr.Reagents, r)
		redR = &lr.Reagents[len(lr.Reagents)-1]
	}
	lr.WaterL = dist.Summarise(p.water)
	if opt.AcidPricePerKg > 0 || opt.H2O2PricePerKg > 0 {
		lr.CostPerSample = col(func(i int) float64 {
			c := p.acidDose[i] * p.acidM / 1000 / (opt.AcidWtPct / 100) * opt.AcidPricePerKg
			if p.red != nil {
				c += p.redDose[i] * p.red.MolarMassGMol / 1000 / (redStrength(p.red, opt) / 100) * opt.H2O2PricePerKg
			}
			return c
		})
		st := dist.Summarise(lr.CostPerSample)
		lr.TotalCost = &st
	}
	gases := map[string]func(r redoxResult) float64{
		"H2": func(r redoxResult) float64 { return r.h2 }, "O2": func(r redoxResult) float64 { return r.o2 },
		"Cl2": func(r redoxResult) float64 { return r.cl2 }, "CO2": func(r redoxResult) float64 { return r.co2 },
	}
	for name, g := range gases {
		mol := col(func(i int) float64 { return g(p.res[i]) })
		if slices.Max(mol) > 0 {
			lr.Gases[name] = Gas{Mol: dist.Summarise(mol), M3STP: dist.Summarise(col(func(i int) float64 { return mol[i] * MolarVolumeSTPLPerMol / 1000 }))}
		}
	}
	es := p.lt.elements
	perL := func(f func(i int) float64) []float64 { return col(func(i int) float64 { return f(i) / p.vol[i] }) }
	chargeRes := 0.0
	for i, r := range p.res {
		pos := r.freeH + r.fe3Mol
		for k, sym := range leachElements {
			pos += cathode.AqueousCharge(sym) * r.liquorMol[k]
		}
		neg := r.anionMol * route.AnionCharge()
		if neg > 0 {
			chargeRes = math.Max(chargeRes, math.Abs(pos-neg)/neg)
		}
		_ = i
	}
	// The residual is reported to 1e-12: below that it is floating-point noise, which would make
	// reports differ between machines.
	lr.Liquor = Liquor{VolumeL: dist.Summarise(p.vol), Elements: map[string]Conc{}, Anion: route.Anion(), ChargeResidual: dist.Round(chargeRes, 12),
		ExtractionReached: map[string]dist.Stat{}}
	for k, e := range leachElements {
		mol := col(func(i int) float64 { return p.res[i].liquorMol[k] })
		if slices.Max(mol) <= 0 {
			continue
		}
		lr.Liquor.Elements[e] = Conc{GPerL: dist.Summarise(perL(func(i int) float64 { return mol[i] * es.Weight(e) })), MolPerL: dist.Summarise(perL(func(i int) float64 { return mol[i] }))}
		if e != "Na" && e != "P" && e != "F" {
			lr.Liquor.ExtractionReached[e] = dist.Summarise(col(func(i int) float64 {
				if f := p.res[i].feedMol[k]; f > 0 {
					return mol[i] / f
				}
				return 0
			}))
		}
	}
	if fe3 := col(func(i int) float64 { return p.res[i].fe3Mol }); slices.Max(fe3) > 0 {
		st := dist.Summarise(perL(func(i int) float64 { return fe3[i] * es.Weight("Fe") }))
		lr.Liquor.Fe3GPerL = &st
	}
	lr.Liquor.AnionMolPerL = dist.Summarise(perL(func(i int) float64 { return p.res[i].anionMol }))
	lr.FreeAcidMolPerL = dist.Summarise(perL(func(i int) float64 { return p.res[i].freeH / route.AcidProtons() }))
	p.limits(lr)
	p.saturation(lr)
	p.byproducts(lr)
	p.warnings(lr, acidR, redR)
	return lr, nil
}

func redStrength(r *Reductant, opt Options) float64 {
	if r.Form == "solution" {
		return opt.H2O2WtPct
	}
	return 100
}

// reagent summarises a reagent's dose against the planned extraction's and full dissolution's
// needs.
func (p *leachPlanner) reagent(name string, wt, rho, molMass float64, dose, plan, full []float64, price float64) Reagent {
	n := p.n
	pure, comm, litres, sk, ratio, ratioFull := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		pure[i] = dose[i] * molMass / 1000
		comm[i] = pure[i] / (wt / 100)
		if rho > 0 {
			litres[i] = comm[i] / rho
		}
		sk[i] = plan[i] * molMass / 1000
		if plan[i] > 0 {
			ratio[i] = dose[i] / plan[i]
		}
		if full[i] > 0 {
			ratioFull[i] = dose[i] / full[i]
		}
	}
	rg := Reagent{Name: fmt.Sprintf("%s %g %%", name, wt), StrengthWt: wt, DensityGmL: dist.Round(rho, 4), MolarMass: dist.Round(molMass, 4), KgPure: dist.Summarise(pure),
		Kg: dist.Summarise(comm), Litres: dist.Summarise(litres), StoichKg: dist.Summarise(sk), Ratio: dist.Summarise(ratio), RatioFull: dist.Summarise(ratioFull)}
	if price > 0 {
		st := dist.Summarise(col(n, func(i int) float64 { return comm[i] * price }))
		rg.Cost = &st
	}
	return rg
}

func col(n int, f func(i int) float64) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = f(i)
	}
	return out
}

// limits says which reagent limited the dissolution, and in how many samples.
func (p *leachPlanner) limits(lr *Report) {
	var red, acid int
	for _, r := range p.res {
		if r.reductionCap < 1-1e-9 {
			red++
		}
		if r.acidCap < 1-1e-9 {
			acid++
		}
	}
	share := func(k int) float64 { return dist.Round(float64(k)/float64(p.n), 4) }
	if red > 0 {
		what := "the electron supply (metals in the feed and the oxides' own oxygen; no reductant)"
		if p.red != nil {
			what = p.red.Key + " (with the metals in the feed and the oxides' own oxygen)"
		}
		if p.route == cathode.Hydrochloric {
			what = "the electron supply (metals in the feed and the chloride)"
		}
		lr.Limiting = append(lr.Limiting, Limit{Reagent: what, SampleShare: share(red),
			ReachedShare: dist.Summarise(col(p.n, func(i int) float64 { return p.res[i].reductionCap }))})
	}
	if acid > 0 {
		lr.Limiting = append(lr.Limiting, Limit{Reagent: p.route.Acid(), SampleShare: share(acid),
			ReachedShare: dist.Summarise(col(p.n, func(i int) float64 { return p.res[i].acidCap }))})
	}
}

// saturation sets each salt's ratio to its solubility.
func (p *leachPlanner) saturation(lr *Report) {
	es := p.lt.elements
	for _, sl := range p.lt.salts {
		k := elementIndex(sl.cation)
		if k < 0 || sl.anion != p.route.Anion() {
			continue
		}
		f, _ := es.ParseFormula(sl.name)
		perSalt := f.Moles(sl.cation)
		gPer100g, atC := sl.leastSoluble(min(filteredLiquorC, p.opt.TemperatureC), max(filteredLiquorC, p.opt.TemperatureC))
		ratio := col(p.n, func(i int) float64 {
			mol := p.res[i].liquorMol[k]
			if sl.cation == "Fe" {
				fe3 := p.res[i].fe3Mol
				if strings.Contains(sl.name, "(SO4)3") || strings.Contains(sl.name, "Cl3") {
					mol = fe3
				} else {
					mol -= fe3
				}
			}
			return mol * f.MolarMass(es) / perSalt / (gPer100g * 10) / p.vol[i]
		})
		if slices.Max(ratio) <= 0 {
			continue
		}
		st := dist.Summarise(ratio)
		lr.Saturation[sl.name] = st
		lr.SaturationAtC[sl.name] = atC
		if st.P90 > saturationWarn {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s reaches %.0f %% of its solubility in water at %g °C, the least between the filtered liquor's %g °C and the leach's %g °C (P90; single-salt data, the shared %s and the acid lower it further): lower the pulp density or expect crystallisation",
				sl.name, 100*st.P90, atC, filteredLiquorC, p.opt.TemperatureC, anionWord[sl.anion]))
		}
	}
}

// saturationWarn is the share of a salt's single-salt water solubility at which the plan warns:
// well below 1, because the other sulfates and the free acid lower solubility (common-ion
// effect) and the check treats 1 L of liquor as 1 kg of water (common practice).
const saturationWarn = 0.6

// Published enthalpies for the cautions: ΔfH° of H2O2(aq, unionised) −191.17 kJ/mol and of
// H2O(l) −285.83 kJ/mol (NBS Tables of Chemical Thermodynamic Properties, J. Phys. Chem. Ref.
// Data 11 (1982) Suppl. 2; water: CODATA Key Values 1989), so H2O2(aq) → H2O(l) + ½O2 releases
// 94.66 kJ/mol. The liquor's heat capacity is taken as water's, 4.18 J/(g·K) (common practice).
const (
	peroxideDecompKJPerMol = 285.83 - 191.17
	liquorCpJPerGK         = 4.18
	naohPerCl2             = 2 // Cl2 + 2 NaOH → NaCl + NaOCl + H2O
	// scrubberNaOHWtPct is the caustic strength the scrubber is quoted in (the common
	// commercial 50 % solution).
	scrubberNaOHWtPct = 50
	// copperLeftWarnBelow is the copper extraction (P50) below which the hydrochloric route
	// warns that copper stays in the residue.
	copperLeftWarnBelow = 0.5
)

// byproducts adds the caustic to scrub the chlorine and the heat of peroxide decomposition.
func (p *leachPlanner) byproducts(lr *Report) {
	if g, ok := lr.Gases["Cl2"]; ok && g.Mol.P90 > 0 {
		rho, err := p.lt.Density("NaOH", scrubberNaOHWtPct)
		if err == nil {
			kg := col(p.n, func(i int) float64 { return p.res[i].cl2 * naohPerCl2 * p.lt.molarMassG("NaOH") / 1000 })
			w := scrubberNaOHWtPct / 100.0
			lr.Scrubber = &Scrubber{Reagent: fmt.Sprintf("NaOH %d %%", scrubberNaOHWtPct), KgPure: dist.Summarise(kg), Kg: dist.Summarise(col(p.n, func(i int) float64 { return kg[i] / w })),
				Litres:   dist.Summarise(col(p.n, func(i int) float64 { return kg[i] / w / rho })),
				Reaction: "Cl2 + 2 NaOH → NaCl + NaOCl + H2O (keep the scrubber caustic in excess; hypochlorite is an oxidant)"}
		}
	}
	if p.red != nil && p.red.Oxidant {
		rise := col(p.n, func(i int) float64 {
			q := (p.res[i].redDecomp + p.res[i].redUsed) * peroxideDecompKJPerMol * 1000 // J, as if all peroxide decomposed
			return q / (p.vol[i] * 1000 * liquorCpJPerGK)
		})
		st := dist.Summarise(rise)
		lr.PeroxideHeatRiseK = &st
		if st.P90 > 10 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("peroxide decomposition can heat the liquor by up to %.0f K (P90, adiabatic, 94.7 kJ/mol H2O2): dose it gradually with cooling", st.P90))
		}
	}
}

// shortfallSampleShare is the share of samples in which the reductant must limit the leach before
// the plan calls the extraction short: one outcome in ten, the same margin as ordering to P90.
const shortfallSampleShare = 0.1

// samplePct prints a share of samples as a percentage, saying "under 1 %" rather than rounding a
// few samples to 0.
func samplePct(share float64) string {
	if share > 0 && share < 0.005 {
		return "under 1 %"
	}
	return fmt.Sprintf("%.0f %%", math.Round(100*share))
}

// warnings adds the dose warnings.
func (p *leachPlanner) warnings(lr *Report, acidR Reagent, redR *Reagent) {
	if p.grown > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("the reagents alone exceed the liquor volume in %d of %d samples: the volume grew to hold them, so the pulp density is lower than asked", p.grown, p.n))
	}
	redShort := 0.0 // share of samples the reductant (with the feed's metals and the oxides' oxygen) limits
	for _, l := range lr.Limiting {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s limits the leach in %s of samples: it reaches %.0f %% (P50) of the planned dissolution", l.Reagent, samplePct(l.SampleShare), 100*l.ReachedShare.P50))
		if p.red != nil && strings.HasPrefix(l.Reagent, p.red.Key) {
			redShort = l.SampleShare
		}
	}
	if acidR.RatioFull.P10 < 1 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.2f× what full dissolution needs (P10): free acid runs out and less metal dissolves", acidR.RatioFull.P10))
	}
	if p.opt.RecipeAcidMolPerL > 0 && acidR.Ratio.P50 > 4 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.1f× stoichiometric: grossly over-dosed (waste and neutralisation cost)", acidR.Ratio.P50))
	}
	if redR != nil && redR.StoichKg.P50 > 0 {
		allow := 1.0
		if p.red.Oxidant {
			allow = 1 / (1 - dist.Summarise(p.lost).P50)
		}
		if redR.RatioFull.P10 < allow {
			outcome := "Co, Ni and Mn extraction will fall short"
			if redShort < shortfallSampleShare {
				outcome = "in this plan the oxides' own oxygen makes up the rest (data/lattice_oxygen.csv); where they give less, Co, Ni and Mn extraction falls short"
			}
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s is %.2f× what full dissolution needs (P10), below the %.2f× that allows for its decomposition at %g °C: %s",
				p.red.Key, redR.RatioFull.P10, allow, p.opt.TemperatureC, outcome))
		} else if redR.Ratio.P50 > 6 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s is %.1f× stoichiometric: grossly over-dosed", p.red.Key, redR.Ratio.P50))
		}
	}
	if g, ok := lr.Gases["Cl2"]; ok && g.Mol.P50 > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("chlorine: about %s Cl2 (STP, P50) evolves from the high-valent oxides; scrub it with caustic", formatGasVolume(g.M3STP.P50)))
	}
	h2max := dist.Summarise(col(p.n, func(i int) float64 { return p.res[i].h2Potential * MolarVolumeSTPLPerMol / 1000 }))
	if h2max.P90 > 0 {
		h2 := 0.0
		if g, ok := lr.Gases["H2"]; ok {
			h2 = g.M3STP.P50
		}
		lead := fmt.Sprintf("hydrogen: about %s H2 (STP, P50) from aluminium and other metals once they have reduced the oxides", formatGasVolume(h2))
		if h2 == 0 {
			lead = "hydrogen: none once aluminium and other metals have reduced the oxides"
		}
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s; up to %s (P90) if they meet the acid first: vent as for the larger", lead, formatGasVolume(h2max.P90)))
	}
	if cu, ok := lr.Liquor.ExtractionReached["Cu"]; ok && cu.P50 < copperLeftWarnBelow && p.route == cathode.Hydrochloric {
		lr.Warnings = append(lr.Warnings, "copper: without an oxidant only the copper that reduced the oxides dissolves on the hydrochloric route; the rest stays in the residue")
	}
	lr.Warnings = append(lr.Warnings, routeNotes(p.s, p.species, p.route)...)
	if _, ok := lr.Liquor.Elements["F"]; ok {
		lr.Warnings = append(lr.Warnings, "fluoride (HF) in the liquor from LiPF6 residue")
	}
	lr.Assumptions = []string{
		"Acid and electron demand follow from each species' charge balance (cathode.Dissolve), scaled by the planned extraction of each metal.",
		"The extraction reached is the lesser of the planned extraction and what the acid and the electrons dosed can dissolve.",
		"Metals in the feed reduce the oxides first (least noble first: Al, Fe, then Cu); the reductant or chloride gives the rest; leftover Al and Fe give H2; leftover Cu needs peroxide or stays.",
		"Short of reductant on the sulfuric routes, the oxides' own oxygen gives part of the reduction, leaving as O2 (a share that grows with temperature: data/lattice_oxygen.csv).",
		"Oxidation states: Mn(IV) and Co(III) in oxides that hold nickel, nickel the rest (Ni(II) in NMC111 needs no reductant); other oxides share the average.",
		"Peroxide left after the reduction oxidises copper metal, then Fe(II) to Fe(III); the rest decomposes to O2. Part of the peroxide dosed decomposes anyway (data/peroxide_loss.csv).",
		"On the selective route the lithium of oxide cathodes stays with their undissolved metals; iron of phosphates stays as FePO4.",
		"Graphite, carbon black and PVDF are inert and stay in the residue.",
		"Free acid is what remains of the acid added after the dissolution; H3PO4 and HF are counted as undissociated.",
		"Liquor volume is black mass over pulp density (or the volume given); reagent volumes are included in it.",
		"Saturation compares each salt with its single-salt solubility in water (CRC Handbook, 0-100 °C) at the temperature between the filtered liquor's 20 °C and the leach's where it is least (hot for Li2SO4 and MnSO4, cool for NiSO4), taking 1 L of liquor as 1 kg of water; the shared sulfate and the acid lower real solubilities, so the warning starts at 60 %.",
	}
}

// formatGasVolume prints a gas volume with a unit that suits its size.
func formatGasVolume(m3 float64) string {
	switch {
	case m3 >= 1:
		return fmt.Sprintf("%.3g m³", m3)
	case m3 >= 1e-3:
		return fmt.Sprintf("%.3g L", m3*1000)
	}
	return fmt.Sprintf("%.3g mL", m3*1e6)
}

func checkLeachOptions(o *Options) error {
	if o.Reductant == "" {
		o.Reductant = "H2O2"
	}
	switch {
	case o.Route == cathode.RouteInvalid:
		return fmt.Errorf("leach: no route")
	case !(o.AcidWtPct > 0 && o.AcidWtPct <= 100):
		return fmt.Errorf("leach: acid strength %g wt%% must be in (0, 100]", o.AcidWtPct)
	case !(o.H2O2WtPct > 0 && o.H2O2WtPct <= 70):
		return fmt.Errorf("leach: peroxide strength %g wt%% must be in (0, 70]", o.H2O2WtPct)
	case !(o.TemperatureC >= 0 && o.TemperatureC <= 110):
		return fmt.Errorf("leach: temperature %g °C must lie from 0 to 110 (an open acid leach boils near 105 °C)", o.TemperatureC)
	case o.RecipeReductantGPerL < 0 || o.RecipeReductantGPerL > 500:
		return fmt.Errorf("leach: reductant recipe %g g/L must lie from 0 to 500", o.RecipeReductantGPerL)
	case o.AcidExcess < 1 && o.RecipeAcidMolPerL == 0:
		return fmt.Errorf("leach: acid excess %g must be at least 1", o.AcidExcess)
	case o.ReductantExcess < 0 || o.FreeAcidMolPerL < 0 || o.RecipeAcidMolPerL < 0 || o.RecipeH2O2VolPct < 0 || o.RecipeH2O2VolPct > 50:
		return fmt.Errorf("leach: negative dosing, or peroxide above 50 vol%%")
	case o.LiquorVolumeL < 0 || (o.LiquorVolumeL == 0 && !(o.PulpDensityGPerL > 0 && o.PulpDensityGPerL <= 1000)):
		return fmt.Errorf("leach: pulp density must be in (0, 1000] g/L, or give a liquor volume")
	case o.AcidPricePerKg < 0 || o.H2O2PricePerKg < 0:
		return fmt.Errorf("leach: negative price")
	}
	for el, v := range o.ExtractionOverride {
		if !(v >= 0 && v <= 1) {
			return fmt.Errorf("leach: extraction of %s is %v, want 0..1", el, v)
		}
	}
	return nil
}

// PlanFor computes the leach plan of a black mass given directly as compounds (formula -> kg),
// without a manifest: e.g. a pure cathode powder. The masses are taken as known; only the
// planner's own parameters are drawn.
func PlanFor(kgByFormula map[string]float64, opt Options, seed uint64, samples int) (*Report, error) {
	if samples < 1 {
		return nil, fmt.Errorf("leach: samples must be positive")
	}
	keys := slices.Sorted(maps.Keys(kgByFormula))
	in := Input{Formulas: keys, Kg: make([][]float64, len(keys)), BlackMassKg: make([]float64, samples), Draws: dist.NewDrawer(seed, samples)}
	for c, k := range keys {
		kg := kgByFormula[k]
		if !(kg >= 0) || math.IsInf(kg, 0) {
			return nil, fmt.Errorf("leach: %s: mass %v kg", k, kg)
		}
		in.Kg[c] = make([]float64, samples)
		for i := range samples {
			in.Kg[c][i] = kg
			in.BlackMassKg[i] += kg
		}
	}
	return Plan(in, opt)
}

// mixedShareNote is the share of the cathode mass below which a second cathode family is not
// worth a route note: under 5 % it changes neither the route nor the liquor (common practice).
const mixedShareNote = 0.05

// routeNotes says what the route does to a lot that mixes phosphate and oxide cathodes in
// amounts that matter: judged at the median of the Monte Carlo, so an unknown item's small
// chance of holding LFP does not raise it.
func routeNotes(s Input, species []cathode.Species, route cathode.Route) []string {
	n := len(s.BlackMassKg)
	phos, oxide := make([]float64, n), make([]float64, n)
	for c, sp := range species {
		if _, tm := sp.TransitionMetalState(); !tm || sp.Formula.Moles("Li") == 0 {
			continue
		}
		for i, kg := range s.Kg[c] {
			switch sp.Anion() {
			case "phosphate":
				phos[i] += kg
			case "oxide":
				oxide[i] += kg
			}
		}
	}
	phosphateKg, oxideKg := dist.Summarise(phos).P50, dist.Summarise(oxide).P50
	total := phosphateKg + oxideKg
	if total <= 0 {
		return nil
	}
	if phosphateKg < mixedShareNote*total {
		phosphateKg = 0
	}
	if oxideKg < mixedShareNote*total {
		oxideKg = 0
	}
	switch {
	case route == cathode.SulfuricSelective && oxideKg > 0:
		return []string{fmt.Sprintf("selective route on a mixed lot: phosphate cathodes (about %.3g kg) give their lithium and keep iron as FePO4, "+
			"but the oxide cathodes (about %.3g kg) are barely attacked at this acid level; most of their Co, Ni, Mn and Li stays in the residue for a second, reductive leach", phosphateKg, oxideKg)}
	case route != cathode.SulfuricSelective && phosphateKg > 0 && oxideKg > 0:
		return []string{fmt.Sprintf("mixed lot: the phosphate cathodes (about %.3g kg) dissolve fully on this route, putting Fe and H3PO4 into the liquor beside Co, Ni and Mn; "+
			"a selective lithium leach of the phosphates first keeps iron out", phosphateKg)}
	}
	return nil
}
