package leach

import (
	"fmt"
	"io/fs"
	"math"
	"slices"
	"strings"

	"blackmass/cathode"
	"blackmass/data"
)

// Reductant is a reagent that supplies electrons to the oxides, by its oxidation half-reaction
// per mole (data/reductants.csv).
type Reductant struct {
	Key           string
	Formula       string
	Aliases       []string
	ElectronsMol  float64 // e− given per mol
	HPlusMol      float64 // H+ released per mol
	SulfateMol    float64 // SO4²− added to the liquor per mol
	SodiumMol     float64 // Na+ added per mol
	O2Mol         float64 // O2 given off per mol
	WaterMol      float64 // water released per mol (negative: taken up)
	Oxidant       bool    // can also oxidise copper metal and Fe(II) (peroxide)
	Form          string  // solution, gas, solid
	MolarMassGMol float64
	Source        string
}

// LoadReductants reads reductants.csv from the tables; formulas are read with the atomic
// weights es.
func LoadReductants(tables interface {
	ReadTable(string) (*data.Table, error)
}, es *cathode.Elements) ([]*Reductant, error) {
	t, err := tables.ReadTable("reductants.csv")
	if err != nil {
		return nil, err
	}
	var out []*Reductant
	for _, r := range t.Rows {
		rd := &Reductant{Key: r.Str("reductant"), Formula: r.Str("formula"), Oxidant: r.Str("oxidant") == "yes",
			Form: r.Str("form"), Source: r.Str("source")}
		for _, a := range strings.Split(r.Str("aliases"), "|") {
			if a = strings.TrimSpace(a); a != "" {
				rd.Aliases = append(rd.Aliases, a)
			}
		}
		for col, p := range map[string]*float64{"electrons_per_mol": &rd.ElectronsMol, "h_plus_per_mol": &rd.HPlusMol,
			"sulfate_per_mol": &rd.SulfateMol,
			"sodium_per_mol":  &rd.SodiumMol, "o2_per_mol": &rd.O2Mol, "water_per_mol": &rd.WaterMol} {
			if *p, err = r.Float(col); err != nil {
				return nil, err
			}
		}
		if !(rd.ElectronsMol > 0) {
			return nil, r.Errorf("a reductant gives electrons")
		}
		f, err := es.ParseFormula(rd.Formula)
		if err != nil {
			return nil, r.Errorf("%v", err)
		}
		rd.MolarMassGMol = f.MolarMass(es)
		out = append(out, rd)
	}
	return out, nil
}

// fsTables reads tables from a file system.
type fsTables struct{ fsys fs.FS }

func (t fsTables) ReadTable(name string) (*data.Table, error) { return data.ReadTable(t.fsys, name) }

// FindReductant returns the reductant named by key, formula or alias (case-insensitive).
func FindReductant(all []*Reductant, name string) (*Reductant, error) {
	var names []string
	for _, r := range all {
		for _, n := range append([]string{r.Key, r.Formula}, r.Aliases...) {
			if strings.EqualFold(strings.TrimSpace(name), n) {
				return r, nil
			}
		}
		names = append(names, r.Key)
	}
	return nil, fmt.Errorf("unknown reductant %q (want %s)", name, strings.Join(names, ", "))
}

// leachElements are the elements the liquor report follows: the display order without C, O
// and H.
var leachElements = func() []string {
	var out []string
	for _, s := range cathode.DisplayOrder {
		if s != "C" && s != "O" && s != "H" {
			out = append(out, s)
		}
	}
	if len(out) != nLeachElements {
		panic("feed: leachElements and nLeachElements disagree")
	}
	return out
}()

// nLeachElements sizes the per-sample element arrays.
const nLeachElements = 10

func elementIndex(sym string) int { return slices.Index(leachElements, sym) }

// redoxInput is one sample's black mass and dose.
type redoxInput struct {
	route   cathode.Route
	species []cathode.Species
	lin     []*linearRx              // per species, nil where cathode.Dissolve is called
	metals  []metalSpecies           // per species: a metal's symbol, charge and potential
	mol     []float64                // per compound
	plan    func(sym string) float64 // planned extraction (route's range or the user's)
	planAt  *[nLeachElements]float64 // plan at each of leachElements (nil: ask plan)
	hPlus   float64                  // H+ the acid supplies; +Inf: as much as needed
	red     *Reductant               // nil: none added
	redMol  float64                  // reductant dosed; +Inf: as much as needed
	lost    float64                  // share of a peroxide dose that decomposes
	lattice float64                  // share of the planned reduction the oxides' own oxygen can give
	metalE0 func(sym string) float64 // standard potential of the metal's couple
	// donors is room for a pass's donors (one per species at most), reused pass after pass; nil:
	// each pass makes its own.
	donors []donor
}

