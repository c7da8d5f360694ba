package cathode

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// RouteProfile is the stoichiometric demand of one kilogram of a material on one route, with
// complete dissolution of everything the route dissolves.
type RouteProfile struct {
	Route           Route
	Acid            string  // "H2SO4" or "HCl"
	AcidKgPerKg     float64 // 100 % acid
	H2O2KgPerKg     float64 // 100 % H2O2, reductant plus oxidant
	O2MolPerKg      float64
	Cl2MolPerKg     float64
	H2MolPerKg      float64
	ElectronsPerMol float64 // electrons the solid takes up per formula unit
	Equation        string  // the balanced equation in salt form
}

// Profile describes a material: composition, capacity and per-route demand.
type Profile struct {
	Entry                      *Entry
	MolarMassGPerMol           float64
	MassFractions              []Term // element mass fractions (0..1)
	TheoreticalCapacityMAhPerG float64
	TransitionMetalState       float64 // average oxidation state of Mn/Fe/Co/Ni/Cu; NaN if none
	States                     []Term  // each transition metal's oxidation state, in formula order
	Routes                     []RouteProfile
}

// Describe computes the Profile of e on every route.
func Describe(e *Entry) (Profile, error) {
	es := e.Formula.Elements()
	p := Profile{Entry: e, MolarMassGPerMol: e.MolarMassGPerMol(), MassFractions: e.Formula.MassFractions(es),
		TheoreticalCapacityMAhPerG: e.TheoreticalCapacityMAhPerG(), TransitionMetalState: math.NaN()}
	if s, ok := e.Species.TransitionMetalState(); ok {
		p.TransitionMetalState = s
		p.States = e.Species.TransitionMetalStates()
	}
	h2o2 := mustMass(es, "H2O2")
	for _, r := range Routes() {
		rx, err := Dissolve(e.Species, r, nil)
		if err != nil {
			return p, err
		}
		p.Routes = append(p.Routes, RouteProfile{
			Route: r, Acid: r.Acid(),
			AcidKgPerKg:     rx.PerKg(rx.AcidMol) * mustMass(es, r.Acid()) / 1000,
			H2O2KgPerKg:     rx.PerKg(rx.H2O2ReductantMol+rx.H2O2OxidantMol) * h2o2 / 1000,
			O2MolPerKg:      rx.PerKg(rx.O2Mol),
			Cl2MolPerKg:     rx.PerKg(rx.Cl2Mol),
			H2MolPerKg:      rx.PerKg(rx.H2Mol),
			ElectronsPerMol: rx.ElectronsMol,
			Equation:        rx.Equation(),
		})
	}
	return p, nil
}

// MolarMassOf returns the molar mass of a formula known to parse (reagents, gases), in g/mol.
// It panics on a bad formula: callers pass constants.
func MolarMassOf(formula string) float64 { return mustMass(DefaultElements(), formula) }

func mustMass(es *Elements, formula string) float64 {
	f, err := es.ParseFormula(formula)
	if err != nil {
		panic("cathode: " + err.Error())
	}
	return f.MolarMass(es)
}

// Equation writes the reaction in salt form with the smallest whole multiplier (up to 4) that
// makes every coefficient whole, e.g. "2 LiCoO2 + 3 H2SO4 + H2O2 → Li2SO4 + 2 CoSO4 + 4 H2O + O2".
// Partial extraction leaves the undissolved elements as "residue".
func (rx Reaction) Equation() string {
	type item struct {
		n float64
		s string
	}
	var left, right []item
	left = append(left, item{1, rx.Species.Formula.String()})
	if rx.Species.inert {
		return rx.Species.Formula.String() + " → no reaction (inert)"
	}
	left = append(left, item{rx.AcidMol, rx.Route.Acid()})
	left = append(left, item{rx.H2O2ReductantMol + rx.H2O2OxidantMol, "H2O2"})
	if rx.WaterMol < 0 {
		left = append(left, item{-rx.WaterMol, "H2O"})
	}
	for _, c := range rx.Cations {
		right = append(right, item{c.Mol / saltCations(c.Charge, rx.Route), saltFormula(c.Symbol, c.Charge, rx.Route)})
	}
	if rx.ResidueFePO4Mol > 0 {
		right = append(right, item{rx.ResidueFePO4Mol, "FePO4↓"})
	}
	right = append(right, item{rx.H3PO4Mol, "H3PO4"}, item{rx.HFMol, "HF"}, item{rx.CO2Mol, "CO2↑"})
	if rx.WaterMol > 0 {
		right = append(right, item{rx.WaterMol, "H2O"})
	}
	right = append(right, item{rx.O2Mol, "O2↑"}, item{rx.Cl2Mol, "Cl2↑"}, item{rx.H2Mol, "H2↑"})
	if rx.ResidueFePO4Mol == 0 && len(rx.Residue) > 0 {
		right = append(right, item{1, "residue"})
	}
	k := 1.0
	for m := 1.0; m <= 4; m++ {
		whole := true
		for _, it := range append(append([]item{}, left...), right...) {
			if v := it.n * m; math.Abs(v-math.Round(v)) > 1e-9 {
				whole = false
				break
			}
		}
		if whole {
			k = m
			break
		}
	}
	side := func(items []item) string {
		var parts []string
		for _, it := range items {
			n := it.n * k
			if n < 1e-12 {
				continue
			}
			if math.Abs(n-1) < 1e-12 {
				parts = append(parts, it.s)
			} else {
				parts = append(parts, strconv.FormatFloat(roundTo(n, 4), 'f', -1, 64)+" "+it.s)
			}
		}
		return strings.Join(parts, " + ")
	}
	return side(left) + " → " + side(right)
}

func roundTo(v float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(v*p) / p
}

// saltCations is the number of cations in the salt of a z-valent cation (Li2SO4: 2; CoSO4: 1).
func saltCations(z float64, r Route) float64 {
	if r == Hydrochloric || z == 2 {
		return 1
	}
	if z == 1 || z == 3 {
		return 2
	}
	return 1
}

func saltFormula(sym string, z float64, r Route) string {
	if r == Hydrochloric {
		if z == 1 {
			return sym + "Cl"
		}
		return fmt.Sprintf("%sCl%g", sym, z)
	}
	switch z {
	case 1:
		return sym + "2SO4"
	case 2:
		return sym + "SO4"
	case 3:
		return sym + "2(SO4)3"
	}
	return fmt.Sprintf("%s(SO4)%g", sym, z/2)
}
