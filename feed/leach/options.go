package leach

import (
	"fmt"
	"maps"
	"slices"

	"blackmass/cathode"
)

// Options sets the route and the dosing. Give either the planner's form (AcidExcess and
// FreeAcidMolPerL, ReductantExcess) or the bench recipe (RecipeAcidMolPerL and RecipeH2O2VolPct);
// PulpDensityGPerL or LiquorVolumeL fixes the volume. Validate holds each option to its range
// (Bounds); the reagent prices are a separate input (Prices).
type Options struct {
	Route cathode.Route `json:"route"`
	// AcidWtPct is the strength of the acid bought (e.g. 98 for H2SO4, 32 for HCl).
	AcidWtPct float64 `json:"acid_strength_wt_pct"`
	// H2O2WtPct is the strength of the peroxide bought (30, 35, 50).
	H2O2WtPct float64 `json:"h2o2_strength_wt_pct"`
	// AcidExcess is the acid as a factor over stoichiometry (planner form).
	AcidExcess float64 `json:"acid_excess_factor"`
	// FreeAcidMolPerL is the free acid to leave in the liquor, mol/L of acid (planner form).
	FreeAcidMolPerL float64 `json:"free_acid_target_mol_per_l"`
	// ReductantExcess is the factor over stoichiometric reductant (peroxide decomposes in parallel).
	ReductantExcess  float64 `json:"h2o2_excess_factor"`
	PulpDensityGPerL float64 `json:"pulp_density_g_per_l"`      // black mass per litre of liquor
	LiquorVolumeL    float64 `json:"liquor_volume_l,omitempty"` // alternatively a fixed liquor volume
	// Bench recipe: acid molarity of the lixiviant and peroxide as vol% of the commercial solution.
	RecipeAcidMolPerL float64 `json:"recipe_acid_mol_per_l,omitempty"`
	RecipeH2O2VolPct  float64 `json:"recipe_h2o2_vol_pct,omitempty"`
	// ExtractionOverride fixes the extraction of listed elements (0..1) instead of drawing it from
	// data/extraction.csv; the key "*" sets every metal.
	ExtractionOverride map[string]float64 `json:"extraction_override,omitempty"`
	// Reductant names the reductant of the sulfuric routes (H2O2, SO2, Na2S2O5, C6H8O6, or
	// "none"); the hydrochloric route adds none and ignores it.
	Reductant string `json:"reductant,omitempty"`
	// RecipeReductantGPerL doses a solid or gaseous reductant in g per litre of liquor.
	RecipeReductantGPerL float64 `json:"recipe_reductant_g_per_l,omitempty"`
	// TemperatureC is the leach temperature; it sets the share of peroxide that decomposes and
	// how much of the oxides' reduction their own oxygen gives when short of reductant.
	TemperatureC float64 `json:"temperature_C"`
	// GrowVolume lets the liquor volume grow to hold reagents that exceed it, instead of refusing.
	GrowVolume bool `json:"grow_volume,omitempty"`
}

// Prices are the reagent prices, per kg of each reagent as bought, in one currency. The zero
// value prices nothing: the plan then gives no cost.
type Prices struct {
	AcidPerKg      float64 `json:"acid_per_kg,omitempty"`      // per kg of commercial acid
	ReductantPerKg float64 `json:"reductant_per_kg,omitempty"` // per kg of the reductant as bought
	Currency       string  `json:"currency,omitempty"`         // "" when not said
}

// Priced reports whether any reagent has a price.
func (p Prices) Priced() bool { return p.AcidPerKg > 0 || p.ReductantPerKg > 0 }

// Validate holds each price to its range (Bounds); it changes nothing.
func (p Prices) Validate() error {
	if err := check("acid-price", p.AcidPerKg); err != nil {
		return err
	}
	return check("h2o2-price", p.ReductantPerKg)
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
	return Options{Route: cathode.SulfuricPeroxide, AcidWtPct: DefaultAcidWtPct(cathode.SulfuricPeroxide), H2O2WtPct: 30,
		AcidExcess: 1, FreeAcidMolPerL: 0.5, ReductantExcess: 1.5, PulpDensityGPerL: 100, Reductant: "H2O2", TemperatureC: 60}
}

// Bound is the one range an option may take: the planner refuses a value outside it, and a
// command line can print it beside the flag and check it with the same numbers.
type Bound struct {
	Name     string  // the option, as the command line names it
	Min, Max float64 // inclusive
	Unit     string
	Why      string // where the limits come from
}

