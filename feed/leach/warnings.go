package leach

import (
	"fmt"
	"math"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

var leachSafety = map[cathode.Route][]string{
	cathode.SulfuricPeroxide: {
		"Add black mass slowly to the acid: aluminium and other metals give hydrogen (flammable 4–75 vol% in air); " +
			"vent the reactor and keep ignition sources away.",
		"Hydrogen peroxide decomposes exothermically to oxygen, faster on Co, Mn, Cu and Fe surfaces: dose " +
			"gradually, control temperature, keep it away from organic vapours.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin; use compatible vessels " +
			"and HF-rated protection.",
	},
	cathode.Hydrochloric: {
		"Hydrochloric acid on Co(III), Ni(III/IV) and Mn(IV) oxides evolves chlorine (toxic; IDLH 10 ppm): closed " +
			"reactor with a caustic scrubber.",
		"Aluminium and other metals give hydrogen (flammable 4–75 vol% in air); concentrated HCl fumes.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin.",
	},
	cathode.SulfuricSelective: {
		"Peroxide as oxidant: exothermic, gives oxygen on decomposition; dose gradually and control temperature.",
		"Metals in the feed give hydrogen; fluoride enters the liquor as HF.",
	},
}

// limits says which reagent limited the dissolution, and in how many samples.
func (p *leachPlanner) limits(lr *Report) {
	var red, acid int
	for _, r := range p.res {
		if r.reductionCap < 1-1e-9 {
			red++
		}
		if r.acidCap < 1-1e-9 {
			acid++
		}
	}
	share := func(k int) float64 { return dist.Round(float64(k)/float64(p.n), 4) }
	if red > 0 {
		what := "the electron supply (metals in the feed and the oxides' own oxygen; no reductant)"
		if p.red != nil {
			what = p.red.Key + " (with the metals in the feed and the oxides' own oxygen)"
		}
		if p.route == cathode.Hydrochloric {
			what = "the electron supply (metals in the feed and the chloride)"
		}
		lr.Limiting = append(lr.Limiting, Limit{Reagent: what, SampleShare: share(red),
			ReachedShare: dist.Summarise(col(p.n, func(i int) float64 { return p.res[i].reductionCap }))})
	}
	if acid > 0 {
		lr.Limiting = append(lr.Limiting, Limit{Reagent: p.route.Acid(), SampleShare: share(acid),
			ReachedShare: dist.Summarise(col(p.n, func(i int) float64 { return p.res[i].acidCap }))})
	}
}

// freeAcidLeftMolPerL is the free acid (mol/L, P10) above which the liquor is not said to run out
// of acid: a tenth of the planner's default target of 0.5 mol/L.
const freeAcidLeftMolPerL = 0.05

// shortfallSampleShare is the share of samples in which the reductant must limit the leach before
// the plan calls the extraction short: one outcome in ten, the same margin as ordering to P90.
const shortfallSampleShare = 0.1

// samplePct prints a share of samples as a percentage, saying "under 1 %" rather than rounding a
// few samples to 0.
func samplePct(share float64) string {
	if share > 0 && share < 0.005 {
		return "under 1 %"
	}
	return fmt.Sprintf("%.0f %%", math.Round(100*share))
}

// warnings adds the dose warnings.
func (p *leachPlanner) warnings(lr *Report, acidR Reagent, redR *Reagent) {
	if p.grown > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("the reagents alone exceed the liquor volume in %d of %d "+
			"samples: the volume grew to hold them, so the pulp density is lower than asked", p.grown, p.n))
	}
	redShort := 0.0 // share of samples the reductant (with the feed's metals and the oxides' oxygen) limits
	for _, l := range lr.Limiting {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s limits the leach in %s of samples: it reaches %.0f %% "+
			"(P50) of the planned dissolution", l.Reagent, samplePct(l.SampleShare), 100*l.ReachedShare.P50))
		if p.red != nil && strings.HasPrefix(l.Reagent, p.red.Key) {
			redShort = l.SampleShare
		}
	}
	if acidR.RatioFull.P10 < 1 {
		if free := lr.FreeAcidMolPerL.P10; free > freeAcidLeftMolPerL {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.2f× what full dissolution on this route needs "+
				"(P10): at the planned extraction %.2f mol/L free acid is left (P10), but it would run out before "+
				"the route's full dissolution", acidR.RatioFull.P10, free))
		} else {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.2f× what full dissolution needs (P10): free acid "+
				"runs out and less metal dissolves", acidR.RatioFull.P10))
		}
	}
	if p.opt.RecipeAcidMolPerL > 0 && acidR.Ratio.P50 > 4 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.1f× stoichiometric: grossly over-dosed (waste and "+
			"neutralisation cost)", acidR.Ratio.P50))
	}
	if redR != nil && redR.StoichKg.P50 > 0 {
		allow := 1.0
		if p.red.Oxidant {
			allow = 1 / (1 - dist.Summarise(p.lost).P50)
		}
		if redR.RatioFull.P10 < allow {
			outcome := "Co, Ni and Mn extraction will fall short"
			switch {
			case p.route == cathode.SulfuricSelective:
				// The selective route means to leave the oxides: the reductant's shortfall can only
				// lower their small planned attack.
				outcome = "on this route, meant to leave the oxides in the residue, that only lowers their small " +
					"planned attack (the planned extraction table)"
			case redShort < shortfallSampleShare:
				outcome = "in this plan the oxides' own oxygen makes up the rest (the lattice-oxygen table); where " +
					"they give less, Co, Ni and Mn extraction falls short"
			}
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s is %.2f× what full dissolution needs (P10), below "+
				"the %.2f× that allows for its decomposition at %g °C: %s",
				p.red.Key, redR.RatioFull.P10, allow, p.opt.TemperatureC, outcome))
		} else if redR.Ratio.P50 > 6 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s is %.1f× stoichiometric: grossly over-dosed",
				p.red.Key, redR.Ratio.P50))
		}
	}
	if g, ok := lr.Gases["Cl2"]; ok && g.Mol.P50 > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("chlorine: about %s Cl2 (STP, P50) evolves from the "+
			"high-valent oxides; scrub it with caustic", formatGasVolume(g.M3STP.P50)))
	}
	if h2max, ok := lr.Gases[H2WorstCase]; ok && h2max.M3STP.P90 > 0 {
		h2 := 0.0
		if g, ok := lr.Gases["H2"]; ok {
			h2 = g.M3STP.P50
		}
		lead := fmt.Sprintf("hydrogen: about %s H2 (STP, P50) from aluminium and other metals once they have "+
			"reduced the oxides", formatGasVolume(h2))
		if h2 == 0 {
			lead = "hydrogen: none once aluminium and other metals have reduced the oxides"
		}
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s; up to %s (P90) if they meet the acid first (both rows "+
			"in the gas table): vent as for the larger", lead, formatGasVolume(h2max.M3STP.P90)))
	}
	if cu, ok := lr.Liquor.ExtractionReached["Cu"]; ok && cu.P50 < copperLeftWarnBelow && p.route == cathode.Hydrochloric {
		lr.Warnings = append(lr.Warnings, "copper: without an oxidant only the copper that reduced the oxides "+
			"dissolves on the hydrochloric route; the rest stays in the residue")
	}
	lr.Warnings = append(lr.Warnings, routeNotes(p.s, p.species, p.route)...)
	if _, ok := lr.Liquor.Elements["F"]; ok {
		lr.Warnings = append(lr.Warnings, "fluoride (HF) in the liquor from LiPF6 residue")
	}
	lr.Assumptions = assumptions()
}

