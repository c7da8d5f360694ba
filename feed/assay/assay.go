package assay

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// Value is one assayed element in wt% of the black mass (dry basis as the lab reports it).
type Value struct {
	Element      string  `json:"element"`
	WtPct        float64 `json:"wt_pct"`
	SigmaWtPct   float64 `json:"sigma_wt_pct"` // standard uncertainty
	SigmaAssumed bool    `json:"sigma_assumed"`
	Line         int     `json:"line"`
	// Censored marks a value below the lab's detection limit (LimitWtPct): WtPct and SigmaWtPct
	// are then the mean and standard deviation of a uniform distribution from 0 to the limit
	// (see Censor), and reports show "< limit".
	Censored   bool    `json:"below_detection_limit,omitempty"`
	LimitWtPct float64 `json:"detection_limit_wt_pct,omitempty"`
	// Basis is what the value rests on: assay (the lab's), or estimate (taken from a lot's
	// estimate by Complete).
	Basis string `json:"basis,omitempty"`
}

// Assay is a lab assay of a black-mass sample.
type Assay struct {
	File   string  `json:"file"`
	Values []Value `json:"values"`
	// Moisture is the water of the sample as received, in wt% of the wet sample (nil: the
	// assay gives none). The elements are of the dry sample, as labs report them.
	Moisture *Value `json:"moisture,omitempty"`
}

// DefaultSigmaRel is the relative standard uncertainty assumed where the lab gives none
// (5 %, common practice for ICP-OES/XRF of black mass at the percent level).
const DefaultSigmaRel = 0.05

// WtPct returns an element's assayed wt% and whether it was assayed.
func (a *Assay) WtPct(el string) (float64, bool) {
	for _, v := range a.Values {
		if v.Element == el {
			return v.WtPct, true
		}
	}
	return 0, false
}

// TMForm is how the assay's Co, Ni and Mn are present in the black mass.
type TMForm int

const (
	// TMLayered: layered oxides Li_yMO2 with the assay's lithium (untreated black mass).
	TMLayered TMForm = iota
	// TMMonoxide: divalent oxides CoO, NiO, MnO (after reduction roasting).
	TMMonoxide
	// TMMetal: metals (after strong reduction roasting).
	TMMetal
)

// ParseTMForm accepts layered, oxide (monoxide) or metal.
func ParseTMForm(s string) (TMForm, error) {
	switch strings.ToLower(s) {
	case "layered", "":
		return TMLayered, nil
	case "oxide", "monoxide", "mo":
		return TMMonoxide, nil
	case "metal", "metallic":
		return TMMetal, nil
	}
	return 0, fmt.Errorf("unknown transition-metal form %q (want layered, oxide or metal)", s)
}

// assayColumns are the species an assay is mapped to, in a fixed order so that every Monte
// Carlo sample fills the same columns. A layered oxide Li_yMO2 is split into y·LiMO2 +
// (1−y)·MO2: its mass and its charge balance are linear in that split. Nickel pairs with
// manganese first as LiNi0.5Mn0.5O2, Ni(II) with Mn(IV) as in NMC (see cathode.NewSpecies); the
// nickel, manganese and cobalt left are LiMO2 each.
var assayColumns = []string{"LiCoO2", "LiNiO2", "LiMnO2", "CoO2", "NiO2", "MnO2", "LiNi0.5Mn0.5O2", "Ni0.5Mn0.5O2", "CoO", "NiO", "MnO", "Co", "Ni", "Mn",
	"LiFePO4", "FePO4", "Li2CO3", "Fe", "Al", "Cu", "C2H2F2", "C"}

// speciesMapper maps assay draws to species with one table of atomic weights.
type speciesMapper struct {
	es       *cathode.Elements
	molarKgs []float64 // kg/mol of each assay column
}

func newSpeciesMapper(lt *leach.Tables) (*speciesMapper, error) {
	m := &speciesMapper{es: lt.Elements(), molarKgs: make([]float64, len(assayColumns))}
	for i, c := range assayColumns {
		g, err := lt.MolarMassG(c)
		if err != nil {
			return nil, fmt.Errorf("assay species %s: %w", c, err)
		}
		m.molarKgs[i] = g / 1000
	}
	return m, nil
}

