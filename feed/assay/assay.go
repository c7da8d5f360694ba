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
}

// Assay is a lab assay of a black-mass sample.
type Assay struct {
	File   string  `json:"file"`
	Values []Value `json:"values"`
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
	BlackMassKg float64
	TMForm      TMForm
	Seed        uint64
	Samples     int
	Leach       leach.Options
	// Tables are the leach tables (required), whose atomic weights also map the assay to species;
	// Prices price the leach reagents (the zero value: no cost).
	Tables *leach.Tables
	Prices leach.Prices
}

// Quote is what an assay and a weight give: the black mass and its elements and species (drawn
// within the assay's uncertainty) and the leach plan.
type Quote struct {
	BlackMassKg  dist.Stat
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

// QuoteFrom quotes material already shredded: the assay (drawn within its uncertainty) times the
// black-mass weight, mapped to species, then the leach plan.
func QuoteFrom(a *Assay, opt QuoteOptions) (*Quote, error) {
	if !(opt.BlackMassKg > 0) || opt.BlackMassKg > 1e7 {
		return nil, fmt.Errorf("black-mass weight must be positive (got %v kg)", opt.BlackMassKg)
	}
	if opt.Samples < 10 || opt.Samples > 200_000 {
		return nil, fmt.Errorf("samples must be from 10 to 200000, got %d", opt.Samples)
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
	cols := make([][]float64, len(assayColumns))
	for c := range cols {
		cols[c] = make([]float64, n)
	}
	row := make([]float64, len(assayColumns))
	unassigned := map[string]float64{}
	for i := range n {
		un := sm.species(row, draws[i], opt.TMForm)
		for c, v := range row {
			cols[c][i] = v * opt.BlackMassKg
		}
		if i == 0 {
			unassigned = un
		}
	}
	bm := make([]float64, n)
	for i := range bm {
		bm[i] = opt.BlackMassKg
	}
	r := &Quote{Elements: map[string]dist.Amount{}, Compounds: map[string]dist.Amount{}, Seed: opt.Seed, Samples: n,
		ElementDraws: map[string][]float64{}, BlackMassDraws: bm}
	r.BlackMassKg = dist.Summarise(bm)
	for _, v := range a.Values {
		kg := make([]float64, n)
		for i := range n {
			kg[i] = draws[i][v.Element] / 100 * opt.BlackMassKg
		}
		r.Elements[v.Element] = dist.AmountOf(kg, bm)
		r.ElementDraws[v.Element] = kg
	}
	for c, name := range assayColumns {
		if slices.Max(cols[c]) > 0 {
			r.Compounds[name] = dist.AmountOf(cols[c], bm)
		}
	}
	els := make([]string, 0, len(r.Elements))
	for e := range r.Elements {
		els = append(els, e)
	}
	r.ElementOrder = cathode.SortForDisplay(els)
	r.Warnings = append(r.Warnings, "quote from an assay: species are inferred from the elements ("+
		map[TMForm]string{TMLayered: "Co/Ni/Mn as layered oxides with the assay's lithium, Ni(II) paired with Mn(IV) as in NMC", TMMonoxide: "Co/Ni/Mn as monoxides", TMMetal: "Co/Ni/Mn as metals"}[opt.TMForm]+
		"; Li with Fe and P as LiFePO4, other Fe as metal, Al and Cu as metal, F as PVDF, other C as graphite, Li left over as Li2CO3)")
	for _, el := range slices.Sorted(maps.Keys(unassigned)) {
		r.Warnings = append(r.Warnings, fmt.Sprintf("%.3g wt%% %s could not be placed in a species and is left out of the leach", unassigned[el], el))
	}
	for _, v := range a.Values {
		if v.SigmaAssumed {
			r.Warnings = append(r.Warnings, fmt.Sprintf("no lab uncertainty given: %.0f %% relative assumed for every element without one", 100*DefaultSigmaRel))
			break
		}
	}
	lr, err := leach.Plan(leach.Input{Formulas: assayColumns, Kg: cols, BlackMassKg: bm, Draws: dist.NewDrawer(opt.Seed, n), Tables: lt,
		Prices: opt.Prices}, opt.Leach)
	if err != nil {
		return nil, err
	}
	r.Leach = lr
	return r, nil
}

// drawAssay returns n draws of the assay, each element from a normal distribution with the
// lab's standard uncertainty, truncated at zero. Draw 0 is the assay as reported.
func drawAssay(a *Assay, seed uint64, n int) []map[string]float64 {
	rng := rand.New(rand.NewPCG(seed, 0xa55a))
	out := make([]map[string]float64, n)
	for i := range out {
		m := make(map[string]float64, len(a.Values))
		for _, v := range a.Values {
			x := v.WtPct
			if i > 0 {
				x = math.Max(0, v.WtPct+v.SigmaWtPct*rng.NormFloat64())
			}
			m[v.Element] = x
		}
		out[i] = m
	}
	return out
}
