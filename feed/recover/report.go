package recover

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// Report is the recovery plan: each stage's flows, the products, where each element goes, the
// balance's residual, the water balance, and the cautions.
type Report struct {
	Flowsheet []string      `json:"flowsheet"`
	Stages    []StageReport `json:"stages"`
	Products  []Solid       `json:"products"`
	// Reagents are every stage's reagents added up, as bought: what to order.
	Reagents []Reagent2 `json:"reagents_total"`
	// Fates is each element's destination, liquor and reagents in = products + cakes + gases +
	// solutions left (effluent, the cobalt circuit's spent liquor).
	Fates []Fate `json:"fates"`
	// BalanceResidual is each element's largest relative residual over the samples.
	BalanceResidual map[string]float64 `json:"balance_max_relative_residual"`
	ChargeResidual  float64            `json:"charge_max_relative_residual"`
	// Water is the water balance: the liquor's water, each cause's gain (+) or loss (-), and the
	// solutions left; WaterResidual its largest relative residual over the samples.
	Water         []Flow        `json:"water_balance_kg"`
	WaterResidual float64       `json:"water_balance_max_relative_residual"`
	Value         *ProductValue `json:"value,omitempty"`
	Cost          *ReagentCost  `json:"reagent_cost,omitempty"`
	GasReference  string        `json:"gas_reference"`
	Parameters    []dist.Param  `json:"parameters"`
	Warnings      []string      `json:"warnings,omitempty"`
	Cautions      []string      `json:"cautions"`
}

// StageReport is one stage's reagents, solids, gases, electricity and figures.
type StageReport struct {
	Kind        string     `json:"kind"`
	Setting     string     `json:"setting"`
	Reagents    []Reagent2 `json:"reagents"`
	Solids      []Solid    `json:"solids"`
	Gases       []Gas      `json:"gases,omitempty"`
	KWh         *dist.Stat `json:"electricity_kwh,omitempty"`
	Hours       *dist.Stat `json:"hours,omitempty"`
	Figures     []Figure   `json:"figures,omitempty"`
	Warnings    []string   `json:"warnings,omitempty"`
	Cautions    []string   `json:"cautions"`
	Description string     `json:"description"`
}

// Reagent2 is a reagent's amount: pure, and as bought.
type Reagent2 struct {
	Name       string     `json:"name"`
	Kg         dist.Stat  `json:"kg"`
	WtPct      float64    `json:"commercial_wt_pct"`
	Commercial dist.Stat  `json:"commercial_kg"`
	Litres     *dist.Stat `json:"commercial_litres,omitempty"`
	// OrderAs is its line on the order sheet; empty when it is not bought (air, ozone made on site).
	OrderAs string `json:"order_as,omitempty"`
}

// Solid is a product or cake: dry and wet mass, and its composition.
type Solid struct {
	Stage  string     `json:"stage"`
	Name   string     `json:"name"`
	Kind   string     `json:"kind"`
	DryKg  dist.Stat  `json:"dry_kg"`
	WetKg  *dist.Stat `json:"wet_kg,omitempty"`
	Phases []Part     `json:"phases"`
	// Elements are the main elements by mass share (wt% of the dry solid), largest first.
	Elements []Part `json:"elements"`
}

// Part is a share of a solid.
type Part struct {
	Name  string    `json:"name"`
	Kg    dist.Stat `json:"kg"`
	WtPct dist.Stat `json:"wt_pct"`
}

// Gas is a gas given off.
type Gas struct {
	Formula string    `json:"formula"`
	Kg      dist.Stat `json:"kg"`
	Litres  dist.Stat `json:"litres_ntp"`
}

// Figure is a stage's own number.
type Figure struct {
	Name  string    `json:"name"`
	Value dist.Stat `json:"value"`
}

// Flow is a named amount.
type Flow struct {
	Name string    `json:"name"`
	Kg   dist.Stat `json:"kg"`
}

// Fate is where an element goes: kg and share of what came in, per destination.
type Fate struct {
	Element string `json:"element"`
	// LiquorKg came with the liquor; InKg adds the reagents'.
	LiquorKg dist.Stat `json:"liquor_kg"`
	InKg     dist.Stat `json:"in_kg"`
	To       []Part    `json:"to"` // WtPct here is the share (%) of what came in
}

// ProductValue is the products at the prices given.
type ProductValue struct {
	Currency string        `json:"currency"`
	Items    []PricedSolid `json:"items"`
	Total    dist.Stat     `json:"total"`
	// Unpriced are the products without a price: valued at nothing, not at a guess.
	Unpriced []string `json:"unpriced,omitempty"`
}

