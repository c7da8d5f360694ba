package cathode

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Route is an acid-leach route.
type Route int

const (
	// RouteInvalid is the zero value.
	RouteInvalid Route = iota
	// SulfuricPeroxide: H2SO4 with H2O2 as reductant (H2O2 -> O2 + 2H+ + 2e-) for Co(III),
	// Ni(III/IV), Mn(IV), and as oxidant for copper metal.
	SulfuricPeroxide
	// Hydrochloric: HCl with no added reductant. Chloride is oxidised (2Cl- -> Cl2 + 2e-) by the
	// high-valent metals; copper metal stays undissolved.
	Hydrochloric
	// SulfuricSelective: H2SO4 with H2O2 as oxidant for phosphate cathodes: Fe(II) is oxidised
	// and stays in the residue as FePO4 while Li dissolves.
	SulfuricSelective
)

var routeNames = map[Route]string{
	SulfuricPeroxide:  "sulfuric-peroxide",
	Hydrochloric:      "hydrochloric",
	SulfuricSelective: "sulfuric-selective",
}

// Routes lists every valid route.
func Routes() []Route { return []Route{SulfuricPeroxide, Hydrochloric, SulfuricSelective} }

func (r Route) String() string {
	if s, ok := routeNames[r]; ok {
		return s
	}
	return fmt.Sprintf("Route(%d)", int(r))
}

// MarshalText writes the route's name, so JSON shows "hydrochloric" rather than a number.
func (r Route) MarshalText() ([]byte, error) { return []byte(r.String()), nil }

// ParseRoute accepts a route name as printed by String, or the short forms "h2so4", "hcl",
// "selective".
func ParseRoute(s string) (Route, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "sulfuric-peroxide", "sulphuric-peroxide", "h2so4", "sulfuric", "h2so4-h2o2":
		return SulfuricPeroxide, nil
	case "hydrochloric", "hcl":
		return Hydrochloric, nil
	case "sulfuric-selective", "selective", "selective-li":
		return SulfuricSelective, nil
	}
	return RouteInvalid, fmt.Errorf("unknown leach route %q (want sulfuric-peroxide, hydrochloric or sulfuric-selective)", s)
}

// Acid returns the acid's formula text: "H2SO4" or "HCl".
func (r Route) Acid() string {
	if r == Hydrochloric {
		return "HCl"
	}
	return "H2SO4"
}

// AcidProtons is the number of H+ each mole of the route's acid gives (2 for H2SO4, 1 for HCl).
func (r Route) AcidProtons() float64 {
	if r == Hydrochloric {
		return 1
	}
	return 2
}

// Anion returns the liquor anion: "SO4" or "Cl".
func (r Route) Anion() string {
	if r == Hydrochloric {
		return "Cl"
	}
	return "SO4"
}

// AnionCharge returns the magnitude of the liquor anion's charge.
func (r Route) AnionCharge() float64 { return r.AcidProtons() }

// Ion is an amount of an aqueous ion.
type Ion struct {
	Symbol string
	Charge float64
	Mol    float64
}

// Reaction is the dissolution of one mole of a species on a route, with each element dissolving
// to the fraction the caller chose. All amounts are mol per mol of species; gases and reagents
// are positive when produced (gases) or consumed (reagents).
type Reaction struct {
	Species Species
	Route   Route

	HPlusMol          float64 // H+ taken up by the solid's anions (oxide -> H2O, phosphate -> H3PO4 ...)
	ElectronsMol      float64 // net electrons the solid takes up (positive: reduction needed)
	AcidMol           float64 // H2SO4 or HCl consumed
	H2O2ReductantMol  float64 // H2O2 oxidised to O2 while reducing the solid
	H2O2OxidantMol    float64 // H2O2 reduced to water while oxidising Fe(II) or copper
	O2Mol             float64
	Cl2Mol            float64
	H2Mol             float64
	CO2Mol            float64
	WaterMol          float64 // net water produced (negative: consumed)
	Cations           []Ion   // to the liquor
	AnionMol          float64 // SO4(2-) or Cl- left in the liquor
	H3PO4Mol          float64 // phosphate to the liquor as H3PO4
	HFMol             float64 // fluoride to the liquor as HF
	Residue           []Term  // element moles that stay solid
	ResidueFePO4Mol   float64 // of Residue, the FePO4 formed on the selective route
	UndissolvedCopper bool    // copper metal left because the route has no oxidant
}

// Extraction gives the fraction (0..1) of an element that goes to the liquor. A nil Extraction
// means complete dissolution of what the route dissolves.
type Extraction func(symbol string) float64

