package recover_test

import (
	"slices"
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

// The reagents' cost is the as-bought mass times the price, added up (means are additive); the
// net is the products' value less it; a price for a reagent the tables do not know is refused
// by file and line.
func TestReagentCost(t *testing.T) {
	t.Parallel()
	lq := liquor(200, 1000, nmcLiquor, 0.3, 0.5, 4)
	rp := &recover.ReagentPrices{File: "p.csv", Currency: "EUR", PerKg: map[string]float64{"NaOH": 0.5, "KMnO4": 4},
		Line: map[string]int{"NaOH": 2, "KMnO4": 3}}
	pp := &recover.ProductPrices{Currency: "EUR", PerKg: map[string]float64{"Co": 20, "Li2CO3": 10}}
	r, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: recover.DefaultFlowsheet(), Tables: tables(t),
		Draws: dist.NewDrawer(1, 200), Prices: pp, ReagentPrices: rp})
	if err != nil {
		t.Fatal(err)
	}
	c := r.Cost
	want := 0.0
	for _, g := range r.Reagents {
		want += g.Commercial.Mean * rp.PerKg[g.Name]
	}
	if !near(c.Total.Mean, want, 1e-6) {
		t.Errorf("cost %g, want %g", c.Total.Mean, want)
	}
	if c.Net == nil || !near(c.Net.Mean, r.Value.Total.Mean-c.Total.Mean, 1e-6) {
		t.Errorf("net %+v, value %g, cost %g", c.Net, r.Value.Total.Mean, c.Total.Mean)
	}
	if len(c.Unpriced) == 0 {
		t.Error("H2O2 and the others have no price: they should be listed unpriced")
	}
	rp.PerKg["Unobtainium"], rp.Line["Unobtainium"] = 1, 4
	_, err = recover.Plan(recover.Input{Liquor: lq, Flowsheet: recover.DefaultFlowsheet(), Tables: tables(t),
		Draws: dist.NewDrawer(1, 200), ReagentPrices: rp})
	if err == nil || !strings.Contains(err.Error(), "p.csv:4: reagent: \"Unobtainium\"") {
		t.Errorf("unknown reagent: %v", err)
	}
}

// A product is valued at its own price, dry kg × price per kg sample by sample (so the mean of
// the value is the price times the mean of the dry mass); a cathode without its own price
// takes its metal's; the MnO2 cake is valued only when MnO2 is priced; a product with no price
// is listed unpriced and adds nothing.
func TestProductValue(t *testing.T) {
	t.Parallel()
	lq := liquor(200, 1000, nmcLiquor, 0.3, 0.5, 4)
	pp := &recover.ProductPrices{Currency: "EUR", PerKg: map[string]float64{"Li2CO3": 9.5, "Co": 24, "MnO2": 0.8},
		Source: map[string]string{"Li2CO3": "s1"}}
	r, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: recover.DefaultFlowsheet(), Tables: tables(t),
		Draws: dist.NewDrawer(1, 200), Prices: pp})
	if err != nil {
		t.Fatal(err)
	}
	dry := map[string]float64{}
	for _, p := range r.Products {
		dry[p.Name] = p.DryKg.Mean
	}
	for _, st := range r.Stages {
		for _, s := range st.Solids {
			dry[s.Name] = s.DryKg.Mean
		}
	}
	got := map[string]recover.PricedSolid{}
	total := 0.0
	for _, it := range r.Value.Items {
		got[it.Name] = it
		total += it.Value.Mean
	}
	for name, price := range map[string]float64{"Li2CO3": 9.5, "Co cathode": 24, "MnO2 cake": 0.8} {
		it, ok := got[name]
		if !ok {
			t.Errorf("%s not valued: %+v", name, r.Value)
			continue
		}
		if !(dry[name] > 0) || !near(it.Value.Mean, dry[name]*price, 1e-6) || !near(it.DryKg.Mean, dry[name], 1e-6) {
			t.Errorf("%s: value %g, want %g kg × %g", name, it.Value.Mean, dry[name], price)
		}
	}
	if got["Li2CO3"].Source != "s1" || got["Co cathode"].Item != "Co" {
		t.Errorf("sources %+v", got)
	}
	if !near(r.Value.Total.Mean, total, 1e-6) {
		t.Errorf("total %g, items %g", r.Value.Total.Mean, total)
	}
	if !slices.Contains(r.Value.Unpriced, "Ni(OH)2") {
		t.Errorf("unpriced %v", r.Value.Unpriced)
	}
	for _, name := range r.Value.Unpriced {
		if _, ok := got[name]; ok {
			t.Errorf("%s both priced and unpriced", name)
		}
	}
	for _, s := range []string{"CoSO4.7H2O", "cobalt sulfate heptahydrate", "coso4*7h2o"} {
		if k, ok := recover.LookupProduct(s); !ok || k != "CoSO4·7H2O" {
			t.Errorf("%q: %q %v", s, k, ok)
		}
	}
	if _, ok := recover.LookupProduct("CoSO4"); ok {
		t.Error("anhydrous CoSO4 is no product of the planner")
	}
}