// PricedSolid is one product (or cake) at its price: dry kg × price per kg, sample by sample.
type PricedSolid struct {
	Name string `json:"name"`
	// Item is the price list's item it is priced as (the product, or the metal for a cathode).
	Item       string    `json:"priced_as"`
	PricePerKg float64   `json:"price_per_kg"`
	Source     string    `json:"price_source,omitempty"`
	DryKg      dist.Stat `json:"dry_kg"`
	Value      dist.Stat `json:"value"`
}

// negligibleMol is an amount too small to report (a gas of 1e-9 mol is 22 µL).
const negligibleMol = 1e-9

// molarVolumeL is the ideal gas volume at 0 °C and 101.325 kPa, 22.413 97 L/mol (CODATA 2018).
const molarVolumeL = 22.41397

func (p *planner) report(in Input, tallies []*tally, res *results) *Report {
	r := &Report{BalanceResidual: map[string]float64{}, ChargeResidual: dist.Round(res.charge, 12),
		GasReference: "ideal gas at 0 °C and 101.325 kPa (22.414 L/mol)"}
	for el, v := range res.residual {
		r.BalanceResidual[el] = dist.Round(v, 12)
	}
	dest := map[string]map[string][]float64{} // element -> destination -> mol
	addDest := func(el, to string, v []float64) {
		if dest[el] == nil {
			dest[el] = map[string][]float64{}
		}
		d := col(dest[el], to, p.n)
		for i := range v {
			d[i] += v[i]
		}
	}
	water := map[string][]float64{}
	var waterOrder []string
	for k, st := range in.Flowsheet.Steps {
		tl := tallies[k]
		sr := p.stageReport(st, tl)
		for _, name := range tl.solidOrder {
			sol := tl.solids[name]
			for _, ph := range sol.phases {
				comp := p.t.composition(ph)
				for el, nEl := range comp {
					if balanced(el) {
						addDest(el, name, scale(sol.phaseMol[ph], nEl))
					}
				}
			}
		}
		for g, mol := range tl.gasMol {
			for el, nEl := range p.t.composition(g) {
				if balanced(el) {
					addDest(el, g+" (gas)", scale(mol, nEl))
				}
			}
		}
		for _, cause := range sortedKeys(tl.waterKg) {
			if _, ok := water[cause]; !ok {
				waterOrder = append(waterOrder, cause)
			}
			w := col(water, cause, p.n)
			for i, v := range tl.waterKg[cause] {
				w[i] += v
			}
		}
		r.Stages = append(r.Stages, sr)
		for _, s := range sr.Solids {
			if s.Kind == "product" {
				r.Products = append(r.Products, s)
			}
		}
	}
	for el, v := range res.effluent {
		addDest(el, "effluent", v)
	}
	for el, v := range res.strip {
		addDest(el, "cobalt circuit liquor", v)
	}
	r.Fates = p.fates(res, dest)
	r.Reagents = p.reagentTotals(tallies)
	r.Water = []Flow{{Name: "in: liquor", Kg: dist.Summarise(res.water0)}}
	for _, cause := range waterOrder {
		r.Water = append(r.Water, Flow{Name: cause, Kg: dist.Summarise(water[cause])})
	}
	r.Water = append(r.Water, Flow{Name: "out: effluent", Kg: dist.Summarise(res.waterEnd)})
	if slices.Max(res.waterStrip) > 0 {
		r.Water = append(r.Water, Flow{Name: "out: cobalt circuit liquor", Kg: dist.Summarise(res.waterStrip)})
	}
	r.WaterResidual = waterResidual(res, water)
	for _, st := range in.Flowsheet.Steps {
		r.Flowsheet = append(r.Flowsheet, st.String())
	}
	var valueDraws []float64
	r.Value, valueDraws = p.value(in.Prices, tallies)
	r.Cost = p.cost(in.ReagentPrices, tallies, valueDraws)
	sort.SliceStable(p.params, func(i, j int) bool { return p.params[i].Scope < p.params[j].Scope })
	r.Parameters = p.params
	for _, sr := range r.Stages {
		for _, w := range sr.Warnings {
			r.Warnings = append(r.Warnings, sr.Kind+": "+w)
		}
	}
	r.Cautions = []string{"Recovery figures are planning estimates from balanced reactions and published ranges: " +
		"confirm each stage at bench scale, and follow local codes, the suppliers' safety data sheets and licensed practice."}
	return r
}

