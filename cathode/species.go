package cathode

import (
	"fmt"
	"math"
)

// maxAverageTMState bounds the average transition-metal oxidation state a cathode species may
// imply: fully delithiated layered oxides reach +4, and nothing in a lithium-ion cathode goes
// beyond +4.5 (common practice).
const maxAverageTMState = 4.5

// fixedState holds the oxidation states blackmass assumes for elements other than the transition
// metals. The transition metals of [variableState] share whatever charge is left.
var fixedState = map[string]float64{
	"H": 1, "Li": 1, "Na": 1, "K": 1, "Mg": 2, "Ca": 2, "Zn": 2, "Al": 3, "B": 3,
	"Ti": 4, "Zr": 4, "Nb": 5, "O": -2, "F": -1,
}

// variableState lists the elements whose oxidation state is set by charge balance.
var variableState = map[string]bool{"Mn": true, "Fe": true, "Co": true, "Ni": true, "Cu": true}

// Species is a solid compound in the black mass with the oxidation state of every element.
// Transition metals share the charge the other elements leave them (see [NewSpecies] for how).
// Their sum sets the leach's whole demand for acid and electrons; which metal carries which
// state sets what dissolves when the electrons run short: Ni(II) needs none, Mn(IV) two.
type Species struct {
	Formula  Formula
	state    map[string]float64
	inert    bool   // graphite, carbon black, polymers: nothing in them dissolves
	anionic  string // how the non-metals leave: "oxide", "phosphate", "carbonate", "hexafluorophosphate", "fluoride", "" (metal)
	metallic bool   // a single metallic element in the zero state
}

// IsMetal reports whether symbol is a metal in this package's bookkeeping.
func IsMetal(symbol string) bool {
	switch symbol {
	case "H", "B", "C", "N", "O", "F", "Si", "P", "S", "Cl":
		return false
	}
	return true
}

// NewSpecies assigns oxidation states to the elements of f. The transition metals share the
// charge left by the others: in an oxide holding nickel with cobalt and/or manganese and no other
// transition metal, Mn takes +4 and Co +3 and nickel the rest, as long as that leaves nickel
// between +2 and +4 (the states of layered NMC and of the LiNi0.5Mn1.5O4 spinel established by
// X-ray absorption: Ni(II) and Mn(IV) in NMC111, Ni between +2 and +3 in the nickel-rich grades;
// Koyama et al., J. Power Sources 119-121 (2003) 644, from memory); otherwise every transition
// metal takes the average. It returns an error if the charges cannot balance ("LiAlO" has no
// transition metal to take up the +2 left over), if the transition metals would end outside
// 0..+4.5, or if f holds an element or anion mix the leach model has no rule for.
func NewSpecies(f Formula) (Species, error) {
	sp := Species{Formula: f, state: map[string]float64{}}
	terms := f.terms
	if len(terms) == 0 {
		return sp, fmt.Errorf("species: empty formula")
	}
	has := func(s string) bool { return f.Moles(s) > 0 }
	metals := 0
	for _, t := range terms {
		if IsMetal(t.Symbol) {
			metals++
		}
	}
	switch {
	case len(terms) == 1:
		sp.state[terms[0].Symbol] = 0
		if terms[0].Symbol == "C" || terms[0].Symbol == "Si" {
			sp.inert = true
		} else if IsMetal(terms[0].Symbol) {
			sp.metallic = true
		} else {
			return sp, fmt.Errorf("species %s: a lone non-metal other than C or Si has no leach rule", f.text)
		}
		return sp, nil
	case has("C") && metals == 0:
		// Polymers (PVDF, PE, PP, carbonates of the electrolyte): inert in the leach.
		sp.inert = true
		return sp, nil
	}
	for _, t := range terms {
		switch t.Symbol {
		case "P", "C", "S", "Cl", "N", "Si":
			continue
		}
		if !IsMetal(t.Symbol) || !variableState[t.Symbol] {
			if _, ok := fixedState[t.Symbol]; !ok {
				return sp, fmt.Errorf("species %s: no oxidation-state rule for %s", f.text, t.Symbol)
			}
		}
	}
	switch {
	case has("P") && has("O"):
		sp.anionic = "phosphate"
		sp.state["P"] = 5
	case has("P") && has("F") && !has("O"):
		sp.anionic = "hexafluorophosphate"
		sp.state["P"] = 5
	case has("C") && has("O"):
		sp.anionic = "carbonate"
		sp.state["C"] = 4
	case has("O"):
		sp.anionic = "oxide"
	case has("F"):
		sp.anionic = "fluoride"
	default:
		return sp, fmt.Errorf("species %s: no oxide, phosphate, carbonate or fluoride anion to balance the metals", f.text)
	}
	for _, s := range []string{"S", "Cl", "N", "Si"} {
		if has(s) {
			return sp, fmt.Errorf("species %s: no leach rule for %s in a compound", f.text, s)
		}
	}
	if has("C") && sp.anionic != "carbonate" || has("P") && sp.anionic != "phosphate" && sp.anionic != "hexafluorophosphate" {
		return sp, fmt.Errorf("species %s: mixed anions are not modelled", f.text)
	}
	fixed, varMoles := 0.0, 0.0
	for _, t := range terms {
		if variableState[t.Symbol] {
			varMoles += t.Amount
			continue
		}
		s, ok := fixedState[t.Symbol]
		if !ok {
			s = sp.state[t.Symbol] // P, C set above
		}
		sp.state[t.Symbol] = s
		fixed += s * t.Amount
	}
	if varMoles == 0 {
		if math.Abs(fixed) > 1e-9 {
			return sp, fmt.Errorf("species %s: charges do not balance (net %+.4g per formula unit)", f.text, fixed)
		}
		return sp, nil
	}
	avg := -fixed / varMoles
	if avg < 0 || avg > maxAverageTMState {
		return sp, fmt.Errorf("species %s: the transition metals would average %+.3g, outside 0..+%g", f.text, avg, maxAverageTMState)
	}
	if sp.anionic == "oxide" && nickelTakesTheRest(sp, f, -fixed) {
		return sp, nil
	}
	for _, t := range terms {
		if variableState[t.Symbol] {
			sp.state[t.Symbol] = avg
		}
	}
	return sp, nil
}

