package recover

import (
	"math"

	"blackmass/cathode"
)

// State is the solution between two stages of one sample.
//
// Mol holds every element dissolved, in mol: cations, the anions' elements (S as sulfate, Cl as
// chloride), P as phosphoric acid and F as HF, and C as carbonic acid (both neutral in the charge
// balance). Fe3Mol is the part of Mol["Fe"] that is Fe(III). FreeHMol is the strong acid's protons
// left; negative, it is alkalinity (OH- or carbonate and phosphate taken up as their acids).
type State struct {
	Mol      map[string]float64
	Fe3Mol   float64
	FreeHMol float64
	WaterKg  float64
	VolumeL  float64
}

// clone copies the state.
func (s *State) clone() *State {
	c := *s
	c.Mol = make(map[string]float64, len(s.Mol))
	for k, v := range s.Mol {
		c.Mol[k] = v
	}
	return &c
}

// ionCharge is an element's charge in the solution as this package writes it.
func ionCharge(el string) float64 {
	switch el {
	case "S":
		return -2
	case "Cl":
		return -1
	case "P", "F", "C":
		return 0
	}
	return cathode.AqueousCharge(el)
}

// Charge is the solution's net charge in mol of elementary charge: zero for a balanced solution.
func (s *State) Charge() float64 {
	q := s.FreeHMol + s.Fe3Mol
	for el, n := range s.Mol {
		q += ionCharge(el) * n
	}
	return q
}

// chargeScale is the sum of the magnitudes Charge adds, to judge its residual against.
func (s *State) chargeScale() float64 {
	q := math.Abs(s.FreeHMol) + s.Fe3Mol
	for el, n := range s.Mol {
		q += math.Abs(ionCharge(el) * n)
	}
	return q
}

// pH is the solution's pH by its free acid or alkalinity, activity taken as concentration.
func (s *State) pH() float64 {
	if s.VolumeL <= 0 {
		return 7
	}
	if s.FreeHMol > 0 {
		return -math.Log10(s.FreeHMol / s.VolumeL)
	}
	if s.FreeHMol < 0 {
		return 14 + math.Log10(-s.FreeHMol/s.VolumeL)
	}
	return 7
}

// freeHAt is the FreeHMol a solution of volume vL holds at pH.
func freeHAt(pH, vL float64) float64 {
	if pH <= 7 {
		return math.Pow(10, -pH) * vL
	}
	return -math.Pow(10, pH-14) * vL
}

// setWater changes the water and scales the volume with it.
func (s *State) setWater(kg float64) {
	if s.WaterKg > 0 {
		s.VolumeL *= kg / s.WaterKg
	}
	s.WaterKg = kg
}

// ledger is one sample's element balance: what came in (the liquor and every reagent) and
// where it went (products, cakes, gases, and the solution left at the end).
type ledger struct {
	in, out map[string]float64
}

func newLedger() *ledger { return &ledger{in: map[string]float64{}, out: map[string]float64{}} }

// balanced reports whether an element counts in the balance: H and O are carried by water,
// which the balance follows as mass instead.
func balanced(el string) bool { return el != "H" && el != "O" }

func (l *ledger) addIn(comp map[string]float64, mol float64) {
	for el, n := range comp {
		if balanced(el) {
			l.in[el] += n * mol
		}
	}
}

func (l *ledger) addOut(comp map[string]float64, mol float64) {
	for el, n := range comp {
		if balanced(el) {
			l.out[el] += n * mol
		}
	}
}
