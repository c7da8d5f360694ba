package leach

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// Conc is an element's concentration in the liquor.
type Conc struct {
	GPerL   dist.Stat `json:"g_per_l"`
	MolPerL dist.Stat `json:"mol_per_l"`
}

// Liquor is the expected leach liquor.
type Liquor struct {
	VolumeL        dist.Stat       `json:"volume_l"`
	Elements       map[string]Conc `json:"elements"`
	Anion          string          `json:"anion"`
	AnionMolPerL   dist.Stat       `json:"anion_mol_per_l"`
	ChargeResidual float64         `json:"charge_balance_max_relative_residual"`
	// WaterKg is the liquor's water: make-up water, the reagents' water and the reactions'.
	WaterKg dist.Stat `json:"water_kg"`
	// ExtractionReached is each metal's share of the feed that dissolved with the dose given.
	ExtractionReached map[string]dist.Stat `json:"extraction_reached"`
	// Fe3GPerL is the iron oxidised to Fe(III) by peroxide left after the reduction.
	Fe3GPerL *dist.Stat `json:"fe3_g_per_l,omitempty"`
}

// LiquorSamples is the leach liquor of every Monte Carlo sample, for the stages after the leach
// (recovery) to take the same draws on. Element masses are what dissolved; slices are [sample].
type LiquorSamples struct {
	VolumeL   []float64
	WaterKg   []float64            // the liquor's water (Liquor.WaterKg)
	ElementKg map[string][]float64 // element -> kg dissolved, for every element some sample holds
	// FreeAcidMol is the acid left unspent, in mol of the route's acid (H2SO4 or HCl).
	FreeAcidMol []float64
	// Fe2Kg and Fe3Kg split the dissolved iron into Fe(II) and Fe(III); they add up to ElementKg["Fe"].
	Fe2Kg, Fe3Kg []float64
	Anion        string    // SO4 or Cl
	AnionMol     []float64 // mol of the anion in the liquor
}

// liquorSamples sets the per-sample liquor.
func (p *leachPlanner) liquorSamples(lr *Report) {
	es := p.lt.elements
	ls := &LiquorSamples{VolumeL: slices.Clone(p.vol), WaterKg: slices.Clone(p.waterKg), ElementKg: map[string][]float64{}, Anion: p.route.Anion(),
		FreeAcidMol: col(p.n, func(i int) float64 { return p.res[i].freeH / p.route.AcidProtons() }),
		AnionMol:    col(p.n, func(i int) float64 { return p.res[i].anionMol })}
	for k, e := range leachElements {
		kg := col(p.n, func(i int) float64 { return p.res[i].liquorMol[k] * es.Weight(e) / 1000 })
		if slices.Max(kg) > 0 {
			ls.ElementKg[e] = kg
		}
	}
	ls.Fe3Kg = col(p.n, func(i int) float64 { return p.res[i].fe3Mol * es.Weight("Fe") / 1000 })
	ls.Fe2Kg = col(p.n, func(i int) float64 {
		return (p.res[i].liquorMol[elementIndex("Fe")] - p.res[i].fe3Mol) * es.Weight("Fe") / 1000
	})
	lr.LiquorSamples = ls
}

// report summarises the samples: the reagents and their cost, the gases, the liquor, then the
// limits, saturation, by-products and warnings.
func (p *leachPlanner) report() (*Report, error) {
	lr := &Report{Route: p.route.String(), Settings: p.opt, Gases: map[string]Gas{}, Saturation: map[string]dist.Stat{},
		SaturationAtC: map[string]float64{}, GasReference: "ideal gas at 0 °C and 101.325 kPa (22.414 L/mol)",
		Safety: leachSafety[p.route], Extraction: p.ranges}
	// The reagents, the gases and the liquor read the samples and fill fields of their own:
	// they are summarised side by side.
	var acidR Reagent
	var redR *Reagent
	dist.Each(3, func(k int) {
		switch k {
		case 0:
			acidR, redR = p.reagents(lr)
		case 1:
			p.gases(lr)
		default:
			p.liquor(lr)
		}
	})
	p.liquorSamples(lr)
	p.limits(lr)
	p.saturation(lr)
	p.byproducts(lr)
	p.warnings(lr, acidR, redR)
	return lr, nil
}

