package leach_test

import (
	"encoding/json"
	"runtime"
	"strings"
	"testing"

	"blackmass/feed/leach"
)

// The planner shares large sample counts out across processors. Its answers must not depend on
// how many there are: a plan is the same on one processor as on three, a refusal names the same
// volumes, and the count of samples whose volume grew is the whole lot's.
func TestPlanSameOnAnyProcessors(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	const samples = 20_000
	small := leach.DefaultOptions()
	// 1 kg of LiCoO2 (97.87 g/mol, CIAAW standard atomic weights: 10.2 mol) takes 1.5 mol H2SO4
	// per mol (2 LiCoO2 + 3 H2SO4 + H2O2), 15.3 mol or 1.50 kg: 1.53 kg of 98 % acid at 1.84 g/mL
	// (CRC Handbook, concentrative properties of aqueous solutions), 0.83 L of acid alone.
	small.LiquorVolumeL = 0.5
	grow := small
	grow.GrowVolume = true
	var plans, refusals [3]string
	for k, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		lr, err := leach.PlanFor(tables(t), mixedFeed, leach.DefaultOptions(), 3, samples)
		if err != nil {
			t.Fatal(err)
		}
		b, err := json.Marshal(lr)
		if err != nil {
			t.Fatal(err)
		}
		plans[k] = string(b)
		if _, err := leach.PlanFor(tables(t), map[string]float64{"LiCoO2": 1}, small, 3, samples); err == nil ||
			!strings.Contains(err.Error(), "alone take") {
			t.Fatalf("%d processors: %v, want the reagents refused for taking more than the volume", procs, err)
		} else {
			refusals[k] = err.Error()
		}
		lg, err := leach.PlanFor(tables(t), map[string]float64{"LiCoO2": 1}, grow, 3, samples)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(strings.Join(lg.Warnings, "\n"), "20000 of 20000 samples") {
			t.Errorf("%d processors: the grown volume's warning does not count every sample: %q", procs, lg.Warnings)
		}
	}
	for k := 1; k < 3; k++ {
		if plans[k] != plans[0] || refusals[k] != refusals[0] {
			t.Errorf("plan or refusal on %d processors differs from the one on 1:\n%s\n%s", k+1, refusals[k], refusals[0])
		}
	}
}
