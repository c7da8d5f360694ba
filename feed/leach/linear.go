package leach

import (
	"math"

	"blackmass/cathode"
)

// A species' dissolution is linear in the extraction of each of its metals: every amount
// cathode.Dissolve returns is a sum over the metals of (released, retained) × a constant of the
// species and route. The planner dissolves every species in every pass of every sample, so it
// takes cathode.Dissolve once at no extraction and once per metal at full extraction of that
// metal alone, and combines them per pass. It checks the combination against cathode.Dissolve
// at mixed extractions and keeps the direct call for a species where they disagree.

// rxVec is the part of a reaction the planner uses, per mol of species.
type rxVec struct {
	hPlus, water, cl2, h2o2Red, h2o2Ox, co2, h3po4, hf float64
	liquor                                             [nLeachElements]float64
}

func (v *rxVec) addScaled(w rxVec, f float64) {
	v.hPlus += f * w.hPlus
	v.water += f * w.water
	v.cl2 += f * w.cl2
	v.h2o2Red += f * w.h2o2Red
	v.h2o2Ox += f * w.h2o2Ox
	v.co2 += f * w.co2
	v.h3po4 += f * w.h3po4
	v.hf += f * w.hf
	for k := range v.liquor {
		v.liquor[k] += f * w.liquor[k]
	}
}

func vecOf(rx cathode.Reaction) rxVec {
	v := rxVec{hPlus: rx.HPlusMol, water: rx.WaterMol, cl2: rx.Cl2Mol, h2o2Red: rx.H2O2ReductantMol,
		h2o2Ox: rx.H2O2OxidantMol, co2: rx.CO2Mol, h3po4: rx.H3PO4Mol, hf: rx.HFMol}
	for _, ion := range rx.Cations {
		if k := elementIndex(ion.Symbol); k >= 0 {
			v.liquor[k] += ion.Mol
		}
	}
	return v
}

// linearRx is a species' dissolution on a route as a base and one slope per metal.
type linearRx struct {
	metals []string
	base   rxVec
	slope  []rxVec // per metal: the change from no extraction to full extraction of it alone
	// What the pass's extraction needs of each metal, indexed (see pass.extraction): its index in
	// leachElements, its amount, whether it is lithium or reducible; indexed is false when a metal
	// is not among leachElements.
	meta          []metalMeta
	indexed       bool
	liWithLattice bool
	// feed is the species' elements among leachElements with their moles per mol.
	feed []feedTerm
}

type metalMeta struct {
	k         int
	amount    float64
	li        bool
	reducible bool
}

type feedTerm struct {
	k   int
	mol float64
}

// linearTolerance is the relative agreement the check asks of the combination.
const linearTolerance = 1e-12

// newLinearRx returns the linear form of sp on route, or nil where the check fails.
func newLinearRx(sp cathode.Species, route cathode.Route) *linearRx {
	lr := &linearRx{indexed: true, liWithLattice: route == cathode.SulfuricSelective && sp.Anion() == "oxide"}
	for _, t := range sp.Formula.Terms() {
		k := elementIndex(t.Symbol)
		if k >= 0 {
			lr.feed = append(lr.feed, feedTerm{k, t.Amount})
		}
		if cathode.IsMetal(t.Symbol) {
			lr.metals = append(lr.metals, t.Symbol)
			aq := cathode.AqueousCharge(t.Symbol)
			lr.meta = append(lr.meta, metalMeta{k: k, amount: t.Amount, li: t.Symbol == "Li",
				reducible: sp.State(t.Symbol) > aq && aq > 0})
			lr.indexed = lr.indexed && k >= 0
		}
	}
	at := func(x map[string]float64) (rxVec, bool) {
		rx, err := cathode.Dissolve(sp, route, func(s string) float64 { return x[s] })
		return vecOf(rx), err == nil
	}
	base, ok := at(map[string]float64{})
	if !ok {
		return nil
	}
	lr.base = base
	for _, m := range lr.metals {
		v, ok := at(map[string]float64{m: 1})
		if !ok {
			return nil
		}
		v.addScaled(base, -1)
		lr.slope = append(lr.slope, v)
	}
	// The check: three mixed extractions, fixed so the planner stays reproducible.
	for trial, seeds := range [][2]float64{{0.37, 0.71}, {0.93, 0.05}, {0.5, 0.999}} {
		x, xs := map[string]float64{}, make([]float64, len(lr.metals))
		for i, m := range lr.metals {
			xs[i] = math.Mod(seeds[0]+float64(i)*seeds[1]+float64(trial)*0.13, 1)
			x[m] = xs[i]
		}
		want, ok := at(x)
		if !ok || !lr.agrees(lr.at(xs), want) {
			return nil
		}
	}
	return lr
}

// at combines the linear form at extractions xs (one per metal, in lr.metals order).
func (lr *linearRx) at(xs []float64) rxVec {
	v := lr.base
	for i := range lr.slope {
		v.addScaled(lr.slope[i], xs[i])
	}
	return v
}

func (lr *linearRx) agrees(got, want rxVec) bool {
	near := func(a, b float64) bool { return math.Abs(a-b) <= linearTolerance*math.Max(1, math.Abs(b)) }
	ok := near(got.hPlus, want.hPlus) && near(got.water, want.water) && near(got.cl2, want.cl2) &&
		near(got.h2o2Red, want.h2o2Red) && near(got.h2o2Ox, want.h2o2Ox) && near(got.co2, want.co2) &&
		near(got.h3po4, want.h3po4) && near(got.hf, want.hf)
	for k := range got.liquor {
		ok = ok && near(got.liquor[k], want.liquor[k])
	}
	return ok
}

// extractions fills xs with the pass's extraction of each metal from the sample's planned
// extraction per leach element, as pass.extraction does (the same operations in the same order);
// false when some value leaves 0..1.
func (lr *linearRx) extractions(xs []float64, planAt *[nLeachElements]float64, fAcid, fRed float64) bool {
	latticeX := 0.0
	if lr.liWithLattice {
		tm := 0.0
		for _, m := range lr.meta {
			if !m.li {
				latticeX += m.amount * planAt[m.k]
				tm += m.amount
			}
		}
		if tm > 0 {
			latticeX /= tm
		}
	}
	for i, m := range lr.meta {
		v := planAt[m.k] * fAcid
		if m.li && lr.liWithLattice {
			v = latticeX * fAcid * fRed
		}
		if m.reducible {
			v *= fRed
		}
		if !(v >= 0 && v <= 1) {
			return false
		}
		xs[i] = v
	}
	return true
}