// species maps one assay draw (wt% by element) to kg of each assay column per kg of black mass,
// writing into dst. It returns the wt% of assayed elements it could not place.
func (sm *speciesMapper) species(dst []float64, wt map[string]float64, form TMForm) (unassigned map[string]float64) {
	es := sm.es
	clear(dst)
	mol := func(el string) float64 { return wt[el] * 10 / es.Weight(el) } // mol per kg
	put := func(col string, n float64) {
		if n <= 0 {
			return
		}
		for i, c := range assayColumns {
			if c == col {
				dst[i] += n * sm.molarKgs[i]
				return
			}
		}
		panic("feed: no assay column " + col)
	}
	li, fe, p := mol("Li"), mol("Fe"), mol("P")
	lfp := math.Min(li, math.Min(fe, p))
	put("LiFePO4", lfp)
	li, fe, p = li-lfp, fe-lfp, p-lfp
	fp := math.Min(fe, p)
	put("FePO4", fp)
	fe, p = fe-fp, p-fp
	tm := map[string]float64{"Co": mol("Co"), "Ni": mol("Ni"), "Mn": mol("Mn")}
	tmTotal := tm["Co"] + tm["Ni"] + tm["Mn"]
	switch form {
	case TMLayered:
		y := 0.0
		if tmTotal > 0 {
			y = math.Min(1, li/tmTotal)
		}
		pair := math.Min(tm["Ni"], tm["Mn"]) // mol of each paired
		put("LiNi0.5Mn0.5O2", y*2*pair)
		put("Ni0.5Mn0.5O2", (1-y)*2*pair)
		tm["Ni"], tm["Mn"] = tm["Ni"]-pair, tm["Mn"]-pair
		for _, m := range []string{"Co", "Ni", "Mn"} {
			put("Li"+m+"O2", y*tm[m])
			put(m+"O2", (1-y)*tm[m])
		}
		li -= y * tmTotal
	case TMMonoxide:
		for _, m := range []string{"Co", "Ni", "Mn"} {
			put(m+"O", tm[m])
		}
	case TMMetal:
		for _, m := range []string{"Co", "Ni", "Mn"} {
			put(m, tm[m])
		}
	}
	put("Li2CO3", li/2)
	put("Fe", fe)
	put("Al", mol("Al"))
	put("Cu", mol("Cu"))
	f, c := mol("F"), mol("C")
	pvdf := math.Min(f/2, c/2)
	put("C2H2F2", pvdf)
	put("C", c-2*pvdf)
	unassigned = map[string]float64{}
	if p > 1e-12 {
		unassigned["P"] = p * es.Weight("P") / 10
	}
	if left := f - 2*pvdf; left > 1e-12 {
		unassigned["F"] = left * es.Weight("F") / 10
	}
	for el, v := range wt {
		switch el {
		case "Li", "Fe", "P", "Co", "Ni", "Mn", "Al", "Cu", "F", "C", "O", "H":
		default:
			if v > 0 {
				unassigned[el] = v
			}
		}
	}
	return unassigned
}

// QuoteOptions sets a quote from an assay alone.
type QuoteOptions struct {
	// BlackMassKg is the mass as weighed: wet when a moisture is known (Moisture, or the
	// assay's moisture line), which is taken off before any metal is counted.
	BlackMassKg float64
	// Moisture is the water of the weighed mass (wt% of the wet mass); unknown, the assay's
	// moisture line is used, and without one the weighed mass is taken as dry.
	Moisture Moisture
	// MissingLi is the lithium assumed when the assay has none (LiStoichiometric is the zero
	// value); a warning names what was assumed.
	MissingLi MissingLi
	TMForm    TMForm
	Seed      uint64
	Samples   int
	Leach     leach.Options
	// Tables are the leach tables (required), whose atomic weights also map the assay to species;
	// Prices price the leach reagents (the zero value: no cost).
	Tables *leach.Tables
	Prices leach.Prices
}

