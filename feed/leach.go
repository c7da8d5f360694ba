package feed

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"sync"

	"blackmass/cathode"
	"blackmass/data"
)

// MolarVolumeSTPLPerMol is the ideal-gas molar volume at 0 °C and 101.325 kPa (CODATA: 22.413 969 L/mol).
const MolarVolumeSTPLPerMol = 22.413969

// LeachOptions sets the route and the dosing. Give either the planner's form (AcidExcess and
// FreeAcidMolPerL, ReductantExcess) or the bench recipe (RecipeAcidMolPerL and RecipeH2O2VolPct);
// PulpDensityGPerL or LiquorVolumeL fixes the volume.
type LeachOptions struct {
	Route            cathode.Route `json:"route"`
	AcidWtPct        float64       `json:"acid_strength_wt_pct"`       // strength of the acid bought (e.g. 98 for H2SO4, 32 for HCl)
	H2O2WtPct        float64       `json:"h2o2_strength_wt_pct"`       // strength of the peroxide bought (30, 35, 50)
	AcidExcess       float64       `json:"acid_excess_factor"`         // factor over stoichiometry (planner form)
	FreeAcidMolPerL  float64       `json:"free_acid_target_mol_per_l"` // free acid to leave in the liquor, mol/L of acid (planner form)
	ReductantExcess  float64       `json:"h2o2_excess_factor"`         // factor over stoichiometric H2O2 (peroxide decomposes in parallel)
	PulpDensityGPerL float64       `json:"pulp_density_g_per_l"`       // black mass per litre of liquor
	LiquorVolumeL    float64       `json:"liquor_volume_l,omitempty"`  // alternatively a fixed liquor volume
	// Bench recipe: acid molarity of the lixiviant and peroxide as vol% of the commercial solution.
	RecipeAcidMolPerL float64 `json:"recipe_acid_mol_per_l,omitempty"`
	RecipeH2O2VolPct  float64 `json:"recipe_h2o2_vol_pct,omitempty"`
	// ExtractionOverride fixes the extraction of listed elements (0..1) instead of drawing it from
	// data/extraction.csv; the key "*" sets every metal.
	ExtractionOverride map[string]float64 `json:"extraction_override,omitempty"`
	AcidPricePerKg     float64            `json:"acid_price_per_kg,omitempty"` // per kg of commercial acid (currency-neutral); 0: no cost
	H2O2PricePerKg     float64            `json:"h2o2_price_per_kg,omitempty"`
}

// DefaultLeachOptions is the planner's default: sulfuric acid 98 % with 30 % peroxide, acid at
// stoichiometry plus 0.5 mol/L free acid, peroxide at 1.5× stoichiometry, 100 g/L pulp density.
func DefaultLeachOptions() LeachOptions {
	return LeachOptions{Route: cathode.SulfuricPeroxide, AcidWtPct: 98, H2O2WtPct: 30, AcidExcess: 1, FreeAcidMolPerL: 0.5,
		ReductantExcess: 1.5, PulpDensityGPerL: 100}
}

// Reagent is a reagent's demand.
type Reagent struct {
	Name       string  `json:"name"`
	StrengthWt float64 `json:"strength_wt_pct"`
	DensityGmL float64 `json:"density_g_per_mL"`
	MolarMass  float64 `json:"molar_mass_g_per_mol"`
	KgPure     Stat    `json:"kg_pure"`
	Kg         Stat    `json:"kg"`
	Litres     Stat    `json:"litres"`
	Cost       *Stat   `json:"cost,omitempty"`
	StoichKg   Stat    `json:"stoichiometric_kg_pure"`
	Ratio      Stat    `json:"ratio_to_stoichiometry"`
}

// Gas is a gas evolved.
type Gas struct {
	Mol   Stat `json:"mol"`
	M3STP Stat `json:"m3_stp"`
}

// Conc is an element's concentration in the liquor.
type Conc struct {
	GPerL   Stat `json:"g_per_l"`
	MolPerL Stat `json:"mol_per_l"`
}

