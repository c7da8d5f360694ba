package recover

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"blackmass/feed/dist"
)

// Liquor is the liquor that enters recovery, per Monte Carlo sample (slices are [sample]):
// the leach's planned liquor or a measured one repeated.
type Liquor struct {
	VolumeL   []float64
	WaterKg   []float64
	ElementKg map[string][]float64
	// FreeAcidMol is the acid left, in mol of H2SO4 (sulfate) or HCl (chloride).
	FreeAcidMol []float64
	// Fe3Kg is the dissolved iron that is Fe(III); the rest is Fe(II). Nil: all Fe(II).
	Fe3Kg []float64
	// Anion is SO4 or Cl; AnionMol its mol (nil: set by the charge balance).
	Anion    string
	AnionMol []float64
}

// Input is what the planner needs: the liquor, the flowsheet, the tables, a seeded drawer
// over the same samples and, optionally, product prices.
type Input struct {
	Liquor    Liquor
	Flowsheet Flowsheet
	Tables    *Tables
	Draws     *dist.Drawer
	Prices    *ProductPrices
	// ReagentPrices price the recovery's reagents as bought; nil leaves the cost out.
	ReagentPrices *ReagentPrices
}

// ProductPrices are prices per kg of product, by a ProductItems key (Li2CO3, Co cathode,
// CoSO4·7H2O, MnO2 ...) or, as a fallback for electrowon metal and cement, by the metal's
// symbol (Co, Ni, Cu). Source says where each price came from.
type ProductPrices struct {
	Currency string
	PerKg    map[string]float64
	Source   map[string]string
}

type planner struct {
	t      *Tables
	d      *dist.Drawer
	n      int
	anion  string
	params []dist.Param
	seen   map[string]bool
}

// draw returns the draws of a parameter, recording it for the report.
func (p *planner) draw(stage, name string, lo, mode, hi float64, unit, src string) []float64 {
	k := "recover/" + stage + "/" + name
	if !p.seen[k] {
		p.seen[k] = true
		p.params = append(p.params, dist.Param{Scope: "recover " + stage, Name: name, Min: lo, Mode: mode, Max: hi,
			Unit: unit, Source: src})
	}
	v := p.d.Draws(k, lo, mode, hi)
	if len(v) < p.n { // a drawer of most likely values only
		out := make([]float64, p.n)
		for i := range out {
			out[i] = v[0]
		}
		return out
	}
	return v
}

// val is sample c.i's draw of a parameter of recover_params.csv.
func (p *planner) val(c *ctx, stage, name string) float64 {
	pr, err := p.t.param(stage, name)
	if err != nil {
		panic(err) // the tables are checked for every parameter when loaded
	}
	return p.draw(stage, name, pr.Min, pr.Mode, pr.Max, pr.Unit, pr.Source)[c.i]
}

// Plan takes every sample's liquor through the flowsheet and summarises it.
func Plan(in Input) (*Report, error) {
	if in.Tables == nil {
		return nil, errors.New("recover: no tables")
	}
	if in.Draws == nil {
		return nil, errors.New("recover: no drawer")
	}
	if err := in.Flowsheet.Validate(); err != nil {
		return nil, err
	}
	lq := in.Liquor
	n := len(lq.VolumeL)
	if n == 0 {
		return nil, errors.New("recover: the liquor has no samples")
	}
	if err := checkLiquor(lq, n); err != nil {
		return nil, err
	}
	if in.ReagentPrices != nil {
		if err := in.ReagentPrices.check(in.Tables, in.Prices); err != nil {
			return nil, err
		}
	}
	p := &planner{t: in.Tables, d: in.Draws, n: n, anion: lq.Anion, seen: map[string]bool{}}
	if p.anion != "SO4" && p.anion != "Cl" {
		return nil, fmt.Errorf("recover: anion %q: want SO4 or Cl", lq.Anion)
	}
	for _, st := range in.Flowsheet.Steps {
		if st.Product == "sulfate" && p.anion != "SO4" {
			return nil, in.Flowsheet.fail(st, "product", "sulfate crystallisation needs a sulfate liquor; this one is chloride")
		}
	}
	tallies := make([]*tally, len(in.Flowsheet.Steps))
	for k := range tallies {
		tallies[k] = newTally(n)
	}
	res := &results{n: n, in: map[string][]float64{}, total: map[string][]float64{}, effluent: map[string][]float64{},
		strip: map[string][]float64{}, residual: map[string]float64{}, water0: make([]float64, n),
		waterEnd: make([]float64, n), waterStrip: make([]float64, n)}
	for i := range n {
		s := p.initial(lq, i)
		led := newLedger()
		p.ledgerSolution(led.in, s)
		for el, v := range led.in {
			col(res.in, el, n)[i] = v
		}
		res.water0[i] = s.WaterKg
		c := &ctx{i: i, n: n, t: p.t, led: led}
		for k, st := range in.Flowsheet.Steps {
			c.tl = tallies[k]
			p.run(c, st, s)
			res.charge = math.Max(res.charge, chargeResidual(s))
			if c.strip != nil {
				res.charge = math.Max(res.charge, chargeResidual(c.strip))
			}
		}
		for el, v := range led.in {
			col(res.total, el, n)[i] = v
		}
		res.waterEnd[i] = s.WaterKg
		p.ledgerSolution(led.out, s)
		for el, v := range s.Mol {
			col(res.effluent, el, n)[i] = v
		}
		if c.strip != nil {
			res.waterStrip[i] = c.strip.WaterKg
			p.ledgerSolution(led.out, c.strip)
			for el, v := range c.strip.Mol {
				col(res.strip, el, n)[i] = v
			}
		}
		for el, v := range led.in {
			if v > 0 {
				res.residual[el] = math.Max(res.residual[el], math.Abs(led.out[el]-v)/v)
			}
		}
		for el, v := range led.out {
			if led.in[el] == 0 && v > 1e-12 {
				res.residual[el] = math.Inf(1)
			}
		}
	}
	return p.report(in, tallies, res), nil
}