// Quote is what an assay and a weight give: the black mass and its elements and species (drawn
// within the assay's uncertainty) and the leach plan.
type Quote struct {
	// Basis says what the figures rest on: "assay+weighing", or "assay+estimate+weighing"
	// when an element was taken from a lot's estimate.
	Basis string `json:"basis"`
	// Weighing is the mass as weighed, its moisture and the dry mass the metals are counted in
	// (BlackMassKg).
	Weighing    Weighing  `json:"weighing"`
	BlackMassKg dist.Stat `json:"dry_mass_kg"`
	// Missing lists the elements the species model needs that the assay lacks, and what stood in.
	Missing      []Missing `json:"missing_elements,omitempty"`
	Elements     map[string]dist.Amount
	Compounds    map[string]dist.Amount
	ElementOrder []string
	Leach        *leach.Report
	Warnings     []string
	Seed         uint64
	Samples      int
	// ElementDraws and BlackMassDraws are the samples behind Elements and BlackMassKg (kg), for
	// pricing the same draws.
	ElementDraws   map[string][]float64 `json:"-"`
	BlackMassDraws []float64            `json:"-"`
}

// Weighing is a weighed black mass, wet and dry.
type Weighing struct {
	WetMassKg     float64   `json:"wet_mass_kg"`
	MoistureWtPct dist.Stat `json:"moisture_wt_pct"`
	MoistureBasis string    `json:"moisture_basis"`
	DryMassKg     dist.Stat `json:"dry_mass_kg"`
}

// QuoteFrom quotes material already shredded: the assay (drawn within its uncertainty, values
// below the detection limit from 0 to the limit) times the dry black mass (the weighed mass less
// its moisture), mapped to species, then the leach plan. Elements the species need that the
// assay lacks are never resolved silently: lithium is assumed as opt.MissingLi says, and every
// missing element has a warning.
func QuoteFrom(a *Assay, opt QuoteOptions) (*Quote, error) {
	if !(opt.BlackMassKg > 0) || opt.BlackMassKg > 1e7 {
		return nil, fmt.Errorf("black-mass weight must be positive (got %v kg)", opt.BlackMassKg)
	}
	if opt.Samples < 10 || opt.Samples > 200_000 {
		return nil, fmt.Errorf("samples must be from 10 to 200000, got %d", opt.Samples)
	}
	if opt.Moisture.Known && (opt.Moisture.WtPct < 0 || opt.Moisture.WtPct > maxMoistureWtPct) {
		return nil, fmt.Errorf("moisture must be from 0 to %g wt%% of the wet mass (got %v)", float64(maxMoistureWtPct), opt.Moisture.WtPct)
	}
	lt := opt.Tables
	if lt == nil {
		return nil, errors.New("quote: no leach tables given")
	}
	sm, err := newSpeciesMapper(lt)
	if err != nil {
		return nil, err
	}
	n := opt.Samples
	draws := drawAssay(a, opt.Seed, n)
	r := &Quote{Elements: map[string]dist.Amount{}, Compounds: map[string]dist.Amount{}, Seed: opt.Seed, Samples: n,
		ElementDraws: map[string][]float64{}, Basis: quoteBasis(a)}
	r.Missing = fillMissing(a, sm.es, draws, opt.MissingLi)
	moist, mBasis, mWarn := moistureOf(a, opt.Moisture, opt.Seed, n)
	bm := make([]float64, n)
	for i := range bm {
		bm[i] = opt.BlackMassKg * (1 - moist[i]/100)
	}
	r.BlackMassDraws = bm
	r.BlackMassKg = dist.Summarise(bm)
	r.Weighing = Weighing{WetMassKg: opt.BlackMassKg, MoistureWtPct: dist.Summarise(moist), MoistureBasis: mBasis, DryMassKg: r.BlackMassKg}
	cols, unassigned := sm.columns(draws, bm, opt.TMForm)
	for _, v := range a.Values {
		kg := make([]float64, n)
		for i := range n {
			kg[i] = draws[i][v.Element] / 100 * bm[i]
		}
		r.Elements[v.Element] = dist.AmountOf(kg, bm)
		r.ElementDraws[v.Element] = kg
	}
	for c, name := range assayColumns {
		if slices.Max(cols[c]) > 0 {
			r.Compounds[name] = dist.AmountOf(cols[c], bm)
		}
	}
	r.ElementOrder = cathode.SortForDisplay(slices.Collect(maps.Keys(r.Elements)))
	r.Warnings = quoteWarnings(a, opt, unassigned, r.Missing, mWarn)
	lr, err := leach.Plan(leach.Input{Formulas: assayColumns, Kg: cols, BlackMassKg: bm, Draws: dist.NewDrawer(opt.Seed, n), Tables: lt,
		Prices: opt.Prices}, opt.Leach)
	if err != nil {
		return nil, err
	}
	r.Leach = lr
	return r, nil
}

