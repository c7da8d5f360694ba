package leach

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"sync"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// Input is the black mass to leach, as Monte Carlo samples: the compounds' formulas, their
// masses per sample (kg) and the black mass per sample (kg). Draws gives the planner's own
// parameters (extraction, peroxide loss) from the run's seeded streams. Tables are required;
// Prices price the reagents (the zero value: no cost).
type Input struct {
	Formulas    []string
	Kg          [][]float64 // [compound][sample]
	BlackMassKg []float64   // [sample]
	Draws       *dist.Drawer
	Tables      *Tables
	Prices      Prices
}

// Plan computes the leach plan for every sample of the black mass, in three steps:
// the demand (what the planned extraction and full dissolution need), the dose (the planner's
// or the bench recipe's), and what that dose actually dissolves (leachSample: limiting acid and
// electrons), then the liquor, saturation and warnings. An option or price out of range is an
// *OptionError.
func Plan(s Input, opt Options) (*Report, error) {
	if s.Tables == nil {
		return nil, fmt.Errorf("leach: no tables given (load them with LoadTables)")
	}
	if err := opt.Validate(); err != nil {
		return nil, err
	}
	if err := s.Prices.Validate(); err != nil {
		return nil, err
	}
	p, err := newLeachPlanner(s, opt, s.Tables)
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
	waterG  float64 // molar mass of water, g/mol
	metals  []metalSpecies
	// molBuf, planBuf and metalE0 are input's buffers (see there).
	molBuf []float64
	// donorBuf is the passes' room for donors, reused sample after sample.
	donorBuf []donor
	planBuf  [nLeachElements]float64
	metalE0  func(sym string) float64
	// feedPerMol is each species' moles of each of leachElements per mol.
	feedPerMol [][nLeachElements]float64
	lin        []*linearRx // per species: its dissolution's linear form (nil: call cathode.Dissolve)
	molarG     []float64
	ext        map[string][]float64
	// extMax is the top of each element's extraction range on the route: on the selective
	// route, full dissolution is the most it dissolves (the oxides stay barely attacked).
	extMax  map[string]float64
	ranges  []dist.Param
	lost    []float64 // share of the peroxide dose that decomposes, per sample
	lattice []float64 // share of the planned reduction the oxides' own oxygen can give, per sample
	acidM   float64
	acidRho float64
	redRho  float64 // density of the reductant solution (peroxide), g/mL
	n       int
	// per sample
	vol, acidDose, redDose, acidPlan, redPlan, acidFull, redFull, water, waterKg []float64
	res                                                                          []sampleResult
	grown                                                                        int
}

