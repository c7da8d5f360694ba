package leach_test

import (
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/feed/leach"
)

// mixedFeed is a shredded lot of phosphate and layered-oxide cathodes with graphite and the foils'
// aluminium and copper, kg per kg of black mass.
var mixedFeed = map[string]float64{"LiFePO4": 0.25, "LiNi0.6Mn0.2Co0.2O2": 0.35, "C": 0.33, "Al": 0.04, "Cu": 0.03}

// On the selective (lithium-only) route the warnings do not contradict the numbers beside them:
// no "free acid runs out" beside free acid left in the liquor, no shortfall of the Co, Ni and Mn
// the route means to leave in the residue.
func TestSelectiveRouteWarningsAgreeWithLiquor(t *testing.T) {
	o := leach.DefaultOptions()
	o.Route = cathode.SulfuricSelective
	lr, err := leach.PlanFor(tables(t), mixedFeed, o, 1, 400)
	if err != nil {
		t.Fatal(err)
	}
	if lr.FreeAcidMolPerL.P10 <= 0.05 {
		t.Fatalf("free acid P10 %.3f mol/L: the planner's 0.5 mol/L target should leave acid", lr.FreeAcidMolPerL.P10)
	}
	for _, w := range lr.Warnings {
		if strings.Contains(w, "runs out") && !strings.Contains(w, "would run out") {
			t.Errorf("free acid %.2f mol/L (P10) left, yet: %q", lr.FreeAcidMolPerL.P10, w)
		}
		if strings.Contains(w, "Co, Ni and Mn extraction") {
			t.Errorf("the selective route leaves Co, Ni and Mn, yet: %q", w)
		}
	}
	// The reagents' ratio to full dissolution is against what the route dissolves: the oxides'
	// metals at most the top of their selective extraction ranges, so the planner's dose covers it.
	if r := lr.Reagents[0].RatioFull.P10; r < 1 {
		t.Errorf("acid %.2f× the selective route's full dissolution (P10), though dosed 1× plus free acid", r)
	}
}

// Every gas a warning names is in the gas table with its P50 and P90: hydrogen both as evolved
// and as the worst case the warning quotes, chlorine on the hydrochloric route.
func TestWarnedGasesInGasTable(t *testing.T) {
	for _, route := range cathode.Routes() {
		for _, red := range []string{"H2O2", "none"} {
			o := leach.DefaultOptions()
			o.Route, o.Reductant = route, red
			if route == cathode.Hydrochloric {
				o.AcidWtPct, o.Reductant = 32, "none"
			}
			lr, err := leach.PlanFor(tables(t), mixedFeed, o, 1, 200)
			if err != nil {
				t.Fatal(err)
			}
			for _, w := range lr.Warnings {
				var want []string
				switch {
				case strings.HasPrefix(w, "hydrogen"):
					want = []string{"H2", leach.H2WorstCase}
				case strings.HasPrefix(w, "chlorine"):
					want = []string{"Cl2"}
				}
				for _, g := range want {
					st, ok := lr.Gases[g]
					if !ok {
						t.Errorf("%s, %s: warning %q, but no %s row in the gas table %v", route, red, w, g, lr.Gases)
						continue
					}
					if st.M3STP.P90 < st.M3STP.P50 {
						t.Errorf("%s %s: P90 %g below P50 %g", route, g, st.M3STP.P90, st.M3STP.P50)
					}
				}
				if strings.HasPrefix(w, "hydrogen") && lr.Gases[leach.H2WorstCase].M3STP.P90 <= 0 {
					t.Errorf("%s: %q, but the worst case row is zero", route, w)
				}
			}
		}
	}
}