// sampleResult is what the planner keeps of each sample's leach with the dose: the fields the
// report reads (the pass's working values and the feed, which follows from the input, are left).
type sampleResult struct {
	liquorMol                                    [nLeachElements]float64
	fe3Mol, redUsed, redDecomp, h2, o2, cl2, co2 float64
	waterMol, anionMol, freeH, h2Potential       float64
	reductionCap, acidCap                        float64
}

func (r redoxResult) kept() sampleResult {
	return sampleResult{liquorMol: r.liquorMol, fe3Mol: r.fe3Mol, redUsed: r.redUsed, redDecomp: r.redDecomp, h2: r.h2,
		o2: r.o2, cl2: r.cl2, co2: r.co2, waterMol: r.waterMol, anionMol: r.anionMol, freeH: r.freeH,
		h2Potential: r.h2Potential, reductionCap: r.reductionCap, acidCap: r.acidCap}
}

// redoxResult is what the sample's leach reached.
type redoxResult struct {
	feedMol      [nLeachElements]float64 // per leachElements, in the feed
	liquorMol    [nLeachElements]float64 // dissolved
	fe3Mol       float64                 // of the dissolved iron, oxidised to Fe(III)
	hPlusUsed    float64                 // H+ consumed (net of what the reductant releases)
	redUsed      float64                 // reductant that reduced the oxides (mol)
	oxidantUsed  float64                 // peroxide that oxidised Cu, Fe(II) or phosphate iron (mol)
	redDecomp    float64                 // peroxide decomposed (mol)
	h2, o2, cl2  float64
	co2          float64
	waterMol     float64 // water formed by the reactions, net of water taken up
	anionMol     float64 // SO4²− or Cl− in the liquor
	freeH        float64 // H+ left
	h2Potential  float64 // H2 if every metal less noble than hydrogen reacted with the acid alone
	eNeeded      float64 // electrons the oxides took at the extraction reached
	eFromMetals  float64 // of those, given by metals in the feed
	eFromLattice float64 // of those, given by the oxides' own oxygen (as O2)
	reductionCap float64 // share of the planned reduction the electrons allowed (1: not limited)
	acidCap      float64 // share of the planned dissolution the acid allowed (1: not limited)
}

// maxLeachIterations bounds the passes leachSample takes to find the shares the electrons and
// the acid allow; each pass moves both toward the fixed point, and a few suffice.
const maxLeachIterations = 60

// leachSample dissolves one sample's black mass with the dose given: the extraction reached is
// the lesser of the planned extraction and what the acid and the electrons can dissolve.
//
// Electrons: the oxides' Co(III), Ni(III/IV) and Mn(IV) take electrons to reach M²⁺ (from the
// charge balance, cathode.Dissolve). Metals in the feed give theirs first, the least noble first
// (Al, Fe, Co, Ni, then Cu); the added reductant (or chloride, as Cl2, on the hydrochloric route)
// gives the rest. On the sulfuric routes, what is still short the oxides' own oxygen can give,
// leaving as O2, up to a share of the planned reduction that depends on temperature
// (data/lattice_oxygen.csv). Metal left over dissolves with H2 if it is less noble than
// hydrogen; copper left needs an oxidant (peroxide) or stays. Peroxide left then oxidises Fe(II)
// to Fe(III) (E° 0.771 V, after Cu²⁺/Cu at 0.34 V) and the remainder decomposes to O2.
//
// Acid: H+ taken by the solids' anions, by H2 and by the peroxide acting as oxidant, less the
// H+ the reductant releases. Short of acid, every extraction is scaled down until the acid just
// suffices: free acid never goes negative.
func leachSample(in redoxInput) (redoxResult, error) {
	fRed, fAcid := 1.0, 1.0
	var res redoxResult
	// The lattice oxygen's share is of the electrons the planned dissolution takes: those of the
	// first pass, at full reduction and acid.
	planned := 0.0
	for iter := 0; iter < maxLeachIterations; iter++ {
		latticeCap := in.lattice * planned * fAcid
		if iter == 0 {
			latticeCap = latticeOfThisPass
		}
		r, eCap, hNeed, err := dissolveOnce(in, fRed, fAcid, latticeCap)
		if err != nil {
			return r, err
		}
		if iter == 0 {
			planned = r.eNeeded
		}
		res = r
		nRed, nAcid := fRed, fAcid
		if r.eNeeded > 0 && eCap < r.eNeeded*(1-1e-12) {
			nRed = fRed * eCap / r.eNeeded
		}
		if hNeed > in.hPlus*(1+1e-12) && hNeed > 0 {
			nAcid = fAcid * in.hPlus / hNeed
		}
		if math.Abs(nRed-fRed) < 1e-12 && math.Abs(nAcid-fAcid) < 1e-12 {
			break
		}
		fRed, fAcid = math.Max(nRed, 0), math.Max(nAcid, 0)
	}
	res.reductionCap, res.acidCap = fRed, fAcid
	if res.freeH < 0 {
		res.freeH = 0 // rounding of the last step; the acid was scaled to suffice
	}
	return res, nil
}