// quoteBasis says what a quote rests on.
func quoteBasis(a *Assay) string {
	for _, v := range a.Values {
		if v.Basis == BasisEstimate {
			return joinBasis(BasisAssay, BasisEstimate, BasisWeighing)
		}
	}
	return joinBasis(BasisAssay, BasisWeighing)
}

// columns maps every draw to kg of each assay column in the dry mass bm of that draw; it
// returns the wt% of elements draw 0 could not place.
func (sm *speciesMapper) columns(draws []map[string]float64, bm []float64, form TMForm) ([][]float64, map[string]float64) {
	n := len(draws)
	cols := make([][]float64, len(assayColumns))
	for c := range cols {
		cols[c] = make([]float64, n)
	}
	row := make([]float64, len(assayColumns))
	var unassigned map[string]float64
	for i := range n {
		un := sm.species(row, draws[i], form)
		for c, v := range row {
			cols[c][i] = v * bm[i]
		}
		if i == 0 {
			unassigned = un
		}
	}
	return cols, unassigned
}

// quoteWarnings says how the species were inferred and what the assay left open.
func quoteWarnings(a *Assay, opt QuoteOptions, unassigned map[string]float64, missing []Missing, moisture []string) []string {
	w := []string{"quote from an assay: species are inferred from the elements (" +
		map[TMForm]string{TMLayered: "Co/Ni/Mn as layered oxides with the assay's lithium, Ni(II) paired with Mn(IV) as in NMC", TMMonoxide: "Co/Ni/Mn as monoxides", TMMetal: "Co/Ni/Mn as metals"}[opt.TMForm] +
		"; Li with Fe and P as LiFePO4, other Fe as metal, Al and Cu as metal, F as PVDF, other C as graphite, Li left over as Li2CO3)"}
	for _, m := range missing {
		w = append(w, m.Note)
	}
	w = append(w, moisture...)
	censored := map[string]Value{}
	for _, v := range a.Values {
		if v.Censored {
			censored[v.Element] = v
		}
	}
	for _, el := range slices.Sorted(maps.Keys(unassigned)) {
		if v, ok := censored[el]; ok { // its limit, not the half-limit draw 0 holds
			w = append(w, fmt.Sprintf("%s %s (below the detection limit) could not be placed in a species and is left out of the leach", el, v.Text()))
			continue
		}
		w = append(w, fmt.Sprintf("%.3g wt%% %s could not be placed in a species and is left out of the leach", unassigned[el], el))
	}
	for _, v := range a.Values {
		if v.SigmaAssumed {
			w = append(w, fmt.Sprintf("no lab uncertainty given: %.0f %% relative assumed for every element without one", 100*DefaultSigmaRel))
			break
		}
	}
	var below []string
	for _, v := range a.Values {
		if v.Censored {
			below = append(below, v.Element+" "+v.Text())
		}
	}
	if len(below) > 0 {
		w = append(w, "below the detection limit ("+strings.Join(below, ", ")+"): drawn from 0 to the limit, every value equally likely")
	}
	return w
}

// drawAssay returns n draws of the assay, each element from a normal distribution with the
// lab's standard uncertainty, truncated at zero, or uniform from 0 to the detection limit for a
// value below it. Draw 0 is the assay as reported (half the limit for a value below it).
func drawAssay(a *Assay, seed uint64, n int) []map[string]float64 {
	rng := rand.New(rand.NewPCG(seed, 0xa55a))
	out := make([]map[string]float64, n)
	for i := range out {
		m := make(map[string]float64, len(a.Values)+1)
		for _, v := range a.Values {
			x := v.WtPct
			if i > 0 {
				x = v.draw(rng)
			}
			m[v.Element] = x
		}
		out[i] = m
	}
	return out
}