// Liquor is the expected leach liquor.
type Liquor struct {
	VolumeL        Stat            `json:"volume_l"`
	Elements       map[string]Conc `json:"elements"`
	Anion          string          `json:"anion"`
	AnionMolPerL   Stat            `json:"anion_mol_per_l"`
	ChargeResidual float64         `json:"charge_balance_max_relative_residual"`
}

// LeachReport is the leach plan of a lot.
type LeachReport struct {
	Route           string          `json:"route"`
	Settings        LeachOptions    `json:"settings"`
	Reagents        []Reagent       `json:"reagents"`
	WaterL          Stat            `json:"make_up_water_l"`
	Gases           map[string]Gas  `json:"gases"`
	GasReference    string          `json:"gas_reference"`
	Liquor          Liquor          `json:"liquor"`
	FreeAcidMolPerL Stat            `json:"free_acid_mol_per_l"`
	Saturation      map[string]Stat `json:"saturation"`
	TotalCost       *Stat           `json:"total_cost,omitempty"`
	Warnings        []string        `json:"warnings"`
	Safety          []string        `json:"safety"`
	Assumptions     []string        `json:"assumptions"`
	Extraction      []ParamResult   `json:"extraction"`
}

type reagentTable map[string][][2]float64 // reagent -> sorted (wt%, density)

type salt struct {
	name, cation, anion string
	gPer100g            float64
}

type leachTables struct {
	density    reagentTable
	salts      []salt
	extraction map[cathode.Route]map[string]cathode.Range
	sources    map[string]string // "route/element" -> source
}

var loadLeachTables = sync.OnceValues(func() (*leachTables, error) {
	lt := &leachTables{density: reagentTable{}, extraction: map[cathode.Route]map[string]cathode.Range{}, sources: map[string]string{}}
	t, err := data.ReadTable(data.FS, "reagents.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range t.Rows {
		w, err := r.Float("wt_pct")
		if err != nil {
			return nil, err
		}
		d, err := r.Float("density_g_per_mL")
		if err != nil {
			return nil, err
		}
		lt.density[r.Str("reagent")] = append(lt.density[r.Str("reagent")], [2]float64{w, d})
	}
	for _, v := range lt.density {
		sort.Slice(v, func(i, j int) bool { return v[i][0] < v[j][0] })
	}
	st, err := data.ReadTable(data.FS, "solubility.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range st.Rows {
		g, err := r.Float("g_per_100g_water")
		if err != nil {
			return nil, err
		}
		lt.salts = append(lt.salts, salt{r.Str("salt"), r.Str("cation"), r.Str("anion"), g})
	}
	et, err := data.ReadTable(data.FS, "extraction.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range et.Rows {
		route, err := cathode.ParseRoute(r.Str("route"))
		if err != nil {
			return nil, r.Errorf("%v", err)
		}
		var rg cathode.Range
		if rg.Min, rg.Mode, rg.Max, err = r.Range("", ""); err != nil {
			return nil, err
		}
		if !rg.Valid() || rg.Min < 0 || rg.Max > 1 {
			return nil, r.Errorf("extraction range must be ordered within 0..1")
		}
		if lt.extraction[route] == nil {
			lt.extraction[route] = map[string]cathode.Range{}
		}
		lt.extraction[route][r.Str("element")] = rg
		lt.sources[route.String()+"/"+r.Str("element")] = r.Str("source")
	}
	return lt, nil
})

// Density returns the density of a reagent solution (g/mL) at strength wtPct, interpolated
// linearly in the reagent table; an error if wtPct is outside the table.
func Density(reagent string, wtPct float64) (float64, error) {
	lt, err := loadLeachTables()
	if err != nil {
		return 0, err
	}
	pts := lt.density[reagent]
	if len(pts) == 0 {
		return 0, fmt.Errorf("no density table for %s", reagent)
	}
	if wtPct < pts[0][0] || wtPct > pts[len(pts)-1][0] {
		return 0, fmt.Errorf("no density for %s at %g wt%% (table covers %g–%g wt%%)", reagent, wtPct, pts[0][0], pts[len(pts)-1][0])
	}
	for i := 1; i < len(pts); i++ {
		if wtPct <= pts[i][0] {
			a, b := pts[i-1], pts[i]
			return a[1] + (wtPct-a[0])/(b[0]-a[0])*(b[1]-a[1]), nil
		}
	}
	return pts[len(pts)-1][1], nil
}