// metalSpecies is a metallic species' element, looked up once: its index in leachElements (-1
// for none, or for a species that is not a metal), aqueous charge and standard potential.
type metalSpecies struct {
	sym           string
	k             int
	amount, z, e0 float64
}

// donor is a metal of the feed that can give electrons.
type donor struct {
	sym     string
	mol, z  float64
	e0      float64
	usedOx  float64 // electrons given to the oxides
	toH2    float64 // electrons given to H+
	toOxid  float64 // electrons taken by the oxidant
	dissolv float64 // mol dissolved
}

// pass is one dissolution pass at reduction share fRed and acid share fAcid.
type pass struct {
	in          redoxInput
	fRed, fAcid float64
	r           redoxResult
	donors      []donor
	hUptake     float64 // H+ taken by the solids' anions
	solidsWater float64 // water the solids' dissolution forms (cathode.Dissolve), mol
	eOxNeed     float64 // electrons the solids give up to an oxidant (phosphate iron, selective route)
	eCap        float64 // electrons available to the oxides
	oxidantLeft float64 // peroxide left after the reduction, mol
	oxUsedE     float64 // electrons taken by the peroxide acting as oxidant
	latticeCap  float64 // electrons the oxides' own oxygen can give
}

// latticeOfThisPass asks dissolveOnce to size the lattice oxygen's electrons on the pass's own
// demand (the first pass, at full reduction and acid, is the planned dissolution).
const latticeOfThisPass = -1

// dissolveOnce is one pass at reduction share fRed and acid share fAcid, the oxides' own oxygen
// able to give latticeCap electrons (or latticeOfThisPass). It returns the result, the electrons
// available to the oxides, and the H+ needed.
func dissolveOnce(in redoxInput, fRed, fAcid, latticeCap float64) (redoxResult, float64, float64, error) {
	p := &pass{in: in, fRed: fRed, fAcid: fAcid, latticeCap: latticeCap, donors: in.donors[:0]}
	if err := p.solids(); err != nil {
		return p.r, 0, 0, err
	}
	if latticeCap == latticeOfThisPass {
		p.latticeCap = in.lattice * p.r.eNeeded
	}
	p.reduce()
	p.leftoverMetals()
	p.oxidise()
	hNeed := p.balance()
	return p.r, p.eCap, hNeed, nil
}

// solids dissolves the non-metallic species (cathode.Dissolve) and lists the metals as donors.
func (p *pass) solids() error {
	in, r := p.in, &p.r
	for c, sp := range in.species {
		n := in.mol[c]
		if n <= 0 || sp.Inert() {
			continue
		}
		switch {
		case c < len(in.lin) && in.lin[c] != nil:
			for _, ft := range in.lin[c].feed {
				r.feedMol[ft.k] += n * ft.mol
			}
		case c < len(in.metals) && in.metals[c].k >= 0:
			r.feedMol[in.metals[c].k] += n * in.metals[c].amount
		default:
			for _, t := range sp.Formula.Terms() {
				if k := elementIndex(t.Symbol); k >= 0 {
					r.feedMol[k] += n * t.Amount
				}
			}
		}
		if sp.Metallic() {
			var d donor
			if c < len(in.metals) && in.metals[c].k >= 0 && in.planAt != nil {
				m := in.metals[c]
				d = donor{sym: m.sym, mol: n * in.planAt[m.k] * p.fAcid, z: m.z, e0: m.e0}
			} else {
				sym := sp.Formula.Terms()[0].Symbol
				d = donor{sym: sym, mol: n * in.plan(sym) * p.fAcid, z: cathode.AqueousCharge(sym), e0: in.metalE0(sym)}
			}
			if p.donors == nil {
				p.donors = make([]donor, 0, len(in.species))
			}
			p.donors = append(p.donors, d)
			if d.e0 < 0 {
				r.h2Potential += d.mol * d.z / 2
			}
			continue
		}
		v, err := p.dissolve(c, sp)
		if err != nil {
			return err
		}
		p.hUptake += v.hPlus * n
		p.solidsWater += v.water * n
		if in.route == cathode.Hydrochloric {
			r.eNeeded += 2 * v.cl2 * n
		} else {
			r.eNeeded += 2 * v.h2o2Red * n
			p.eOxNeed += 2 * v.h2o2Ox * n
		}
		r.co2 += v.co2 * n
		for k, mol := range v.liquor {
			r.liquorMol[k] += mol * n
		}
		r.liquorMol[idxP] += v.h3po4 * n
		r.liquorMol[idxF] += v.hf * n
	}
	return nil
}