// chargeResidual is the largest relative residual of the liquor's charge balance over the
// samples, reported to 1e-12: below that it is floating-point noise, which would make reports
// differ between machines.
func (p *leachPlanner) chargeResidual() float64 {
	res := 0.0
	for _, r := range p.res {
		pos := r.freeH + r.fe3Mol
		for k, sym := range leachElements {
			pos += cathode.AqueousCharge(sym) * r.liquorMol[k]
		}
		neg := r.anionMol * p.route.AnionCharge()
		if neg > 0 {
			res = math.Max(res, math.Abs(pos-neg)/neg)
		}
	}
	return dist.Round(res, 12)
}

// liquor sets the liquor's volume, concentrations, extraction reached and free acid.
func (p *leachPlanner) liquor(lr *Report) {
	es := p.lt.elements
	perL := func(f func(i int) float64) []float64 { return col(p.n, func(i int) float64 { return f(i) / p.vol[i] }) }
	lr.Liquor = Liquor{VolumeL: dist.Summarise(p.vol), Elements: map[string]Conc{}, Anion: p.route.Anion(),
		ChargeResidual: p.chargeResidual(), ExtractionReached: map[string]dist.Stat{}}
	for k, e := range leachElements {
		mol := col(p.n, func(i int) float64 { return p.res[i].liquorMol[k] })
		if slices.Max(mol) <= 0 {
			continue
		}
		lr.Liquor.Elements[e] = Conc{GPerL: dist.Summarise(perL(func(i int) float64 { return mol[i] * es.Weight(e) })),
			MolPerL: dist.Summarise(perL(func(i int) float64 { return mol[i] }))}
		if e != "Na" && e != "P" && e != "F" {
			lr.Liquor.ExtractionReached[e] = dist.Summarise(col(p.n, func(i int) float64 {
				if f := p.feedMol(i, k); f > 0 {
					return mol[i] / f
				}
				return 0
			}))
		}
	}
	if fe3 := col(p.n, func(i int) float64 { return p.res[i].fe3Mol }); slices.Max(fe3) > 0 {
		st := dist.Summarise(perL(func(i int) float64 { return fe3[i] * es.Weight("Fe") }))
		lr.Liquor.Fe3GPerL = &st
	}
	lr.Liquor.AnionMolPerL = dist.Summarise(perL(func(i int) float64 { return p.res[i].anionMol }))
	lr.Liquor.WaterKg = dist.Summarise(p.waterKg)
	lr.FreeAcidMolPerL = dist.Summarise(perL(func(i int) float64 { return p.res[i].freeH / p.route.AcidProtons() }))
}

// salt is a liquor salt and its solubility in water against temperature.
type salt struct {
	name, cation, anion string
	// curve is (temperature °C, g per 100 g water), sorted by temperature.
	curve [][2]float64
}

// solubilityPrefix starts solubility.csv's columns, g_per_100g_water_<T>C.
const solubilityPrefix = "g_per_100g_water_"

// gPer100gAt is the solubility at tC, interpolated linearly and held flat beyond the curve's ends.
func (sl salt) gPer100gAt(tC float64) float64 {
	c := sl.curve
	if tC <= c[0][0] {
		return c[0][1]
	}
	for i := 1; i < len(c); i++ {
		if tC <= c[i][0] {
			f := (tC - c[i-1][0]) / (c[i][0] - c[i-1][0])
			return c[i-1][1] + f*(c[i][1]-c[i-1][1])
		}
	}
	return c[len(c)-1][1]
}