var leachSafety = map[cathode.Route][]string{
	cathode.SulfuricPeroxide: {
		"Add black mass slowly to the acid: aluminium and other metals give hydrogen (flammable 4–75 vol% in air); vent the reactor and keep ignition sources away.",
		"Hydrogen peroxide decomposes exothermically to oxygen, faster on Co, Mn, Cu and Fe surfaces: dose gradually, control temperature, keep it away from organic vapours.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin; use compatible vessels and HF-rated protection.",
	},
	cathode.Hydrochloric: {
		"Hydrochloric acid on Co(III), Ni(III/IV) and Mn(IV) oxides evolves chlorine (toxic; IDLH 10 ppm): closed reactor with a caustic scrubber.",
		"Aluminium and other metals give hydrogen (flammable 4–75 vol% in air); concentrated HCl fumes.",
		"Fluoride from LiPF6 and PVDF enters the liquor as HF: it attacks glass and skin.",
	},
	cathode.SulfuricSelective: {
		"Peroxide as oxidant: exothermic, gives oxygen on decomposition; dose gradually and control temperature.",
		"Metals in the feed give hydrogen; fluoride enters the liquor as HF.",
	},
}

// planLeach computes the leach plan for every sample of the lot's black mass.
func planLeach(s *Samples, opt LeachOptions, seed uint64) (*LeachReport, error) {
	lt, err := loadLeachTables()
	if err != nil {
		return nil, err
	}
	if err := checkLeachOptions(&opt); err != nil {
		return nil, err
	}
	route := opt.Route
	acidM, h2o2M := cathode.MolarMassOf(route.Acid()), cathode.MolarMassOf("H2O2")
	acidRho, err := Density(route.Acid(), opt.AcidWtPct)
	if err != nil {
		return nil, err
	}
	h2o2Rho, err := Density("H2O2", opt.H2O2WtPct)
	if err != nil {
		return nil, err
	}
	n := s.N
	// Extraction draws per element, shared by all compounds (systematic).
	ext := map[string][]float64{}
	var ranges []ParamResult
	for _, el := range slices.Sorted(maps.Keys(lt.extraction[route])) {
		rg := lt.extraction[route][el]
		ext[el] = s.params.rangeValues("extraction "+route.String()+"/"+el, rg)
		ranges = append(ranges, ParamResult{"extraction " + route.String(), el, rg.Min, rg.Mode, rg.Max, "fraction", lt.sources[route.String()+"/"+el]})
	}
	species := make([]cathode.Species, len(s.Compounds))
	molarMass := make([]float64, len(s.Compounds))
	for c := range s.Compounds {
		f, err := cathode.ParseFormula(s.CompoundFormula(c))
		if err != nil {
			return nil, err
		}
		if species[c], err = cathode.NewSpecies(f); err != nil {
			return nil, err
		}
		molarMass[c] = f.MolarMass(cathode.DefaultElements())
	}
	elements := []string{"Li", "Co", "Ni", "Mn", "Al", "Fe", "Cu", "P", "F"}
	elIdx := map[string]int{}
	for i, e := range elements {
		elIdx[e] = i
	}
	vol, acidStoich, acidTot, h2o2Stoich, h2o2Tot := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	gas := map[string][]float64{"H2": make([]float64, n), "O2": make([]float64, n), "Cl2": make([]float64, n), "CO2": make([]float64, n)}
	elMol := make([][]float64, len(elements))
	for i := range elMol {
		elMol[i] = make([]float64, n)
	}
	anion, freeH, cationCharge, chargeRes := make([]float64, n), make([]float64, n), make([]float64, n), 0.0
	for i := range n {
		x := func(sym string) float64 {
			if v, ok := opt.ExtractionOverride[sym]; ok {
				return v
			}
			if v, ok := opt.ExtractionOverride["*"]; ok {
				return v
			}
			if v, ok := ext[sym]; ok {
				return v[min(i, len(v)-1)]
			}
			return 1
		}
		var acid, red, ox, cl2 float64
		for c, kg := range s.Compounds {
			mol := kg[i] * 1000 / molarMass[c]
			if mol == 0 {
				continue
			}
			rx, err := cathode.Dissolve(species[c], route, x)
			if err != nil {
				return nil, err
			}
			acid += rx.AcidMol * mol
			red += rx.H2O2ReductantMol * mol
			ox += rx.H2O2OxidantMol * mol
			cl2 += rx.Cl2Mol * mol
			gas["H2"][i] += rx.H2Mol * mol
			gas["O2"][i] += rx.O2Mol * mol
			gas["CO2"][i] += rx.CO2Mol * mol
			for _, ion := range rx.Cations {
				if k, ok := elIdx[ion.Symbol]; ok {
					elMol[k][i] += ion.Mol * mol
				}
				cationCharge[i] += ion.Charge * ion.Mol * mol
			}
			elMol[elIdx["P"]][i] += rx.H3PO4Mol * mol
			elMol[elIdx["F"]][i] += rx.HFMol * mol
		}
		gas["Cl2"][i] = cl2
		v := opt.LiquorVolumeL
		if v == 0 {
			v = s.BlackMass[i] * 1000 / opt.PulpDensityGPerL
		}
		vol[i] = v
		acidStoich[i], h2o2Stoich[i] = acid, red+ox
		if opt.RecipeAcidMolPerL > 0 {
			acidTot[i] = opt.RecipeAcidMolPerL * v
		} else {
			acidTot[i] = acid*opt.AcidExcess + opt.FreeAcidMolPerL*v
		}
		if opt.RecipeH2O2VolPct > 0 {
			h2o2Tot[i] = opt.RecipeH2O2VolPct / 100 * v * 1000 * h2o2Rho * opt.H2O2WtPct / 100 / h2o2M
		} else {
			h2o2Tot[i] = (red + ox) * opt.ReductantExcess
		}
		// Peroxide beyond what reacts decomposes: 2 H2O2 -> 2 H2O + O2.
		if extra := h2o2Tot[i] - (red + ox); extra > 0 {
			gas["O2"][i] += extra / 2
		}
		// Free acid from the acid balance; liquor anions from the acid added.
		freeH[i] = (acidTot[i] - acid) * route.AcidProtons()
		anion[i] = acidTot[i]
		if route == cathode.Hydrochloric {
			anion[i] = acidTot[i] - 2*cl2
		}
		// Charge balance of the liquor: Σ z·n(cations) + H+ = anion charge, with H+ from the acid
		// balance and the cations from the extraction.
		pos := freeH[i] + cationCharge[i]
		neg := anion[i] * route.AnionCharge()
		if neg > 0 {
			chargeRes = math.Max(chargeRes, math.Abs(pos-neg)/neg)
		}
	}
	lr := &LeachReport{Route: route.String(), Settings: opt, Gases: map[string]Gas{}, Saturation: map[string]Stat{},
		GasReference: "ideal gas at 0 °C and 101.325 kPa (22.414 L/mol)", Safety: leachSafety[route], Extraction: ranges}
	mk := func(name string, wt, rho, molMass float64, stoich, total []float64, price float64) Reagent {
		pure, comm, litres, sk, ratio := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range n {
			pure[i] = total[i] * molMass / 1000
			comm[i] = pure[i] / (wt / 100)
			litres[i] = comm[i] / rho
			sk[i] = stoich[i] * molMass / 1000
			if stoich[i] > 0 {
				ratio[i] = total[i] / stoich[i]
			}
		}
		rg := Reagent{Name: fmt.Sprintf("%s %g %%", name, wt), StrengthWt: wt, DensityGmL: round(rho, 4), MolarMass: round(molMass, 4), KgPure: summarise(pure),
			Kg: summarise(comm), Litres: summarise(litres), StoichKg: summarise(sk), Ratio: summarise(ratio)}
		if price > 0 {
			c := make([]float64, n)
			for i := range n {
				c[i] = comm[i] * price
			}
			st := summarise(c)
			rg.Cost = &st
		}
		return rg
	}
	acidR := mk(route.Acid(), opt.AcidWtPct, acidRho, acidM, acidStoich, acidTot, opt.AcidPricePerKg)
	lr.Reagents = append(lr.Reagents, acidR)
	h2o2R := mk("H2O2", opt.H2O2WtPct, h2o2Rho, h2o2M, h2o2Stoich, h2o2Tot, opt.H2O2PricePerKg)
	if h2o2Tot[0] > 0 || h2o2R.KgPure.P90 > 0 {
		lr.Reagents = append(lr.Reagents, h2o2R)
	}
	water := make([]float64, n)
	for i := range n {
		water[i] = vol[i] - acidTot[i]*acidM/1000/(opt.AcidWtPct/100)/acidRho - h2o2Tot[i]*h2o2M/1000/(opt.H2O2WtPct/100)/h2o2Rho
	}
	lr.WaterL = summarise(water)
	if opt.AcidPricePerKg > 0 || opt.H2O2PricePerKg > 0 {
		tot := make([]float64, n)
		for i := range n {
			tot[i] = acidTot[i]*acidM/1000/(opt.AcidWtPct/100)*opt.AcidPricePerKg + h2o2Tot[i]*h2o2M/1000/(opt.H2O2WtPct/100)*opt.H2O2PricePerKg
		}
		st := summarise(tot)
		lr.TotalCost = &st
	}
	for name, mol := range gas {
		m3 := make([]float64, n)
		for i := range n {
			m3[i] = mol[i] * MolarVolumeSTPLPerMol / 1000
		}
		if slices.Max(mol) > 0 {
			lr.Gases[name] = Gas{Mol: summarise(mol), M3STP: summarise(m3)}
		}
	}
	es := cathode.DefaultElements()
	// The residual is reported to 1e-12: below that it is floating-point noise, which would make
	// reports differ between machines.
	lr.Liquor = Liquor{VolumeL: summarise(vol), Elements: map[string]Conc{}, Anion: route.Anion(), ChargeResidual: round(chargeRes, 12)}
	perL := func(x []float64, scale float64) []float64 {
		out := make([]float64, n)
		for i := range n {
			out[i] = x[i] * scale / vol[i]
		}
		return out
	}
	for k, e := range elements {
		if slices.Max(elMol[k]) > 0 {
			lr.Liquor.Elements[e] = Conc{GPerL: summarise(perL(elMol[k], es.Weight(e))), MolPerL: summarise(perL(elMol[k], 1))}
		}
	}
	lr.Liquor.AnionMolPerL = summarise(perL(anion, 1))
	lr.FreeAcidMolPerL = summarise(perL(freeH, 1/route.AcidProtons()))
	// Saturation: the salt each cation forms with the liquor anion, against its solubility.
	for _, sl := range lt.salts {
		k, ok := elIdx[sl.cation]
		if !ok || sl.anion != route.Anion() || slices.Max(elMol[k]) == 0 {
			continue
		}
		f, _ := cathode.ParseFormula(sl.name)
		perSalt := f.Moles(sl.cation)
		ratio := perL(elMol[k], f.MolarMass(es)/perSalt/(sl.gPer100g*10))
		st := summarise(ratio)
		lr.Saturation[sl.name] = st
		if st.P90 > 0.8 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("%s reaches %.0f %% of its solubility near 25 °C (P90): lower the pulp density or expect crystallisation", sl.name, 100*st.P90))
		}
	}
	if lr.FreeAcidMolPerL.P10 < 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is under-dosed: free acid P10 %.2f mol/L; the lot cannot fully dissolve, extraction will suffer", lr.FreeAcidMolPerL.P10))
	}
	if opt.RecipeAcidMolPerL > 0 && acidR.Ratio.P50 > 4 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("acid is %.1f× stoichiometric: grossly over-dosed (waste and neutralisation cost)", acidR.Ratio.P50))
	}
	if h2o2R.StoichKg.P50 > 0 {
		if h2o2R.Ratio.P10 < 1 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("peroxide is %.2f× stoichiometric (P10): under-dosed, Co/Mn/Ni extraction will suffer (peroxide also decomposes in parallel)", h2o2R.Ratio.P10))
		} else if h2o2R.Ratio.P50 > 6 {
			lr.Warnings = append(lr.Warnings, fmt.Sprintf("peroxide is %.1f× stoichiometric: grossly over-dosed", h2o2R.Ratio.P50))
		}
	}
	if g, ok := lr.Gases["Cl2"]; ok && g.Mol.P50 > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("chlorine: about %.2f m³ Cl2 (STP, P50) evolves from the high-valent oxides", g.M3STP.P50))
	}
	if g, ok := lr.Gases["H2"]; ok && g.Mol.P50 > 0 {
		lr.Warnings = append(lr.Warnings, fmt.Sprintf("hydrogen: about %.3f m³ H2 (STP, P50) from aluminium and other metals", g.M3STP.P50))
	}
	lr.Warnings = append(lr.Warnings, routeNotes(s, species, route)...)
	if _, ok := lr.Liquor.Elements["F"]; ok {
		lr.Warnings = append(lr.Warnings, "fluoride (HF) in the liquor from LiPF6 residue")
	}
	lr.Assumptions = []string{
		"Acid and peroxide demand follow from each species' charge balance (cathode.Dissolve), scaled by the extraction of each metal.",
		"Aluminium and other metals less noble than hydrogen dissolve with H2 evolution; they are not counted as reductant for the oxides.",
		"Copper dissolves only with an oxidant: peroxide on the sulfuric routes; not at all on the hydrochloric route.",
		"Graphite, carbon black and PVDF are inert and stay in the residue; on the selective route iron of phosphates stays as FePO4.",
		"Free acid is what remains of the acid added after the dissolution; H3PO4 and HF are counted as undissociated.",
		"Liquor volume is black mass over pulp density (or the volume given); reagent volumes are included in it.",
	}
	return lr, nil
}