func newLeachPlanner(s Input, opt Options, lt *Tables) (*leachPlanner, error) {
	if len(s.Formulas) != len(s.Kg) || s.Draws == nil {
		return nil, fmt.Errorf("leach: %d formulas for %d mass columns, or no parameter draws", len(s.Formulas), len(s.Kg))
	}
	p := &leachPlanner{s: s, opt: opt, lt: lt, route: opt.Route, n: len(s.BlackMassKg), ext: map[string][]float64{},
		extMax: map[string]float64{}}
	p.acidM = lt.molarMassG(p.route.Acid())
	p.waterG = lt.molarMassG("H2O")
	var err error
	if p.acidRho, err = lt.Density(p.route.Acid(), opt.AcidWtPct); err != nil {
		return nil, err
	}
	if p.route != cathode.Hydrochloric && opt.Reductant != "none" {
		if p.red, err = FindReductant(lt.reductants, opt.Reductant); err != nil {
			return nil, &OptionError{Option: "reductant", Msg: err.Error()}
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
		p.extMax[el] = rg.Max
		p.ranges = append(p.ranges, dist.Param{Scope: "extraction " + p.route.String(), Name: el,
			Min: rg.Min, Mode: rg.Mode, Max: rg.Max, Unit: "fraction", Source: lt.sources[p.route.String()+"/"+el]})
	}
	loss := lt.peroxideLoss(opt.TemperatureC)
	p.lost = s.Draws.Draws(fmt.Sprintf("peroxide loss/%g C", loss.fromC), loss.r.Min, loss.r.Mode, loss.r.Max)
	if p.red != nil && p.red.Oxidant {
		p.ranges = append(p.ranges, dist.Param{Scope: "peroxide",
			Name: fmt.Sprintf("decomposed share at %g °C", opt.TemperatureC),
			Min:  loss.r.Min, Mode: loss.r.Mode, Max: loss.r.Max, Unit: "fraction", Source: loss.source})
	}
	lat := lt.latticeOxygen(opt.TemperatureC)
	p.lattice = s.Draws.Draws(fmt.Sprintf("lattice oxygen/%g C", lat.fromC), lat.r.Min, lat.r.Mode, lat.r.Max)
	if p.route != cathode.Hydrochloric {
		// The share of the oxides' reduction their own oxygen gives (as O2) when short of reductant.
		p.ranges = append(p.ranges, dist.Param{Scope: "oxide oxygen",
			Name: fmt.Sprintf("reduction share at %g °C", opt.TemperatureC),
			Min:  lat.r.Min, Mode: lat.r.Mode, Max: lat.r.Max, Unit: "fraction", Source: lat.source})
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
	p.feedPerMol = make([][nLeachElements]float64, len(p.species))
	for c, sp := range p.species {
		if sp.Inert() {
			continue // as in the passes: an inert species counts in no element's feed
		}
		for _, t := range sp.Formula.Terms() {
			if k := elementIndex(t.Symbol); k >= 0 {
				p.feedPerMol[c][k] += t.Amount
			}
		}
	}
	p.metals = make([]metalSpecies, len(p.species))
	for c, sp := range p.species {
		p.metals[c].k = -1
		if sp.Metallic() {
			t := sp.Formula.Terms()[0]
			p.metals[c] = metalSpecies{sym: t.Symbol, k: elementIndex(t.Symbol), amount: t.Amount, z: cathode.AqueousCharge(t.Symbol)}
			sym := t.Symbol
			if el := lt.elements.Lookup(sym); el != nil && el.HasPotential {
				p.metals[c].e0 = el.StandardPotential
			}
		}
	}
	p.lin = make([]*linearRx, len(p.species))
	for c, sp := range p.species {
		if !sp.Inert() && !sp.Metallic() {
			p.lin[c] = newLinearRx(sp, p.route)
		}
	}
	for _, x := range []*[]float64{&p.vol, &p.acidDose, &p.redDose, &p.acidPlan, &p.redPlan, &p.acidFull, &p.redFull,
		&p.water, &p.waterKg} {
		*x = make([]float64, p.n)
	}
	p.res = make([]sampleResult, p.n)
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

// input is sample i's leach input with the plan and dose given. Its moles and planned
// extractions are the planner's buffers, rewritten by the next call: a leachSample uses them
// before the next input is made.
func (p *leachPlanner) input(i int, plan func(string) float64, hPlus, redMol float64) redoxInput {
	if len(p.molBuf) != len(p.s.Kg) {
		p.molBuf = make([]float64, len(p.s.Kg))
		p.donorBuf = make([]donor, 0, len(p.species))
		es := p.lt.elements
		p.metalE0 = func(sym string) float64 {
			if el := es.Lookup(sym); el != nil && el.HasPotential {
				return el.StandardPotential
			}
			return 0
		}
	}
	for c, kg := range p.s.Kg {
		p.molBuf[c] = kg[i] * 1000 / p.molarG[c]
	}
	for k, sym := range leachElements {
		p.planBuf[k] = plan(sym)
	}
	return redoxInput{route: p.route, species: p.species, lin: p.lin, metals: p.metals, mol: p.molBuf, plan: plan, planAt: &p.planBuf,
		hPlus: hPlus, red: p.red, redMol: redMol, lost: p.lost[i], lattice: p.lattice[i], metalE0: p.metalE0,
		donors: p.donorBuf}
}

// feedMol is sample i's moles of element k (of leachElements) in the feed.
func (p *leachPlanner) feedMol(i, k int) float64 {
	f := 0.0
	for c, kg := range p.s.Kg {
		if a := p.feedPerMol[c][k]; a != 0 {
			f += kg[i] * 1000 / p.molarG[c] * a
		}
	}
	return f
}

// run doses and dissolves every sample. The samples are shared out in contiguous ranges, each
// planned on a copy of the planner with its own buffers (a sample writes only its own entries),
// so the plan is the same whatever the number of processors; the error reported is that of the
// first failing sample.
func (p *leachPlanner) run() error {
	var mu sync.Mutex
	firstLo, grown := p.n, 0
	var first error
	dist.Split(p.n, func(lo, hi int) {
		q := *p
		q.molBuf, q.donorBuf, q.grown = nil, nil, 0
		err := q.runRange(lo, hi)
		mu.Lock()
		defer mu.Unlock()
		grown += q.grown
		if err != nil && lo < firstLo {
			firstLo, first = lo, err
		}
	})
	if first != nil {
		return first
	}
	p.grown = grown
	p.ext, p.lattice = nil, nil // the per-sample extraction and lattice-oxygen draws are spent
	return nil
}

// runRange doses and dissolves samples lo to hi.
func (p *leachPlanner) runRange(lo, hi int) error {
	protons := p.route.AcidProtons()
	inf := math.Inf(1)
	for i := lo; i < hi; i++ {
		plan := p.plan(i)
		// Full dissolution: complete, but on the selective route, which leaves the oxides, the
		// most it dissolves (the top of its extraction ranges); never less than planned.
		full := func(sym string) float64 {
			v := 1.0
			if m, ok := p.extMax[sym]; ok && p.route == cathode.SulfuricSelective {
				v = m
			}
			return max(v, plan(sym))
		}
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
				return fmt.Errorf("leach: the acid and reductant alone take %.4g L, more than the %.4g L of liquor "+
					"the pulp density or volume gives: "+
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
		p.res[i] = got.kept()
		p.waterKg[i] = p.liquorWaterKg(i)
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

// PlanFor computes the leach plan of a black mass given directly as compounds (formula -> kg),
// without a manifest: e.g. a pure cathode powder. The masses are taken as known; only the
// planner's own parameters are drawn, and no reagent is priced.
func PlanFor(lt *Tables, kgByFormula map[string]float64, opt Options, seed uint64, samples int) (*Report, error) {
	if samples < 1 {
		return nil, fmt.Errorf("leach: samples must be positive")
	}
	keys := slices.Sorted(maps.Keys(kgByFormula))
	in := Input{Formulas: keys, Kg: make([][]float64, len(keys)), BlackMassKg: make([]float64, samples),
		Draws: dist.NewDrawer(seed, samples), Tables: lt}
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

// reagents sets the acid's and the reductant's doses and, with prices, their cost; it returns
// the acid and the reductant (nil without one).
func (p *leachPlanner) reagents(lr *Report) (Reagent, *Reagent) {
	opt, pr := p.opt, p.s.Prices
	acidR := p.reagent(p.route.Acid(), opt.AcidWtPct, p.acidRho, p.acidM, p.acidDose, p.acidPlan, p.acidFull, pr.AcidPerKg)
	lr.Reagents = append(lr.Reagents, acidR)
	var redR *Reagent
	if p.red != nil {
		strength, rho := 100.0, 0.0
		if p.red.Form == "solution" {
			strength, rho = opt.H2O2WtPct, p.redRho
		}
		r := p.reagent(p.red.Key, strength, rho, p.red.MolarMassGMol, p.redDose, p.redPlan, p.redFull, pr.ReductantPerKg)
		lr.Reagents = append(lr.Reagents, r)
		redR = &lr.Reagents[len(lr.Reagents)-1]
	}
	lr.WaterL = dist.Summarise(p.water)
	if pr.Priced() {
		lr.Prices = &pr
		lr.CostPerSample = col(p.n, func(i int) float64 {
			c := p.acidDose[i] * p.acidM / 1000 / (opt.AcidWtPct / 100) * pr.AcidPerKg
			if p.red != nil {
				c += p.redDose[i] * p.red.MolarMassGMol / 1000 / (redStrength(p.red, opt) / 100) * pr.ReductantPerKg
			}
			return c
		})
		st := dist.Summarise(lr.CostPerSample)
		lr.TotalCost = &st
	}
	return acidR, redR
}

func redStrength(r *Reductant, opt Options) float64 {
	if r.Form == "solution" {
		return opt.H2O2WtPct
	}
	return 100
}

// reagent summarises a reagent's dose against the planned extraction's and full dissolution's
// needs.
func (p *leachPlanner) reagent(name string, wt, rho, molMass float64, dose, plan, full []float64,
	price float64) Reagent {
	n := p.n
	pure, comm, litres, sk := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	ratio, ratioFull := make([]float64, n), make([]float64, n)
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
	rg := Reagent{Name: fmt.Sprintf("%s %g %%", name, wt), StrengthWt: wt, DensityGmL: dist.Round(rho, 4),
		MolarMass: dist.Round(molMass, 4), KgPure: dist.Summarise(pure), Kg: dist.Summarise(comm),
		Litres: dist.Summarise(litres), StoichKg: dist.Summarise(sk), Ratio: dist.Summarise(ratio),
		RatioFull: dist.Summarise(ratioFull)}
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
	// dissolution of the lot needs (on the selective route, which leaves the oxides, every metal
	// at the top of its extraction range).
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

// Report is the leach plan of a lot.
type Report struct {
	Route        string         `json:"route"`
	Settings     Options        `json:"settings"`
	Reagents     []Reagent      `json:"reagents"`
	WaterL       dist.Stat      `json:"make_up_water_l"`
	Gases        map[string]Gas `json:"gases"`
	GasReference string         `json:"gas_reference"`
	Liquor       Liquor         `json:"liquor"`
	// LiquorSamples is the liquor of every sample, for the stages after the leach.
	LiquorSamples   *LiquorSamples       `json:"-"`
	FreeAcidMolPerL dist.Stat            `json:"free_acid_mol_per_l"`
	Saturation      map[string]dist.Stat `json:"saturation"`
	// SaturationAtC is, per salt, the temperature between the filtered liquor's and the leach's
	// at which it is least soluble: the temperature its saturation ratio is taken at.
	SaturationAtC map[string]float64 `json:"saturation_at_C"`
	// Prices are the reagent prices the costs were taken at; nil without prices.
	Prices    *Prices    `json:"prices,omitempty"`
	TotalCost *dist.Stat `json:"total_cost,omitempty"`
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