// waterResidual is the water balance's largest relative residual: liquor + causes = solutions left.
func waterResidual(res *results, water map[string][]float64) float64 {
	worst := 0.0
	for i := range res.n {
		in := res.water0[i]
		for _, w := range water {
			in += w[i]
		}
		out := res.waterEnd[i] + res.waterStrip[i]
		worst = math.Max(worst, math.Abs(in-out)/res.water0[i])
	}
	return dist.Round(worst, 12)
}

// reagentTotals adds each reagent up over the stages, sample by sample.
func (p *planner) reagentTotals(tallies []*tally) []Reagent2 {
	mol := map[string][]float64{}
	for _, tl := range tallies {
		for name, v := range tl.reagentMol {
			m := col(mol, name, p.n)
			for i := range v {
				m[i] += v[i]
			}
		}
	}
	return p.reagentRows(mol)
}

// reagentRows summarises reagents given in mol per sample: pure kg, as bought, litres.
func (p *planner) reagentRows(mol map[string][]float64) []Reagent2 {
	var out []Reagent2
	for _, name := range sortedKeys(mol) {
		rg := p.t.reagents[name]
		kg := scale(mol[name], p.t.molarMass(rg.Formula)/1000)
		com := scale(kg, 100/rg.WtPct)
		r2 := Reagent2{Name: name, Kg: dist.Summarise(kg), WtPct: rg.WtPct, Commercial: dist.Summarise(com), OrderAs: rg.OrderAs}
		if rg.DensityGPerML > 0 {
			l := dist.Summarise(scale(com, 1/rg.DensityGPerML))
			r2.Litres = &l
		}
		out = append(out, r2)
	}
	return out
}

func scale(v []float64, f float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x * f
	}
	return out
}

func sortedKeys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	slices.Sort(out)
	return out
}

// fates summarises each element's destinations, with its share of what came in.
func (p *planner) fates(res *results, dest map[string]map[string][]float64) []Fate {
	els := sortedKeys(res.total)
	els = cathode.SortForDisplay(els)
	var out []Fate
	for _, el := range els {
		w := p.t.elements.Weight(el) / 1000
		in := scale(res.total[el], w)
		f := Fate{Element: el, LiquorKg: dist.Summarise(scale(res.in[el], w)), InKg: dist.Summarise(in)}
		for _, to := range sortedKeys(dest[el]) {
			kg := scale(dest[el][to], w)
			if slices.Max(kg) <= 0 {
				continue
			}
			share := make([]float64, p.n)
			for i := range kg {
				if in[i] > 0 {
					share[i] = 100 * kg[i] / in[i]
				}
			}
			f.To = append(f.To, Part{Name: to, Kg: dist.Summarise(kg), WtPct: dist.Summarise(share)})
		}
		sort.SliceStable(f.To, func(i, j int) bool { return f.To[i].Kg.Mean > f.To[j].Kg.Mean })
		out = append(out, f)
	}
	return out
}

// stageReport summarises one stage.
func (p *planner) stageReport(st Step, tl *tally) StageReport {
	sr := StageReport{Kind: st.Kind, Setting: st.String(), Description: stageDescription(st),
		Cautions: stageCautions(st, p.anion)}
	sr.Reagents = p.reagentRows(tl.reagentMol)
	for _, name := range tl.solidOrder {
		if s, ok := p.solid(st.Kind, tl.solids[name]); ok {
			sr.Solids = append(sr.Solids, s)
		}
	}
	for _, g := range sortedKeys(tl.gasMol) {
		mol := tl.gasMol[g]
		if slices.Max(mol) < negligibleMol {
			continue
		}
		sr.Gases = append(sr.Gases, Gas{Formula: g, Kg: dist.Summarise(scale(mol, p.t.molarMass(g)/1000)),
			Litres: dist.Summarise(scale(mol, molarVolumeL))})
	}
	if slices.Max(tl.kWh) > 0 {
		k, h := dist.Summarise(tl.kWh), dist.Summarise(tl.hours)
		sr.KWh, sr.Hours = &k, &h
	}
	for _, f := range tl.figOrder {
		sr.Figures = append(sr.Figures, Figure{Name: f, Value: dist.Summarise(tl.figures[f])})
	}
	for _, wn := range sortedKeys(tl.warnings) {
		share := 100 * float64(tl.warnings[wn]) / float64(p.n)
		sr.Warnings = append(sr.Warnings, fmt.Sprintf("%s (%.0f %% of samples)", wn, share))
	}
	return sr
}