// mixedShareNote is the share of the cathode mass below which a second cathode family is not
// worth a route note: under 5 % it changes neither the route nor the liquor (common practice).
const mixedShareNote = 0.05

// routeNotes says what the route does to a lot that mixes phosphate and oxide cathodes in
// amounts that matter: judged at the median of the Monte Carlo, so an unknown item's small
// chance of holding LFP does not raise it.
func routeNotes(s Input, species []cathode.Species, route cathode.Route) []string {
	n := len(s.BlackMassKg)
	phos, oxide := make([]float64, n), make([]float64, n)
	for c, sp := range species {
		if _, tm := sp.TransitionMetalState(); !tm || sp.Formula.Moles("Li") == 0 {
			continue
		}
		for i, kg := range s.Kg[c] {
			switch sp.Anion() {
			case "phosphate":
				phos[i] += kg
			case "oxide":
				oxide[i] += kg
			}
		}
	}
	phosphateKg, oxideKg := dist.Summarise(phos).P50, dist.Summarise(oxide).P50
	total := phosphateKg + oxideKg
	if total <= 0 {
		return nil
	}
	if phosphateKg < mixedShareNote*total {
		phosphateKg = 0
	}
	if oxideKg < mixedShareNote*total {
		oxideKg = 0
	}
	switch {
	case route == cathode.SulfuricSelective && oxideKg > 0:
		return []string{fmt.Sprintf("selective route on a mixed lot: phosphate cathodes (about %.3g kg) give their "+
			"lithium and keep iron as FePO4, "+
			"but the oxide cathodes (about %.3g kg) are barely attacked at this acid level; most of their Co, Ni, "+
			"Mn and Li stays in the residue for a second, reductive leach", phosphateKg, oxideKg)}
	case route != cathode.SulfuricSelective && phosphateKg > 0 && oxideKg > 0:
		return []string{fmt.Sprintf("mixed lot: the phosphate cathodes (about %.3g kg) dissolve fully on this "+
			"route, putting Fe and H3PO4 into the liquor beside Co, Ni and Mn; "+
			"a selective lithium leach of the phosphates first keeps iron out", phosphateKg)}
	}
	return nil
}