// results are the per-sample numbers the report needs beside the stages' tallies.
type results struct {
	n               int
	in, total       map[string][]float64 // element -> mol in the liquor; with the reagents
	effluent, strip map[string][]float64 // element -> mol left in the final solutions
	residual        map[string]float64   // element -> largest relative balance residual
	water0          []float64            // the liquor's water
	waterEnd        []float64            // the effluent's
	waterStrip      []float64            // the cobalt circuit liquor's
	charge          float64
}

func chargeResidual(s *State) float64 {
	sc := s.chargeScale()
	if sc == 0 {
		return 0
	}
	return math.Abs(s.Charge()) / sc
}

// ledgerSolution adds a solution's elements to a side of the ledger.
func (p *planner) ledgerSolution(side map[string]float64, s *State) {
	for el, v := range s.Mol {
		if balanced(el) {
			side[el] += v
		}
	}
}

// run runs one stage on sample c.i.
func (p *planner) run(c *ctx, st Step, s *State) {
	switch st.Kind {
	case KindImpurity:
		p.impurity(c, st, s)
	case KindManganese:
		p.manganese(c, st, s)
	case KindSX:
		p.sx(c, st, s)
	case KindCobalt:
		p.metalProduct(c, st, c.strip, "Co")
	case KindNickel:
		p.metalProduct(c, st, s, "Ni")
	case KindLithium:
		p.lithium(c, st, s)
	case KindEffluent:
		p.effluent(c, st, s)
	}
}

// initial is sample i's liquor as a solution: the anion set by charge balance when not given.
func (p *planner) initial(lq Liquor, i int) *State {
	s := &State{Mol: map[string]float64{}, VolumeL: lq.VolumeL[i], WaterKg: lq.WaterKg[i]}
	names := make([]string, 0, len(lq.ElementKg))
	for el := range lq.ElementKg {
		names = append(names, el)
	}
	sort.Strings(names)
	for _, el := range names {
		if w := p.t.elements.Weight(el); w > 0 {
			s.Mol[el] = lq.ElementKg[el][i] * 1000 / w
		}
	}
	if lq.Fe3Kg != nil {
		s.Fe3Mol = math.Min(lq.Fe3Kg[i]*1000/p.t.elements.Weight("Fe"), s.Mol["Fe"])
	}
	acidH := lq.FreeAcidMol[i]
	el := "Cl"
	if lq.Anion == "SO4" {
		acidH *= 2
		el = "S"
	}
	s.FreeHMol = acidH
	if lq.AnionMol != nil {
		s.Mol[el] += lq.AnionMol[i]
	} else {
		s.Mol[el] += (s.Charge()) / -ionCharge(el)
	}
	// A liquor that does not balance (rounded assays) keeps its measured anion: the free acid
	// takes the difference, so that the stages start from a neutral solution.
	s.FreeHMol -= s.Charge()
	return s
}

func checkLiquor(lq Liquor, n int) error {
	same := func(name string, v []float64) error {
		if v != nil && len(v) != n {
			return fmt.Errorf("recover: liquor %s has %d samples, volume %d", name, len(v), n)
		}
		for _, x := range v {
			if !(x >= 0) || math.IsInf(x, 0) {
				return fmt.Errorf("recover: liquor %s holds %g: want a finite number, not negative", name, x)
			}
		}
		return nil
	}
	if len(lq.WaterKg) != n || len(lq.FreeAcidMol) != n {
		return fmt.Errorf("recover: the liquor needs water and free acid for each of its %d samples", n)
	}
	for _, c := range []struct {
		name string
		v    []float64
	}{{"volume", lq.VolumeL}, {"water", lq.WaterKg}, {"free acid", lq.FreeAcidMol}, {"Fe(III)", lq.Fe3Kg},
		{"anion", lq.AnionMol}} {
		if err := same(c.name, c.v); err != nil {
			return err
		}
	}
	for i, v := range lq.VolumeL {
		if !(v > 0) || !(lq.WaterKg[i] > 0) {
			return errors.New("recover: a liquor without a volume or water cannot be planned: give its volume")
		}
	}
	names := make([]string, 0, len(lq.ElementKg))
	for el := range lq.ElementKg {
		names = append(names, el)
	}
	slices.Sort(names)
	for _, el := range names {
		if err := same(el, lq.ElementKg[el]); err != nil {
			return err
		}
	}
	return nil
}