func checkLeachOptions(o *LeachOptions) error {
	switch {
	case o.Route == cathode.RouteInvalid:
		return fmt.Errorf("leach: no route")
	case !(o.AcidWtPct > 0 && o.AcidWtPct <= 100):
		return fmt.Errorf("leach: acid strength %g wt%% must be in (0, 100]", o.AcidWtPct)
	case !(o.H2O2WtPct > 0 && o.H2O2WtPct <= 70):
		return fmt.Errorf("leach: peroxide strength %g wt%% must be in (0, 70]", o.H2O2WtPct)
	case o.AcidExcess < 1 && o.RecipeAcidMolPerL == 0:
		return fmt.Errorf("leach: acid excess %g must be at least 1", o.AcidExcess)
	case o.ReductantExcess < 0 || o.FreeAcidMolPerL < 0 || o.RecipeAcidMolPerL < 0 || o.RecipeH2O2VolPct < 0 || o.RecipeH2O2VolPct > 50:
		return fmt.Errorf("leach: negative dosing, or peroxide above 50 vol%%")
	case o.LiquorVolumeL < 0 || (o.LiquorVolumeL == 0 && !(o.PulpDensityGPerL > 0 && o.PulpDensityGPerL <= 1000)):
		return fmt.Errorf("leach: pulp density must be in (0, 1000] g/L, or give a liquor volume")
	case o.AcidPricePerKg < 0 || o.H2O2PricePerKg < 0:
		return fmt.Errorf("leach: negative price")
	}
	for el, v := range o.ExtractionOverride {
		if !(v >= 0 && v <= 1) {
			return fmt.Errorf("leach: extraction of %s is %v, want 0..1", el, v)
		}
	}
	return nil
}