// solid summarises a product or cake; false when nothing formed in any sample.
func (p *planner) solid(stage string, st *solidTally) (Solid, bool) {
	dry := make([]float64, p.n)
	phaseKg := map[string][]float64{}
	elKg := map[string][]float64{}
	for _, ph := range st.phases {
		kg := scale(st.phaseMol[ph], p.t.molarMass(ph)/1000)
		phaseKg[ph] = kg
		for i, v := range kg {
			dry[i] += v
		}
		for el, nEl := range p.t.composition(ph) {
			e := col(elKg, el, p.n)
			for i, m := range st.phaseMol[ph] {
				e[i] += m * nEl * p.t.elements.Weight(el) / 1000
			}
		}
	}
	if slices.Max(dry) <= 0 {
		return Solid{}, false
	}
	s := Solid{Stage: stage, Name: st.name, Kind: st.kind, DryKg: dist.Summarise(dry)}
	if slices.Max(st.wetRatio) > 0 {
		w := make([]float64, p.n)
		for i := range w {
			w[i] = dry[i] * st.wetRatio[i]
		}
		ws := dist.Summarise(w)
		s.WetKg = &ws
	}
	share := func(kg []float64) dist.Stat {
		out := make([]float64, p.n)
		for i := range kg {
			if dry[i] > 0 {
				out[i] = 100 * kg[i] / dry[i]
			}
		}
		return dist.Summarise(out)
	}
	for _, ph := range st.phases {
		s.Phases = append(s.Phases, Part{Name: ph, Kg: dist.Summarise(phaseKg[ph]), WtPct: share(phaseKg[ph])})
	}
	for _, el := range sortedKeys(elKg) {
		if el == "H" || el == "O" || slices.Max(elKg[el]) <= 0 {
			continue
		}
		s.Elements = append(s.Elements, Part{Name: el, Kg: dist.Summarise(elKg[el]), WtPct: share(elKg[el])})
	}
	sort.SliceStable(s.Elements, func(i, j int) bool { return s.Elements[i].Kg.Mean > s.Elements[j].Kg.Mean })
	return s, true
}

// value prices the products: a product by its name (Co cathode, Li2CO3), else as its metal
// (Co, Ni, Cu for cathode and cement); a cake only when its main phase is priced (MnO2).
func (p *planner) value(pr *ProductPrices, tallies []*tally) (*ProductValue, []float64) {
	if pr == nil {
		return nil, nil
	}
	v := &ProductValue{Currency: pr.Currency}
	total := make([]float64, p.n)
	for _, tl := range tallies {
		for _, name := range tl.solidOrder {
			sol := tl.solids[name]
			key, price, ok := priceOf(pr, name)
			if !ok {
				if sol.kind == "product" {
					v.Unpriced = append(v.Unpriced, name)
				}
				continue
			}
			kg := make([]float64, p.n)
			for _, ph := range sol.phases {
				for i, m := range sol.phaseMol[ph] {
					kg[i] += m * p.t.molarMass(ph) / 1000
				}
			}
			money := scale(kg, price)
			for i := range total {
				total[i] += money[i]
			}
			v.Items = append(v.Items, PricedSolid{Name: name, Item: key, PricePerKg: price, Source: pr.Source[key],
				DryKg: dist.Summarise(kg), Value: dist.Summarise(money)})
		}
	}
	v.Total = dist.Summarise(total)
	return v, total
}

// priceOf finds a solid's price: by its own name, then by the name without " cathode",
// " cement" or " cake" (the metal, or the cake's phase).
func priceOf(pr *ProductPrices, name string) (string, float64, bool) {
	if v, ok := pr.PerKg[name]; ok {
		return name, v, true
	}
	for _, suffix := range []string{" cathode", " cement", " cake"} {
		if k, ok := strings.CutSuffix(name, suffix); ok {
			if v, ok := pr.PerKg[k]; ok {
				return k, v, true
			}
		}
	}
	return "", 0, false
}

