package leach

import (
	"fmt"
	"slices"

	"blackmass/feed/dist"
)

// MolarVolumeSTPLPerMol is the ideal-gas molar volume at 0 °C and 101.325 kPa (CODATA: 22.413 969 L/mol).
const MolarVolumeSTPLPerMol = 22.413969

// Scrubber is the caustic to absorb the chlorine of the hydrochloric route.
type Scrubber struct {
	Reagent  string    `json:"reagent"`
	KgPure   dist.Stat `json:"kg_pure"`
	Kg       dist.Stat `json:"kg"`
	Litres   dist.Stat `json:"litres"`
	Reaction string    `json:"reaction"`
}

// Gas is a gas evolved.
type Gas struct {
	Mol   dist.Stat `json:"mol"`
	M3STP dist.Stat `json:"m3_stp"`
}

// Published enthalpies for the cautions: ΔfH° of H2O2(aq, unionised) −191.17 kJ/mol and of
// H2O(l) −285.83 kJ/mol (NBS Tables of Chemical Thermodynamic Properties, J. Phys. Chem. Ref.
// Data 11 (1982) Suppl. 2; water: CODATA Key Values 1989), so H2O2(aq) → H2O(l) + ½O2 releases
// 94.66 kJ/mol. The liquor's heat capacity is taken as water's, 4.18 J/(g·K) (common practice).
const (
	peroxideDecompKJPerMol = 285.83 - 191.17
	liquorCpJPerGK         = 4.18
	naohPerCl2             = 2 // Cl2 + 2 NaOH → NaCl + NaOCl + H2O
	// scrubberNaOHWtPct is the caustic strength the scrubber is quoted in (the common
	// commercial 50 % solution).
	scrubberNaOHWtPct = 50
	// copperLeftWarnBelow is the copper extraction (P50) below which the hydrochloric route
	// warns that copper stays in the residue.
	copperLeftWarnBelow = 0.5
)

// byproducts adds the caustic to scrub the chlorine and the heat of peroxide decomposition.
func (p *leachPlanner) byproducts(lr *Report) {
	if g, ok := lr.Gases["Cl2"]; ok && g.Mol.P90 > 0 {
		rho, err := p.lt.Density("NaOH", scrubberNaOHWtPct)
		if err == nil {
			naohG := p.lt.molarMassG("NaOH")
			kg := col(p.n, func(i int) float64 { return p.res[i].cl2 * naohPerCl2 * naohG / 1000 })
			w := scrubberNaOHWtPct / 100.0
			lr.Scrubber = &Scrubber{Reagent: fmt.Sprintf("NaOH %d %%", scrubberNaOHWtPct), KgPure: dist.Summarise(kg),
				Kg:       dist.Summarise(col(p.n, func(i int) float64 { return kg[i] / w })),
				Litres:   dist.Summarise(col(p.n, func(i int) float64 { return kg[i] / w / rho })),
				Reaction: "Cl2 + 2 NaOH → NaCl + NaOCl + H2O (keep the scrubber caustic in excess; hypochlorite is an oxidant)"}
		}
	}
	if p.red != nil && p.red.Oxidant {
		rise := col(p.n, func(i int) float64 {
			q := (p.res[i].redDecomp + p.res[i].redUsed) * peroxideDecompKJPerMol * 1000 // J, as if all peroxide decomposed
			return q / (p.vol[i] * 1000 * liquorCpJPerGK)
		})
		st := dist.Summarise(rise)
		lr.PeroxideHeatRiseK = &st
		if st.P90 > 10 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("peroxide decomposition can heat the liquor by up to "+
				"%.0f K (P90, adiabatic, 94.7 kJ/mol H2O2): dose it gradually with cooling", st.P90))
		}
	}
}

// formatGasVolume prints a gas volume with a unit that suits its size.
func formatGasVolume(m3 float64) string {
	switch {
	case m3 >= 1:
		return fmt.Sprintf("%.3g m³", m3)
	case m3 >= 1e-3:
		return fmt.Sprintf("%.3g L", m3*1000)
	}
	return fmt.Sprintf("%.3g mL", m3*1e6)
}

// H2WorstCase names the gas-table row of the hydrogen the feed's metals give if they meet the
// acid before the oxides (the plan's H2 row is what evolves once they have reduced the oxides).
const H2WorstCase = "H2 (if metals meet the acid first)"

// gases sets the gas table: every gas some sample evolves, and the hydrogen's worst case.
func (p *leachPlanner) gases(lr *Report) {
	gases := map[string]func(r sampleResult) float64{
		"H2": func(r sampleResult) float64 { return r.h2 }, "O2": func(r sampleResult) float64 { return r.o2 },
		"Cl2": func(r sampleResult) float64 { return r.cl2 }, "CO2": func(r sampleResult) float64 { return r.co2 },
	}
	// The hydrogen the metals of the feed could give if they met the acid before the oxides: the
	// warning's worst case, beside what the plan evolves, so the table holds both.
	if p.route.AcidProtons() > 0 {
		gases[H2WorstCase] = func(r sampleResult) float64 { return r.h2Potential }
	}
	worst := slices.Max(col(p.n, func(i int) float64 { return p.res[i].h2Potential }))
	for name, g := range gases {
		mol := col(p.n, func(i int) float64 { return g(p.res[i]) })
		// The plan's H2 row stays, zero or not, wherever the warning names hydrogen.
		if slices.Max(mol) > 0 || (name == "H2" && worst > 0) {
			lr.Gases[name] = Gas{Mol: dist.Summarise(mol),
				M3STP: dist.Summarise(col(p.n, func(i int) float64 { return mol[i] * MolarVolumeSTPLPerMol / 1000 }))}
		}
	}
}