// Dissolve returns the stoichiometry of dissolving one mole of sp on route, with each metal
// extracted to the fraction x gives (nil: all the route dissolves, which on the selective route
// leaves oxides whole). Elements the route cannot dissolve stay in the residue whatever x says:
// graphite and polymers, Ti/Zr/Nb oxides, copper metal on the hydrochloric route, and iron of a
// phosphate on the selective route (as FePO4).
//
// The demand follows from oxidation states alone: a = Σ released·s + Σ retained·(s−r) H+ go to
// the anions (s: state in the solid, r: state in the residue), and e = Σ released·(s−z) +
// Σ retained·(s−r) electrons (z: charge in the liquor) come from the route's reductant (e > 0),
// from H+ as H2 for metals that are less noble than hydrogen, or go to the route's oxidant.
//
// It is one function of three passes (the metals, then the anions, then the redox partners)
// because each pass sums what the next needs (released and retained charge, electrons); split,
// the sums would have to travel between the parts.
func Dissolve(sp Species, route Route, x Extraction) (Reaction, error) {
	rx := Reaction{Species: sp, Route: route}
	if _, ok := routeNames[route]; !ok {
		return rx, fmt.Errorf("dissolve %s: invalid route", sp.Formula.text)
	}
	if sp.inert {
		for _, t := range sp.Formula.terms {
			rx.Residue = append(rx.Residue, Term{t.Symbol, t.Amount})
		}
		return rx, nil
	}
	lg, err := dissolveMetals(&rx, sp, route, x)
	if err != nil {
		return rx, err
	}
	rx.ElectronsMol = lg.eRed - lg.eOx - lg.eH2
	lg.anions(&rx, sp)
	if err := lg.redoxPartners(&rx, sp, route); err != nil {
		return rx, err
	}
	for _, t := range lg.residue {
		if t.Amount > 1e-15 {
			rx.Residue = append(rx.Residue, t)
		}
	}
	slices.SortFunc(rx.Residue, func(a, b Term) int { return strings.Compare(a.Symbol, b.Symbol) })
	return rx, nil
}

// ledger is what the metals of a dissolving species leave to balance: the electrons the
// reducible metals take (eRed), the oxidisable ones give to an oxidant (eOx) or to H+ as
// hydrogen (eH2), the positive charge left in the residue, and the residue itself.
type ledger struct {
	eRed, eOx, eH2, retainedCharge float64
	residue                        terms
	// phosphateRetainedWithFe is the iron (mol) that keeps its phosphate in the residue on the
	// selective route; liReleased the lithium (mol) the olivine releases there.
	phosphateRetainedWithFe, liReleased float64
}

// dissolveMetals sends each metal of the species to its state after the route, with the
// extraction given: the cations into rx, the electrons and the residue into the ledger.
func dissolveMetals(rx *Reaction, sp Species, route Route, x Extraction) (*ledger, error) {
	es := sp.Formula.Elements() // potentials from the table the formula was read with
	// With no extraction given the route dissolves all it dissolves: on the selective route
	// that leaves an oxide whole (the route's low acid and peroxide as oxidant barely attack
	// layered and spinel oxides; a caller that plans some attack gives its extraction).
	leftWhole := x == nil && route == SulfuricSelective && sp.anionic == "oxide" && !sp.metallic
	frac := func(sym string) (float64, error) {
		if leftWhole {
			return 0, nil
		}
		if x == nil {
			return 1, nil
		}
		v := x(sym)
		if !(v >= 0 && v <= 1) {
			return 0, fmt.Errorf("dissolve %s: extraction of %s is %v, want 0..1", sp.Formula.text, sym, v)
		}
		return v, nil
	}
	lg := &ledger{residue: make(terms, 0, len(sp.Formula.terms)+2)}
	// On the selective route iron is oxidised as lithium leaves the olivine (LiFePO4 -> FePO4 +
	// Li+ + e-): the share of iron oxidised follows the lithium released.
	if route == SulfuricSelective && sp.anionic == "phosphate" {
		xLi, err := frac("Li")
		if err != nil {
			return nil, err
		}
		lg.liReleased = sp.Formula.Moles("Li") * xLi
	}
	for _, t := range sp.Formula.terms {
		if !IsMetal(t.Symbol) {
			continue
		}
		s := sp.state[t.Symbol]
		z, r := aqueousCharge(t.Symbol), s
		xf, err := frac(t.Symbol)
		if err != nil {
			return nil, err
		}
		switch {
		case t.Symbol == "Ti" || t.Symbol == "Zr" || t.Symbol == "Nb":
			xf = 0 // refractory oxides stay in the residue
		case sp.metallic && t.Symbol == "Cu" && route == Hydrochloric:
			xf = 0
			rx.UndissolvedCopper = true
		case route == SulfuricSelective && t.Symbol == "Fe" && sp.anionic == "phosphate":
			xf, r = 0, s+math.Min(1, lg.liReleased/t.Amount)
			lg.phosphateRetainedWithFe = t.Amount
		}
		if z == 0 {
			return nil, fmt.Errorf("dissolve %s: no aqueous state for %s", sp.Formula.text, t.Symbol)
		}
		released, retained := t.Amount*xf, t.Amount*(1-xf)
		rx.HPlusMol += released*s + retained*(s-r)
		e := released*(s-z) + retained*(s-r)
		switch {
		case sp.metallic:
			el := es.Lookup(t.Symbol)
			if el.HasPotential && el.StandardPotential > 0 {
				lg.eOx += -e
			} else {
				lg.eH2 += -e
			}
		case e > 0:
			lg.eRed += e
		default:
			lg.eOx += -e
		}
		lg.retainedCharge += retained * r
		if released > 0 {
			rx.Cations = append(rx.Cations, Ion{t.Symbol, z, released})
		}
		if retained > 0 {
			lg.residue.add(t.Symbol, retained)
		}
	}
	return lg, nil
}

