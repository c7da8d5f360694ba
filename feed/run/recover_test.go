package run_test

import (
	"errors"
	"io/fs"
	"math"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/run"
	"blackmass/feed/value"
)

// The demo lot leached on each route and taken through the default flowsheet closes every
// element's balance in every sample, and stays neutral.
func TestEstimateRecoverBalance(t *testing.T) {
	t.Parallel()
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	b, err := fs.ReadFile(data.FS, "demo/lot-KR-2611.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, route := range []cathode.Route{cathode.SulfuricPeroxide, cathode.Hydrochloric} {
		lo := leach.DefaultOptions()
		lo.Route = route
		lo.AcidWtPct = leach.DefaultAcidWtPct(route)
		fsheet := recover.DefaultFlowsheet()
		if route == cathode.Hydrochloric {
			fsheet.Steps[3].Product = "hydroxide" // no sulfate to crystallise on a chloride liquor
		}
		o := run.Options{Seed: 5, Samples: 500, Leach: &lo, Recover: &fsheet}
		r, err := run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: strings.NewReader(string(b))})
		if err != nil {
			t.Fatalf("%s: %v", route, err)
		}
		if r.Recovery == nil {
			t.Fatalf("%s: no recovery", route)
		}
		for el, res := range r.Recovery.BalanceResidual {
			if !(res < 1e-3) {
				t.Errorf("%s: %s balance residual %g", route, el, res)
			}
		}
		if !(r.Recovery.ChargeResidual < 1e-9) || !(r.Recovery.WaterResidual < 1e-9) {
			t.Errorf("%s: charge %g, water %g", route, r.Recovery.ChargeResidual, r.Recovery.WaterResidual)
		}
	}
	o := run.Options{Seed: 5, Samples: 100, Recover: &recover.Flowsheet{Steps: recover.DefaultFlowsheet().Steps}}
	_, err = run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: strings.NewReader(string(b))})
	var oe *run.OptionError
	if !errors.As(err, &oe) || oe.Option != "recover" {
		t.Errorf("recovery without a leach: %v", err)
	}
}

// The order sheet holds the recovery's reagents after the leach's, each as bought at the
// recovery's P50 and P90 (the same numbers the recovery plan reports), priced from the
// recovery prices (cost = P90 kg × price); air is not ordered; recovery prices in another
// currency than --currency are refused. The demo's products are valued at the prices file's
// product rows.
func TestOrderHoldsRecoveryReagents(t *testing.T) {
	t.Parallel()
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	b, err := fs.ReadFile(data.FS, "demo/lot-KR-2611.csv")
	if err != nil {
		t.Fatal(err)
	}
	lo := leach.DefaultOptions()
	fsheet := recover.DefaultFlowsheet()
	rp := &recover.ReagentPrices{File: "rp.csv", Currency: "EUR", PerKg: map[string]float64{"NaOH": 0.45}, Line: map[string]int{"NaOH": 2}}
	pl := &value.PriceList{File: "p.csv", Currency: "EUR", Products: []value.ProductPrice{{Item: "Ni(OH)2", PerKg: 9, Source: "x"}}}
	o := run.Options{Seed: 5, Samples: 300, Leach: &lo, Recover: &fsheet, RecoverPrices: rp, Prices: pl,
		Containers: value.DefaultContainers()}
	r, err := run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: strings.NewReader(string(b))})
	if err != nil {
		t.Fatal(err)
	}
	lines := map[string]value.OrderLine{}
	leachSeen, recoverySeen := 0, 0
	for i, l := range r.Order.Lines {
		lines[l.Reagent] = l
		switch l.Stage {
		case value.StageLeach:
			leachSeen++
			if recoverySeen > 0 {
				t.Errorf("line %d: a leach reagent after the recovery's", i)
			}
		case value.StageRecovery:
			recoverySeen++
		}
	}
	if leachSeen == 0 || recoverySeen == 0 {
		t.Fatalf("order %+v", r.Order.Lines)
	}
	for _, g := range r.Recovery.Reagents {
		l, ok := lines[g.OrderAs+" (recovery)"]
		if g.OrderAs == "" {
			if ok {
				t.Errorf("%s is not bought but ordered", g.Name)
			}
			continue
		}
		if !ok || l.Kg.P50 != g.Commercial.P50 || l.Kg.P90 != g.Commercial.P90 || (g.Litres == nil) != (l.Litres == nil) {
			t.Errorf("%s: order %+v, recovery %+v", g.Name, l, g)
			continue
		}
		if g.Name == "NaOH" {
			if l.CostP90 == nil || !near(*l.CostP90, g.Commercial.P90*0.45, 1e-6) || l.Suggested == nil {
				t.Errorf("NaOH line %+v", l)
			}
		} else if l.CostP90 != nil {
			t.Errorf("%s priced without a price: %+v", g.Name, l)
		}
	}
	v := r.Recovery.Value
	if v == nil || len(v.Items) != 1 || v.Items[0].Name != "Ni(OH)2" || !near(v.Items[0].Value.Mean, 9*v.Items[0].DryKg.Mean, 1e-6) {
		t.Errorf("product value %+v", v)
	}
	lo2 := lo
	o.Leach, o.LeachPrices = &lo2, leach.Prices{Currency: "USD"}
	o.Prices = nil
	if _, err := run.Estimate(tb, o, run.Manifest{Name: "demo.csv", R: strings.NewReader(string(b))}); err == nil ||
		!strings.Contains(err.Error(), "rp.csv") {
		t.Errorf("currencies that disagree: %v", err)
	}
}

func near(a, b, rel float64) bool { return math.Abs(a-b) <= rel*math.Abs(b) }