// stageDescription says what a stage does, in a line.
func stageDescription(st Step) string {
	switch st.Kind {
	case KindImpurity:
		cu := ""
		if st.Copper == "cement" {
			cu = "Cu cemented on iron powder; "
		}
		return fmt.Sprintf("%sFe(II) oxidised with %s; %s to pH %g at %g °C: Fe(III), Al (and Cu) out as phosphates and "+
			"hydroxides (solubility from minteq.v4 log K, van 't Hoff)", cu, st.FeOxidant, st.Base, st.PH, st.TemperatureC)
	case KindManganese:
		return fmt.Sprintf("Mn(II) to MnO2 with %s, the acid made neutralised with %s to pH %g", st.Oxidant, st.Base, st.PH)
	case KindSX:
		if st.Table != nil {
			return fmt.Sprintf("Co extracted at pH %g, O/A %g, counter-current (Kremser), D from the table %s (the base "+
				"and strip acid are those of a cation-exchange extractant, 2 H+ per M2+); Ni, Li, Na scrubbed back; strip with acid",
				st.PH, st.OA, st.Table.File)
		}
		return fmt.Sprintf("Co extracted into a saponified phosphinic acid at pH %g, O/A %g, counter-current (Kremser); "+
			"Ni, Li, Na scrubbed back; strip with acid", st.PH, st.OA)
	case KindCobalt, KindNickel:
		m := "Co from the strip liquor"
		if st.Kind == KindNickel {
			m = "Ni from the raffinate"
		}
		return m + " as " + map[string]string{"electrowin": "electrowon metal (Faraday's law)", "hydroxide": "hydroxide",
			"carbonate": "carbonate", "sulfate": "sulfate crystals", "oxalate": "oxalate dihydrate with oxalic acid"}[st.Product]
	case KindLithium:
		if st.Product == "phosphate" {
			return fmt.Sprintf("Li as Li3PO4 with Na3PO4 at %g °C", st.TemperatureC)
		}
		return fmt.Sprintf("Li as Li2CO3 with Na2CO3 at %g °C, the mother liquor saturated in Li2CO3", st.TemperatureC)
	case KindEffluent:
		return fmt.Sprintf("the sodium salt left, and whether it crystallises at %g °C", st.TemperatureC)
	}
	return ""
}

// stageCautions are the usual cautions of a stage on a liquor of the anion given (SO4 or Cl).
func stageCautions(st Step, anion string) []string {
	var c []string
	switch st.Kind {
	case KindImpurity:
		c = append(c, "Neutralising acid liquor is exothermic; add base slowly with stirring and eye and skin protection.")
		if st.Copper == "cement" {
			c = append(c, "Iron powder in acid gives hydrogen: no ignition sources, ventilation; the powder itself is combustible.")
		}
		if st.FeOxidant == "H2O2" {
			c = append(c, "Hydrogen peroxide is an oxidiser: keep it from organics and metals that decompose it; vent the O2.")
		}
		if bases[st.Base].co2 > 0 {
			c = append(c, "Carbonate bases release CO2: foaming and an asphyxiant gas; ventilate.")
		}
	case KindManganese:
		switch st.Oxidant {
		case "KMnO4":
			c = append(c, "Potassium permanganate is a strong oxidiser: keep it from organics, acids in bulk and reductants.")
		case "NaClO":
			c = append(c, "Hypochlorite in acid gives chlorine gas (Cl2): dose it below the surface at controlled pH, with "+
				"chlorine detection and extraction.")
		case "O3":
			c = append(c, "Ozone is toxic at low concentration: closed reactor, ozone destruction on the off-gas, detectors.")
		case "SO2":
			c = append(c, "Sulfur dioxide is toxic and corrosive: closed dosing, scrubbed off-gas, detectors.")
		case "Na2S2O8":
			c = append(c, "Persulfate is an oxidiser and a respiratory sensitiser; keep it dry and from reductants.")
		}
		c = append(c, "MnO2 cake holds cobalt: handle it as a cobalt compound.")
	case KindSX:
		c = append(c, "Solvent extraction diluents are flammable: no ignition sources, earthing, ventilation, fire protection.",
			"Organophosphorus extractants are skin and eye irritants; saponification with caustic is exothermic.")
	case KindCobalt, KindNickel:
		if st.Product == "electrowin" && anion == "Cl" {
			c = append(c, "Electrowinning from a chloride electrolyte gives chlorine (Cl2, toxic) at the anode and some "+
				"hydrogen at the cathode: hooded anodes, the off-gas to a caustic scrubber, chlorine detection, "+
				"no ignition sources; live busbars.")
		} else if st.Product == "electrowin" {
			c = append(c, "Electrowinning gives acid mist and O2 at the anode and some hydrogen at the cathode: extraction, "+
				"mist suppression, no ignition sources; live busbars.")
		}
		c = append(c, "Cobalt and nickel compounds are toxic, sensitisers and carcinogens: dust control, respiratory protection.")
	case KindLithium:
		c = append(c, "Hot carbonation liquor near boiling: scald risk; lithium compounds are harmful if swallowed.")
	case KindEffluent:
		salt := "sodium sulfate"
		if anion == "Cl" {
			salt = "sodium chloride"
		}
		c = append(c, "The effluent holds "+salt+" and traces of metals: discharge only as the local permit allows.")
	}
	return append(c, "Follow local codes, the suppliers' safety data sheets and licensed practice.")
}