// anions balances the species' anions: the residue keeps enough of them to stay neutral
// (phosphate first, with iron on the selective route), the rest leave as H3PO4, H2O, CO2 or HF.
func (lg *ledger) anions(rx *Reaction, sp Species) {
	nP, nO, nF, nC := sp.Formula.Moles("P"), sp.Formula.Moles("O"), sp.Formula.Moles("F"), sp.Formula.Moles("C")
	residue, retainedCharge := &lg.residue, lg.retainedCharge
	switch sp.anionic {
	case "phosphate":
		keepP := math.Min(nP, math.Max(lg.phosphateRetainedWithFe, retainedCharge/3))
		rx.ResidueFePO4Mol = math.Min(lg.phosphateRetainedWithFe, lg.liReleased)
		rest := retainedCharge - 3*keepP
		keepO := 4*keepP + math.Max(rest, 0)/2
		residue.add("P", keepP)
		residue.add("O", keepO)
		rx.H3PO4Mol = nP - keepP
		rx.WaterMol = (nO - keepO) - 4*rx.H3PO4Mol
	case "carbonate":
		keepC := math.Min(nC, retainedCharge/2)
		residue.add("C", keepC)
		residue.add("O", 3*keepC)
		rx.CO2Mol = nC - keepC
		rx.WaterMol = (nO - 3*keepC) - 2*rx.CO2Mol
	case "oxide":
		keepO := retainedCharge / 2
		residue.add("O", keepO)
		rx.WaterMol = nO - keepO
	case "fluoride":
		residue.add("F", retainedCharge)
		rx.HFMol = nF - retainedCharge
	case "hexafluorophosphate":
		keepP := retainedCharge // one PF6- per unit charge
		residue.add("P", keepP)
		residue.add("F", 6*keepP)
		rx.H3PO4Mol = nP - keepP
		rx.HFMol = 6 * rx.H3PO4Mol
		rx.WaterMol = -4 * rx.H3PO4Mol
	}
}

// redoxPartners names who supplies or takes the electrons on the route (peroxide as reductant
// or oxidant, chloride to Cl2, H+ to H2), then the acid and the liquor's anions: the H+ taken up
// by the anions, by H2 evolution and by the oxidant, less what peroxide gives back as reductant.
func (lg *ledger) redoxPartners(rx *Reaction, sp Species, route Route) error {
	switch route {
	case SulfuricPeroxide, SulfuricSelective:
		rx.H2O2ReductantMol = lg.eRed / 2
		rx.O2Mol = lg.eRed / 2
		rx.H2O2OxidantMol = lg.eOx / 2
	case Hydrochloric:
		rx.Cl2Mol = lg.eRed / 2
		if lg.eOx > 0 {
			return fmt.Errorf("dissolve %s: the hydrochloric route has no oxidant for it", sp.Formula.text)
		}
	}
	rx.H2Mol = lg.eH2 / 2
	rx.WaterMol += 2 * rx.H2O2OxidantMol
	hPlus := rx.HPlusMol + lg.eH2 + lg.eOx
	if route != Hydrochloric {
		hPlus -= lg.eRed
	}
	rx.AcidMol = hPlus / route.AcidProtons()
	// The liquor's anions: all the sulfate added; chloride less what left as Cl2.
	rx.AnionMol = rx.AcidMol
	if route == Hydrochloric {
		rx.AnionMol = rx.AcidMol - 2*rx.Cl2Mol
	}
	return nil
}

// terms are the few elements of a residue: a slice searched in turn costs less than a map.
type terms []Term

// add adds n mol of sym.
func (ts *terms) add(sym string, n float64) {
	for i := range *ts {
		if (*ts)[i].Symbol == sym {
			(*ts)[i].Amount += n
			return
		}
	}
	*ts = append(*ts, Term{sym, n})
}

// aqueousCharge is the charge of each metal's ion in an acid leach liquor (0: no rule).
func aqueousCharge(symbol string) float64 {
	switch symbol {
	case "Li", "Na", "K":
		return 1
	case "Mg", "Ca", "Zn", "Mn", "Fe", "Co", "Ni", "Cu":
		return 2
	case "Al":
		return 3
	case "Ti", "Zr":
		return 4
	case "Nb":
		return 5
	}
	return 0
}

// LiquorCharge returns Σ z·c of the cations minus the anions' charge: zero when the liquor left
// at exact stoichiometry is neutral.
func (rx Reaction) LiquorCharge() float64 {
	q := 0.0
	for _, c := range rx.Cations {
		q += c.Charge * c.Mol
	}
	return q - rx.Route.AnionCharge()*rx.AnionMol
}

// PerKg converts per-mol amounts to per-kg-of-species: returns mol per kg for a per-mol amount.
func (rx Reaction) PerKg(molPerMol float64) float64 {
	return molPerMol * 1000 / rx.Species.Formula.MolarMass(rx.Species.Formula.Elements())
}