// bounds are the options' ranges, by name. The acid strength's is the widest the density table
// covers for either acid; AcidStrengthBound narrows it to the route's acid.
func bounds() []Bound {
	return []Bound{
		{"acid-strength", 10, 100, "wt%", "the density table covers 10-100 % H2SO4 and 10-38 % HCl (CRC Handbook)"},
		{"h2o2-strength", 30, 70, "wt%", "the density table covers the commercial 30-70 % peroxide"},
		{"acid-excess", 1, 10, "× stoichiometry", "below 1 the acid cannot dissolve the planned extraction"},
		{"free-acid", 0, 10, "mol/L", "above any practical leach liquor"},
		{"h2o2-excess", 0, 10, "× stoichiometry", "a factor over stoichiometry"},
		{"pulp-density", 1, 1000, "g/L", "a slurry past 1000 g/L cannot be stirred"},
		{"liquor-volume", 0.001, 1e7, "L", "from 1 mL to 10,000 m³"},
		{"acid-molarity", 0.01, 18.4, "mol/L", "98 % sulfuric acid is 18.4 mol/L (CRC Handbook)"},
		{"h2o2-vol-pct", 0.01, 50, "vol%", "more than half the lixiviant as peroxide solution is no leach recipe"},
		{"reductant-g-per-l", 0.01, 500, "g/L", "g per litre of liquor"},
		{"temperature", 0, 110, "°C", "an open acid leach boils near 105 °C"},
		{"extraction", 0, 1, "fraction", "a share of the feed"},
		{"acid-price", 0, 1e6, "per kg", "a price per kg"},
		{"h2o2-price", 0, 1e6, "per kg", "a price per kg"},
	}
}

// Bounds returns every option's range (a fresh copy).
func Bounds() []Bound { return bounds() }

// BoundOf returns the range of the option named (as in Bounds); false if there is none.
func BoundOf(name string) (Bound, bool) {
	for _, b := range bounds() {
		if b.Name == name {
			return b, true
		}
	}
	return Bound{}, false
}

// hclMaxWtPct is the strongest hydrochloric acid the density table holds: concentrated HCl,
// about 38 % (CRC Handbook of Chemistry and Physics, concentrative properties of aqueous solutions).
const hclMaxWtPct = 38

// AcidStrengthBound is the acid strength's range on route r: 10-38 % for HCl, 10-100 % for H2SO4.
func AcidStrengthBound(r cathode.Route) Bound {
	b, _ := BoundOf("acid-strength")
	if r == cathode.Hydrochloric {
		b.Max = hclMaxWtPct
		b.Why = "the density table covers 10-38 % HCl (CRC Handbook)"
	}
	return b
}

// OptionError is an option outside its range, or one the planner cannot use: Option names it as
// the command line does.
type OptionError struct {
	Option string
	Msg    string
}

func (e *OptionError) Error() string { return "leach: " + e.Option + ": " + e.Msg }

// inBound checks v against b.
func inBound(b Bound, v float64) error {
	if !(v >= b.Min && v <= b.Max) {
		msg := fmt.Sprintf("%g is outside %g to %g %s (%s)", v, b.Min, b.Max, b.Unit, b.Why)
		return &OptionError{Option: b.Name, Msg: msg}
	}
	return nil
}

// check checks v against the named option's bound.
func check(name string, v float64) error {
	b, ok := BoundOf(name)
	if !ok {
		panic("leach: no bound for " + name)
	}
	return inBound(b, v)
}

// Validate holds every option to its one range (Bounds) and refuses settings the planner cannot
// use; it changes nothing. An error is an *OptionError naming the option.
func (o Options) Validate() error {
	if o.Route == cathode.RouteInvalid {
		return &OptionError{Option: "route", Msg: "not given"}
	}
	if err := inBound(AcidStrengthBound(o.Route), o.AcidWtPct); err != nil {
		return err
	}
	if o.Route != cathode.Hydrochloric && o.Reductant == "" {
		return &OptionError{Option: "reductant", Msg: `not given: name one (H2O2, SO2, Na2S2O5, C6H8O6) or "none"`}
	}
	always := []struct {
		name string
		v    float64
	}{{"h2o2-strength", o.H2O2WtPct}, {"free-acid", o.FreeAcidMolPerL}, {"h2o2-excess", o.ReductantExcess},
		{"temperature", o.TemperatureC}}
	for _, c := range always {
		if err := check(c.name, c.v); err != nil {
			return err
		}
	}
	// Options whose zero means "not given" (the other form of dosing is used).
	given := []struct {
		name string
		v    float64
		set  bool
	}{{"acid-excess", o.AcidExcess, o.RecipeAcidMolPerL == 0}, {"pulp-density", o.PulpDensityGPerL, o.LiquorVolumeL == 0},
		{"liquor-volume", o.LiquorVolumeL, o.LiquorVolumeL != 0},
		{"acid-molarity", o.RecipeAcidMolPerL, o.RecipeAcidMolPerL != 0},
		{"h2o2-vol-pct", o.RecipeH2O2VolPct, o.RecipeH2O2VolPct != 0},
		{"reductant-g-per-l", o.RecipeReductantGPerL, o.RecipeReductantGPerL != 0}}
	for _, c := range given {
		if c.set {
			if err := check(c.name, c.v); err != nil {
				return err
			}
		}
	}
	for _, el := range slices.Sorted(maps.Keys(o.ExtractionOverride)) {
		if err := check("extraction", o.ExtractionOverride[el]); err != nil {
			err.(*OptionError).Msg = el + " " + err.(*OptionError).Msg
			return err
		}
	}
	return nil
}