// Indices of phosphorus and fluorine in leachElements.
var idxP, idxF = elementIndex("P"), elementIndex("F")

// maxLinearMetals is the most metals a species' linear form combines on the stack.
const maxLinearMetals = 8

// dissolve is species c's dissolution in this pass, per mol: its linear form at the pass's
// extraction where it has one, cathode.Dissolve otherwise (and wherever an extraction leaves
// 0..1, so the error is cathode's).
func (p *pass) dissolve(c int, sp cathode.Species) (rxVec, error) {
	if c < len(p.in.lin) && p.in.planAt != nil {
		if lr := p.in.lin[c]; lr != nil && lr.indexed && len(lr.metals) <= maxLinearMetals {
			var xs [maxLinearMetals]float64
			if lr.extractions(xs[:len(lr.metals)], p.in.planAt, p.fAcid, p.fRed) {
				return lr.at(xs[:len(lr.metals)]), nil
			}
		}
	}
	x := p.extraction(sp)
	if c < len(p.in.lin) {
		if lr := p.in.lin[c]; lr != nil && len(lr.metals) <= maxLinearMetals {
			var xs [maxLinearMetals]float64
			ok := true
			for i, m := range lr.metals {
				xs[i] = x(m)
				ok = ok && xs[i] >= 0 && xs[i] <= 1
			}
			if ok {
				return lr.at(xs[:len(lr.metals)]), nil
			}
		}
	}
	rx, err := cathode.Dissolve(sp, p.in.route, x)
	if err != nil {
		return rxVec{}, err
	}
	return vecOf(rx), nil
}

// extraction is the share of each element of sp dissolved in this pass.
func (p *pass) extraction(sp cathode.Species) cathode.Extraction {
	// The closure holds copies, not the pass, so that a pass stays on the stack.
	plan, route, fAcid, fRed := p.in.plan, p.in.route, p.fAcid, p.fRed
	// On the selective route an oxide's lithium stays in its lattice with the metals: it leaves
	// only as far as the oxide itself dissolves.
	liWithLattice := route == cathode.SulfuricSelective && sp.Anion() == "oxide"
	latticeX := 0.0
	if liWithLattice {
		tm := 0.0
		for _, t := range sp.Formula.Terms() {
			if t.Symbol != "Li" && cathode.IsMetal(t.Symbol) {
				latticeX += t.Amount * plan(t.Symbol)
				tm += t.Amount
			}
		}
		if tm > 0 {
			latticeX /= tm
		}
	}
	return func(sym string) float64 {
		v := plan(sym) * fAcid
		if sym == "Li" && liWithLattice {
			v = latticeX * fAcid * fRed
		}
		if sp.State(sym) > cathode.AqueousCharge(sym) && cathode.AqueousCharge(sym) > 0 {
			v *= fRed // the reducible metals of an oxide dissolve only as far as electrons allow
		}
		return v
	}
}

// reduce gives the oxides their electrons: the metals of the feed first, the least noble first,
// then the reductant (or chloride, as Cl2), then on the sulfuric routes the oxides' own oxygen. A
// shortfall shows as eCap < eNeeded.
func (p *pass) reduce() {
	in, r := p.in, &p.r
	slices.SortStableFunc(p.donors, func(a, b donor) int { return cmpFloat(a.e0, b.e0) })
	rem := r.eNeeded
	for j := range p.donors {
		d := &p.donors[j]
		give := math.Min(rem, d.mol*d.z)
		d.usedOx, rem = give, rem-give
		r.eFromMetals += give
	}
	p.eCap = r.eFromMetals
	switch {
	case in.route == cathode.Hydrochloric:
		r.cl2 = rem / 2
		p.eCap += rem
	case in.red != nil:
		avail := in.redMol
		if in.red.Oxidant && !math.IsInf(avail, 1) {
			r.redDecomp = avail * in.lost
			avail -= r.redDecomp
		}
		r.redUsed = math.Min(rem/in.red.ElectronsMol, avail)
		p.eCap += avail * in.red.ElectronsMol
		rem -= r.redUsed * in.red.ElectronsMol
		if in.red.Oxidant && !math.IsInf(avail, 1) {
			p.oxidantLeft = avail - r.redUsed
		}
	}
	if in.route != cathode.Hydrochloric {
		r.eFromLattice = math.Min(math.Max(rem, 0), p.latticeCap)
		p.eCap += p.latticeCap
	}
}

