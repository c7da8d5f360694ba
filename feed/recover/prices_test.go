package recover_test

import (
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