// Preferred states of Mn and Co in an oxide that holds nickel (see NewSpecies).
const (
	oxideMnState = 4
	oxideCoState = 3
	minNiState   = 2
	maxNiState   = 4
)

// nickelTakesTheRest gives Mn +4 and Co +3 and nickel the charge left (tmCharge in all), if f's
// transition metals are nickel with Mn and/or Co only and nickel lands between +2 and +4. It
// reports whether it did.
func nickelTakesTheRest(sp Species, f Formula, tmCharge float64) bool {
	ni, mn, co := f.Moles("Ni"), f.Moles("Mn"), f.Moles("Co")
	if ni == 0 || mn+co == 0 {
		return false
	}
	for _, t := range f.terms {
		if variableState[t.Symbol] && t.Symbol != "Ni" && t.Symbol != "Mn" && t.Symbol != "Co" {
			return false
		}
	}
	niState := (tmCharge - oxideMnState*mn - oxideCoState*co) / ni
	if niState < minNiState-1e-9 || niState > maxNiState+1e-9 {
		return false
	}
	sp.state["Ni"] = niState
	if mn > 0 {
		sp.state["Mn"] = oxideMnState
	}
	if co > 0 {
		sp.state["Co"] = oxideCoState
	}
	return true
}

// State returns the oxidation state of symbol in the solid.
func (sp Species) State(symbol string) float64 { return sp.state[symbol] }

// Inert reports whether nothing in the species dissolves (graphite, polymers).
func (sp Species) Inert() bool { return sp.inert }

// TransitionMetalStates returns each transition metal's oxidation state, in formula order.
func (sp Species) TransitionMetalStates() []Term {
	var out []Term
	for _, t := range sp.Formula.terms {
		if variableState[t.Symbol] {
			out = append(out, Term{Symbol: t.Symbol, Amount: sp.state[t.Symbol]})
		}
	}
	return out
}

// TransitionMetalState returns the mole-weighted average oxidation state of the transition
// metals, and false if the species has none.
func (sp Species) TransitionMetalState() (float64, bool) {
	var sum, n float64
	for _, st := range sp.TransitionMetalStates() {
		mol := sp.Formula.Moles(st.Symbol)
		sum += st.Amount * mol
		n += mol
	}
	if n == 0 {
		return 0, false
	}
	return sum / n, true
}

// Anion names how the species' non-metals leave in an acid: "oxide", "phosphate", "carbonate",
// "hexafluorophosphate", "fluoride", or "" for metals and inert species.
func (sp Species) Anion() string { return sp.anionic }

// Metallic reports whether the species is a single metal in the zero state (foil, casing).
func (sp Species) Metallic() bool { return sp.metallic }

// AqueousCharge returns the charge of a metal's ion in an acid leach liquor in its usual lower
// state (Fe2+, Cu2+), or 0 when there is no rule for the metal.
func AqueousCharge(symbol string) float64 { return aqueousCharge(symbol) }