// leftoverMetals dissolves what metal the oxides did not take: with H2 if it is less noble than
// hydrogen; copper only with the peroxide left as oxidant (or stays in the residue).
func (p *pass) leftoverMetals() {
	in, r := p.in, &p.r
	for j := range p.donors {
		d := &p.donors[j]
		left := d.mol*d.z - d.usedOx
		switch {
		case d.e0 < 0:
			d.toH2 = left
			r.h2 += left / 2
		case in.route != cathode.Hydrochloric && in.red != nil && in.red.Oxidant:
			take := math.Min(left, 2*p.oxidantLeft)
			if math.IsInf(in.redMol, 1) {
				take = left // "as needed": the planner doses the oxidant this takes
			}
			d.toOxid = take
			p.oxidantLeft -= take / 2
			p.oxUsedE += take
		}
		d.dissolv = (d.usedOx + d.toH2 + d.toOxid) / d.z
		if k := elementIndex(d.sym); k >= 0 {
			r.liquorMol[k] += d.dissolv
		}
	}
}

// oxidise spends the peroxide left: phosphate iron on the selective route (dosed with the
// reagent), then Fe(II) in the liquor to Fe(III) on the sulfuric route; the rest decomposes.
func (p *pass) oxidise() {
	in, r := p.in, &p.r
	p.oxUsedE += p.eOxNeed
	if in.route == cathode.SulfuricPeroxide && in.red != nil && in.red.Oxidant && !math.IsInf(in.redMol, 1) {
		ox := math.Min(r.liquorMol[elementIndex("Fe")], 2*math.Max(p.oxidantLeft, 0))
		r.fe3Mol = ox
		p.oxidantLeft -= ox / 2
		p.oxUsedE += ox
	}
	r.oxidantUsed = p.oxUsedE / 2
	if in.red != nil && in.red.Oxidant && !math.IsInf(in.redMol, 1) {
		r.redDecomp += math.Max(in.redMol-r.redDecomp-r.redUsed-r.oxidantUsed, 0)
	}
}

// balance closes the H+ account (taken by the anions, by H2 and by the oxidant, 1 H+ per
// electron; released by the reductant, and 1 per electron the oxides' own oxygen gives, whose
// oxide ions leave as O2 instead of water) and the gases, and returns the H+ needed.
func (p *pass) balance() float64 {
	in, r := p.in, &p.r
	hNeed := p.hUptake + 2*r.h2 + p.oxUsedE - r.eFromLattice
	r.o2 = r.eFromLattice / 4
	if in.red != nil {
		hNeed -= r.redUsed * in.red.HPlusMol
		r.o2 += r.redUsed*in.red.O2Mol + r.redDecomp/2
		r.liquorMol[elementIndex("Na")] += r.redUsed * in.red.SodiumMol
	}
	r.hPlusUsed = hNeed
	r.freeH = in.hPlus - hNeed
	r.waterMol = p.water()
	return hNeed
}

// water is the water the pass's reactions form, net of what they take up: the solids' own
// (cathode.Dissolve: oxide ions to water, phosphate iron oxidised by peroxide), less the oxide
// ions that leave as O2 instead (2 e− each), plus 2 H2O per H2O2 that oxidised copper or Fe(II)
// (H2O2 + 2H+ + 2e− → 2H2O: one per electron), 1 per H2O2 decomposed (H2O2 → H2O + ½O2), and the
// reductant's own (its half-reaction's water: SO2 + 2H2O → SO4²− + 4H+ + 2e− takes two).
func (p *pass) water() float64 {
	in, r := p.in, &p.r
	w := p.solidsWater - r.eFromLattice/2 + (p.oxUsedE - p.eOxNeed)
	if in.red != nil {
		w += r.redDecomp + r.redUsed*in.red.WaterMol
	}
	return w
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}