// leastSoluble is the least solubility over [loC, hiC] and the temperature it falls at. On a
// piecewise-linear curve the least lies at an end of the interval or at a point of the curve.
func (sl salt) leastSoluble(loC, hiC float64) (gPer100g, atC float64) {
	gPer100g, atC = sl.gPer100gAt(loC), loC
	try := func(t float64) {
		if g := sl.gPer100gAt(t); g < gPer100g {
			gPer100g, atC = g, t
		}
	}
	for _, pt := range sl.curve {
		if pt[0] > loC && pt[0] < hiC {
			try(pt[0])
		}
	}
	try(hiC)
	return gPer100g, atC
}

// anionWord names a liquor anion in prose.
var anionWord = map[string]string{"SO4": "sulfate", "Cl": "chloride"}

// filteredLiquorC is the temperature a filtered liquor cools to in the plant (common practice).
const filteredLiquorC = 20.0

// saturation sets each salt's ratio to its solubility.
func (p *leachPlanner) saturation(lr *Report) {
	es := p.lt.elements
	for _, sl := range p.lt.salts {
		k := elementIndex(sl.cation)
		if k < 0 || sl.anion != p.route.Anion() {
			continue
		}
		f, _ := es.ParseFormula(sl.name)
		perSalt := f.Moles(sl.cation)
		gPer100g, atC := sl.leastSoluble(min(filteredLiquorC, p.opt.TemperatureC), max(filteredLiquorC, p.opt.TemperatureC))
		ratio := col(p.n, func(i int) float64 {
			mol := p.res[i].liquorMol[k]
			if sl.cation == "Fe" {
				fe3 := p.res[i].fe3Mol
				if strings.Contains(sl.name, "(SO4)3") || strings.Contains(sl.name, "Cl3") {
					mol = fe3
				} else {
					mol -= fe3
				}
			}
			return mol * f.MolarMass(es) / perSalt / (gPer100g * 10) / p.waterKg[i]
		})
		if slices.Max(ratio) <= 0 {
			continue
		}
		st := dist.Summarise(ratio)
		lr.Saturation[sl.name] = st
		lr.SaturationAtC[sl.name] = atC
		if st.P90 > saturationWarn {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s reaches %.0f %% of its solubility in water at %g °C, "+
				"the least between the filtered liquor's %g °C and the leach's %g °C (P90; single-salt data, the "+
				"shared %s and the acid lower it further): lower the pulp density or expect crystallisation",
				sl.name, 100*st.P90, atC, filteredLiquorC, p.opt.TemperatureC, anionWord[sl.anion]))
		}
	}
}

// saturationWarn is the share of a salt's single-salt water solubility at which the plan warns:
// well below 1, because the other sulfates and the free acid lower solubility (common-ion
// effect) (common practice).
const saturationWarn = 0.6

// waterDensityKgPerL is liquid water's density at 20 °C, 0.998 21 g/mL (CRC Handbook of Chemistry
// and Physics, Properties of water in the range 0-100 °C).
const waterDensityKgPerL = 0.99821

// liquorWaterKg is the water of sample i's liquor: the make-up water, the water of the reagents as
// bought (the part that is not acid or reductant), and the water the reactions form net of what
// they take up. Solubilities are per kg of water, so saturation divides by this, not by litres.
func (p *leachPlanner) liquorWaterKg(i int) float64 {
	w := p.water[i]*waterDensityKgPerL + p.acidDose[i]*p.acidM/1000*(100/p.opt.AcidWtPct-1)
	if p.red != nil {
		w += p.redDose[i] * p.red.MolarMassGMol / 1000 * (100/redStrength(p.red, p.opt) - 1)
	}
	w += p.res[i].waterMol * p.waterG / 1000
	// A leach of neat reagents on bare metal can end with no water to speak of: hold the ratio
	// finite (it then reads as far past saturation).
	return math.Max(w, minLiquorWaterKg)
}

// minLiquorWaterKg keeps the saturation ratio finite when a liquor has no water.
const minLiquorWaterKg = 1e-9
