package leach_test

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// Validate holds each option to its one range and names the option in a typed error; it
// changes nothing.
func TestValidateNamesTheOption(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		option string
		mut    func(*leach.Options)
	}{
		{"acid-excess", func(o *leach.Options) { o.AcidExcess = 0.1 }},
		{"acid-strength", func(o *leach.Options) { o.AcidWtPct = 1 }},
		{"acid-strength", func(o *leach.Options) { o.Route, o.AcidWtPct = cathode.Hydrochloric, 40 }},
		{"h2o2-strength", func(o *leach.Options) { o.H2O2WtPct = 1 }},
		{"h2o2-strength", func(o *leach.Options) { o.H2O2WtPct = 80 }},
		{"pulp-density", func(o *leach.Options) { o.PulpDensityGPerL = 0 }},
		{"liquor-volume", func(o *leach.Options) { o.LiquorVolumeL = -1 }},
		{"temperature", func(o *leach.Options) { o.TemperatureC = 120 }},
		{"h2o2-vol-pct", func(o *leach.Options) { o.RecipeH2O2VolPct = 60 }},
		{"reductant", func(o *leach.Options) { o.Reductant = "" }},
		{"route", func(o *leach.Options) { o.Route = cathode.RouteInvalid }},
		{"extraction", func(o *leach.Options) { o.ExtractionOverride = map[string]float64{"Co": 1.2} }},
	} {
		o := leach.DefaultOptions()
		c.mut(&o)
		before := o
		err := o.Validate()
		var oe *leach.OptionError
		if !errors.As(err, &oe) || oe.Option != c.option {
			t.Errorf("%s: got %v, want an *OptionError naming it", c.option, err)
		}
		if !reflect.DeepEqual(o, before) {
			t.Errorf("%s: Validate changed the options", c.option)
		}
		// Plan refuses it the same way.
		_, err = leach.PlanFor(tables(t), map[string]float64{"LiCoO2": 1}, o, 1, 10)
		if !errors.As(err, &oe) || oe.Option != c.option {
			t.Errorf("%s: Plan gave %v", c.option, err)
		}
	}
	if err := leach.DefaultOptions().Validate(); err != nil {
		t.Errorf("defaults refused: %v", err)
	}
	o := leach.DefaultOptions()
	o.Reductant = "unobtainium"
	var oe *leach.OptionError
	if _, err := leach.PlanFor(tables(t), map[string]float64{"LiCoO2": 1}, o, 1, 10); !errors.As(err, &oe) || oe.Option != "reductant" {
		t.Errorf("unknown reductant: %v", err)
	}
}

// Every value inside a bound is one the planner can use: the strengths' bounds lie inside the
// density tables, so a strength Validate accepts always has a density.
func TestBoundsInsideTheTables(t *testing.T) {
	t.Parallel()
	lt := tables(t)
	for _, c := range []struct {
		reagent string
		b       leach.Bound
	}{
		{"H2SO4", leach.AcidStrengthBound(cathode.SulfuricPeroxide)},
		{"HCl", leach.AcidStrengthBound(cathode.Hydrochloric)},
		{"H2O2", func() leach.Bound { b, _ := leach.BoundOf("h2o2-strength"); return b }()},
	} {
		for _, w := range []float64{c.b.Min, (c.b.Min + c.b.Max) / 2, c.b.Max} {
			if _, err := lt.Density(c.reagent, w); err != nil {
				t.Errorf("%s at %g wt%% (inside %s's bound): %v", c.reagent, w, c.b.Name, err)
			}
		}
	}
	for _, b := range leach.Bounds() {
		if !(b.Min <= b.Max) || b.Why == "" || b.Unit == "" {
			t.Errorf("bound %+v", b)
		}
	}
}

// The tables are required: no tables is an error, not the embedded ones.
func TestPlanRequiresTables(t *testing.T) {
	t.Parallel()
	_, err := leach.PlanFor(nil, map[string]float64{"LiCoO2": 1}, leach.DefaultOptions(), 1, 10)
	if err == nil || !strings.Contains(err.Error(), "tables") {
		t.Errorf("no tables: %v", err)
	}
}

// Prices are their own input: the cost is the dose as bought times the price.
func TestPricesCostTheDose(t *testing.T) {
	t.Parallel()
	o := leach.DefaultOptions()
	o.ExtractionOverride = map[string]float64{"*": 1}
	in := leach.Input{Formulas: []string{"LiCoO2"}, Kg: [][]float64{{1, 1}}, BlackMassKg: []float64{1, 1},
		Tables: tables(t), Prices: leach.Prices{AcidPerKg: 0.5, ReductantPerKg: 2, Currency: "EUR"}, Draws: dist.NewDrawer(1, 2)}
	lr, err := leach.Plan(in, o)
	if err != nil {
		t.Fatal(err)
	}
	want := lr.Reagents[0].Kg.P50*0.5 + lr.Reagents[1].Kg.P50*2
	near(t, "cost", lr.TotalCost.P50, want, 1e-9*want)
	if lr.Prices == nil || lr.Prices.Currency != "EUR" {
		t.Errorf("prices %+v", lr.Prices)
	}
	in.Prices.AcidPerKg = -1
	var oe *leach.OptionError
	if _, err := leach.Plan(in, o); !errors.As(err, &oe) || oe.Option != "acid-price" {
		t.Errorf("negative price: %v", err)
	}
}