// PlanLeachFor computes the leach plan of a black mass given directly as compounds (formula ->
// kg), without a manifest: e.g. a pure cathode powder. The masses are taken as known; only the
// extraction is drawn.
func PlanLeachFor(kgByFormula map[string]float64, opt LeachOptions, seed uint64, samples int) (*LeachReport, error) {
	if samples < 1 {
		return nil, fmt.Errorf("leach: samples must be positive")
	}
	keys := slices.Sorted(maps.Keys(kgByFormula))
	cols := make([][]float64, len(keys))
	bm := make([]float64, samples)
	for c, k := range keys {
		kg := kgByFormula[k]
		if !(kg >= 0) || math.IsInf(kg, 0) {
			return nil, fmt.Errorf("leach: %s: mass %v kg", k, kg)
		}
		cols[c] = make([]float64, samples)
		for i := range cols[c] {
			cols[c][i] = kg
			bm[i] += kg
		}
	}
	s, err := columnSamples(keys, cols, bm, seed)
	if err != nil {
		return nil, err
	}
	return planLeach(s, opt, seed)
}

// columnSamples wraps compound columns (formula, kg per sample) as Samples for the leach plan.
func columnSamples(formulas []string, cols [][]float64, blackMass []float64, seed uint64) (*Samples, error) {
	c := &compounds{elIdx: map[string]int{}, byEntry: map[string]int{}}
	for _, k := range formulas {
		f, err := cathode.ParseFormula(k)
		if err != nil {
			return nil, err
		}
		c.add(k, f, nil)
	}
	return &Samples{N: len(blackMass), comp: c, params: newParamSet(mustModel(), seed, len(blackMass)), Compounds: cols, BlackMass: blackMass}, nil
}