// assumptions are the plan's assumptions, as the report states them.
func assumptions() []string {
	return []string{
		"Acid and electron demand follow from each species' charge balance, scaled by the " +
			"planned extraction of each metal.",
		"The extraction reached is the lesser of the planned extraction and what the acid and the electrons dosed " +
			"can dissolve.",
		"Metals in the feed reduce the oxides first (least noble first: Al, Fe, then Cu); the reductant or " +
			"chloride gives the rest; leftover Al and Fe give H2; leftover Cu needs peroxide or stays.",
		"Short of reductant on the sulfuric routes, the oxides' own oxygen gives part of the reduction, leaving as " +
			"O2 (a share that grows with temperature, from the lattice-oxygen table).",
		"Oxidation states: Mn(IV) and Co(III) in oxides that hold nickel, nickel the rest (Ni(II) in NMC111 needs " +
			"no reductant); other oxides share the average.",
		"Peroxide left after the reduction oxidises copper metal, then Fe(II) to Fe(III); the rest decomposes to " +
			"O2. Part of the peroxide dosed decomposes anyway (the peroxide-loss table, by temperature).",
		"On the selective route the lithium of oxide cathodes stays with their undissolved metals; iron of " +
			"phosphates stays as FePO4.",
		"Graphite, carbon black and PVDF are inert and stay in the residue.",
		"Free acid is what remains of the acid added after the dissolution; H3PO4 and HF are counted as undissociated.",
		"Liquor volume is black mass over pulp density (or the volume given); reagent volumes are included in it.",
		"Saturation compares each salt with its single-salt solubility in water (CRC Handbook, 0-100 °C) at the " +
			"temperature between the filtered liquor's 20 °C and the leach's where it is least (hot for Li2SO4 and " +
			"MnSO4, cool for NiSO4), per kg of the liquor's water (make-up water, the reagents' water and the water " +
			"the reactions form); the shared sulfate and the acid lower " +
			"real solubilities, so the warning starts at 60 %.",
	}
}
