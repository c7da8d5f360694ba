package leach

import (
	"blackmass/cathode"
	"fmt"
)

// Options sets the route and the dosing. Give either the planner's form (AcidExcess and
// FreeAcidMolPerL, ReductantExcess) or the bench recipe (RecipeAcidMolPerL and RecipeH2O2VolPct);
// PulpDensityGPerL or LiquorVolumeL fixes the volume.
type Options struct {
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
	H2O2PricePerKg     float64            `json:"h2o2_price_per_kg,omitempty"` // per kg of the reductant as bought
	// Reductant names the reductant of the sulfuric routes (H2O2, SO2, Na2S2O5, C6H8O6, or
	// "none"); empty means H2O2.
	Reductant string `json:"reductant,omitempty"`
	// RecipeReductantGPerL doses a solid or gaseous reductant in g per litre of liquor.
	RecipeReductantGPerL float64 `json:"recipe_reductant_g_per_l,omitempty"`
	// TemperatureC is the leach temperature; it sets the share of peroxide that decomposes and
	// how much of the oxides' reduction their own oxygen gives when short of reductant.
	TemperatureC float64 `json:"temperature_C"`
	// Currency names the currency of the reagent prices ("" when not said).
	Currency string `json:"currency,omitempty"`
	// GrowVolume lets the liquor volume grow to hold reagents that exceed it, instead of refusing.
	GrowVolume bool `json:"grow_volume,omitempty"`
}

// Strengths of the commercial acids a bench buys (common practice): concentrated sulfuric acid
// and the usual 32 % hydrochloric acid.
const (
	sulfuricAcidWtPct     = 98
	hydrochloricAcidWtPct = 32
)

// DefaultAcidWtPct is the strength of the acid a route is usually dosed with: 98 % H2SO4 on the
// sulfuric routes, 32 % HCl on the hydrochloric route.
func DefaultAcidWtPct(r cathode.Route) float64 {
	if r == cathode.Hydrochloric {
		return hydrochloricAcidWtPct
	}
	return sulfuricAcidWtPct
}

// DefaultOptions is the planner's default: sulfuric acid 98 % with 30 % peroxide, acid at
// stoichiometry plus 0.5 mol/L free acid, peroxide at 1.5× stoichiometry, 100 g/L pulp density.
func DefaultOptions() Options {
	return Options{Route: cathode.SulfuricPeroxide, AcidWtPct: DefaultAcidWtPct(cathode.SulfuricPeroxide), H2O2WtPct: 30, AcidExcess: 1, FreeAcidMolPerL: 0.5,
		ReductantExcess: 1.5, PulpDensityGPerL: 100, Reductant: "H2O2", TemperatureC: 60}
}

func checkLeachOptions(o *Options) error {
	if o.Reductant == "" {
		o.Reductant = "H2O2"
	}
	switch {
	case o.Route == cathode.RouteInvalid:
		return fmt.Errorf("leach: no route")
	case !(o.AcidWtPct > 0 && o.AcidWtPct <= 100):
		return fmt.Errorf("leach: acid strength %g wt%% must be in (0, 100]", o.AcidWtPct)
	case !(o.H2O2WtPct > 0 && o.H2O2WtPct <= 70):
		return fmt.Errorf("leach: peroxide strength %g wt%% must be in (0, 70]", o.H2O2WtPct)
	case !(o.TemperatureC >= 0 && o.TemperatureC <= 110):
		return fmt.Errorf("leach: temperature %g °C must lie from 0 to 110 (an open acid leach boils near 105 °C)", o.TemperatureC)
	case o.RecipeReductantGPerL < 0 || o.RecipeReductantGPerL > 500:
		return fmt.Errorf("leach: reductant recipe %g g/L must lie from 0 to 500", o.RecipeReductantGPerL)
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