func mustModel() *Model {
	m, err := DefaultModel()
	if err != nil {
		panic("feed: embedded model: " + err.Error())
	}
	return m
}

// mixedShareNote is the share of the cathode mass below which a second cathode family is not
// worth a route note: under 5 % it changes neither the route nor the liquor (common practice).
const mixedShareNote = 0.05

// routeNotes says what the route does to a lot that mixes phosphate and oxide cathodes in
// amounts that matter: judged at the median of the Monte Carlo, so an unknown item's small
// chance of holding LFP does not raise it.
func routeNotes(s *Samples, species []cathode.Species, route cathode.Route) []string {
	phos, oxide := make([]float64, s.N), make([]float64, s.N)
	for c, sp := range species {
		if _, tm := sp.TransitionMetalState(); !tm || sp.Formula.Moles("Li") == 0 {
			continue
		}
		for i, kg := range s.Compounds[c] {
			switch sp.Anion() {
			case "phosphate":
				phos[i] += kg
			case "oxide":
				oxide[i] += kg
			}
		}
	}
	phosphateKg, oxideKg := summarise(phos).P50, summarise(oxide).P50
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
		return []string{fmt.Sprintf("selective route on a mixed lot: phosphate cathodes (about %.3g kg) give their lithium and keep iron as FePO4, "+
			"but the oxide cathodes (about %.3g kg) are barely attacked at this acid level; most of their Co, Ni, Mn and Li stays in the residue for a second, reductive leach", phosphateKg, oxideKg)}
	case route != cathode.SulfuricSelective && phosphateKg > 0 && oxideKg > 0:
		return []string{fmt.Sprintf("mixed lot: the phosphate cathodes (about %.3g kg) dissolve fully on this route, putting Fe and H3PO4 into the liquor beside Co, Ni and Mn; "+
			"a selective lithium leach of the phosphates first keeps iron out", phosphateKg)}
	}
	return nil
}
