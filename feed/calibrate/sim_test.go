package calibrate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"time"
)

// The simulation draws lots from a "true" model that differs from the estimate by known
// factors. Its element shares are round illustrative numbers, not the model's: the tests check
// the statistics (recovery within the stated uncertainty, honest coverage), not the chemistry.

// simFamily is a chemistry family in the simulation: kg of each element per kg of black mass
// and the estimate's relative spread.
type simFamily struct {
	name  string
	share map[string]float64
	rel   float64
}

var simFamilies = []simFamily{
	{"LCO", map[string]float64{"Co": 0.30, "Li": 0.035}, 0.12},
	{"NMC622", map[string]float64{"Ni": 0.20, "Co": 0.07, "Mn": 0.06, "Li": 0.04}, 0.15},
	{"NMC811", map[string]float64{"Ni": 0.27, "Co": 0.035, "Mn": 0.03, "Li": 0.04}, 0.18},
	{"LFP", map[string]float64{"Li": 0.025}, 0.10},
}

var simFormats = []string{"pouch", "cylindrical", "pack"}

var simElements = []string{"Co", "Li", "Mn", "Ni"}

// simTruth is the true factor of an element from a family and format.
func simTruth(element, family, format string) float64 {
	switch {
	case element == "Co":
		return 0.8
	case element == "Li":
		return 0.9
	case element == "Ni" && family == "NMC811" && format == "pouch":
		return 1.15
	}
	return 1
}

// simPart is one part of a simulated lot.
type simPart struct {
	fam    simFamily
	format string
	bmKg   float64
}

// simLot is a simulated lot: its parts, and per element the true kg and the assay.
type simLot struct {
	lot    Lot
	trueKg map[string]float64
	parts  []simPart
}

// newSimLot draws a lot of 1-3 parts of random family, format and black mass; per element the
// true kg is the estimate times the true factor times a lot-level scatter of the estimate's own
// spread; the assay adds 3 % relative noise and reports it.
func newSimLot(r *rand.Rand, id string) simLot {
	s := simLot{lot: Lot{ID: id}, trueKg: map[string]float64{}}
	for range 1 + r.IntN(3) {
		s.parts = append(s.parts, simPart{fam: simFamilies[r.IntN(len(simFamilies))], format: simFormats[r.IntN(len(simFormats))],
			bmKg: 50 * math.Exp(2*r.Float64())})
	}
	for _, el := range simElements {
		m := Measure{Element: el}
		z := r.NormFloat64()
		truth := 0.0
		for _, p := range s.parts {
			kg := p.bmKg * p.fam.share[el]
			if kg == 0 {
				continue
			}
			m.Parts = append(m.Parts, Part{Family: p.fam.name, Format: p.format, Kg: kg, SDKg: p.fam.rel * kg})
			truth += simTruth(el, p.fam.name, p.format) * kg * math.Max(1+p.fam.rel*z, 0.01)
		}
		if len(m.Parts) == 0 {
			continue
		}
		s.trueKg[el] = truth
		m.MeasuredKg = truth * (1 + 0.03*r.NormFloat64())
		m.MeasuredSDKg = 0.03 * m.MeasuredKg
		s.lot.Measures = append(s.lot.Measures, m)
	}
	return s
}

func simLots(seed uint64, n int, prefix string) []simLot {
	r := rand.New(rand.NewPCG(seed, 7))
	out := make([]simLot, n)
	for i := range out {
		out[i] = newSimLot(r, fmt.Sprintf("%s-%04d", prefix, i+1))
	}
	return out
}

func lotsOf(s []simLot) []Lot {
	out := make([]Lot, len(s))
	for i := range s {
		out[i] = s[i].lot
	}
	return out
}

var simTime = time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC)

// simTarget is what a fitted factor should recover: the true factor of its cell, averaged over
// the kg of the parts it covers in the lots used (a pooled family factor covers several formats).
func simTarget(c *Calibration, lots []simLot, element string, fi int) float64 {
	e := c.element(element)
	used := map[string]bool{}
	for _, id := range c.Lots {
		used[id] = true
	}
	num, den := 0.0, 0.0
	for _, l := range lots {
		if !used[l.lot.ID] {
			continue
		}
		for _, m := range l.lot.Measures {
			if m.Element != element {
				continue
			}
			for _, p := range m.Parts {
				if set, i := e.lookup(p.Family, p.Format); set == mainSet && i == fi {
					num += p.Kg * simTruth(element, p.Family, p.Format)
					den += p.Kg
				}
			}
		}
	}
	return num / den
}

// simCoverage returns, per element, the share of held-out lots whose true kg falls within the
// P10-P90 of a Monte Carlo of samples draws: the estimate's lot-level spread, times the
// calibration's factors when cal is not nil.
func simCoverage(cal *Calibration, held []simLot, samples int, seed uint64) map[string]float64 {
	in, n := map[string]int{}, map[string]int{}
	r := rand.New(rand.NewPCG(seed, 11))
	kg := make([]float64, samples)
	stream := uint64(0)
	for _, l := range held {
		for _, m := range l.lot.Measures {
			keys := make([]Key, len(m.Parts))
			for i, p := range m.Parts {
				keys[i] = Key{m.Element, p.Family, p.Format}
			}
			var f [][]float64
			if cal != nil {
				stream++
				f = cal.Sampler(keys).Draw(rand.NewPCG(seed, stream), samples)
			}
			for s := range samples {
				z := r.NormFloat64()
				kg[s] = 0
				for i, p := range m.Parts {
					v := p.Kg * math.Max(1+z*p.SDKg/p.Kg, 0)
					if f != nil {
						v *= f[i][s]
					}
					kg[s] += v
				}
			}
			p10, p90 := quantiles(kg)
			n[m.Element]++
			if t := l.trueKg[m.Element]; t >= p10 && t <= p90 {
				in[m.Element]++
			}
		}
	}
	out := map[string]float64{}
	for el := range n {
		out[el] = float64(in[el]) / float64(n[el])
	}
	return out
}
