package run_test

import (
	"errors"
	"io/fs"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/run"
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
