package run_test

import (
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/leach"
	"blackmass/feed/run"
)

// FuzzEstimate drives the whole chain (lines, Monte Carlo, leach, value, report) on arbitrary
// manifests and seeds: it either refuses the input or returns a report whose every number is
// finite (run.Estimate's guard) and whose percentiles are ordered.
func FuzzEstimate(f *testing.F) {
	f.Add("id,chemistry,format,capacity,count\na,NMC622,pouch,11 Wh,3\n", uint64(1))
	f.Add("chemistry,format,capacity,cells_per_pack,count,mass\n,cylindrical,2.5 Ah,,200,\nLFP,pack,960 Wh,15s4p,2,9 kg\n", uint64(3))
	f.Add("chemistry,format,capacity,count\nLi-ion,pouch,3.7V 2000mAh,5\nNiMH,cylindrical,2 Ah,4\n", uint64(42))
	f.Add("chemistry,format,capacity,count,mass\nLCO,pouch,,,12 kg\nTotal,,,,12 kg\n", uint64(7))
	tb, err := run.DefaultTables()
	if err != nil {
		f.Fatal(err)
	}
	lo := leach.DefaultOptions()
	f.Fuzz(func(t *testing.T, manifest string, seed uint64) {
		if len(manifest) > 4096 {
			t.Skip()
		}
		o := run.Options{Seed: seed, Samples: 40, Leach: &lo, UnknownAsPrior: true, KeepLines: true}
		r, err := run.Estimate(tb, o, run.Manifest{Name: "f.csv", R: strings.NewReader(manifest)})
		if err != nil {
			if strings.Contains(err.Error(), "non-finite") {
				t.Fatalf("valid input made a non-finite number: %v", err)
			}
			return
		}
		ordered := func(what string, s dist.Stat) {
			if !(s.P10 <= s.P50 && s.P50 <= s.P90) {
				t.Fatalf("%s: P10/P50/P90 %v/%v/%v out of order", what, s.P10, s.P50, s.P90)
			}
		}
		ordered("black mass", r.BlackMassKg)
		for k, a := range r.Elements {
			ordered(k, a.Kg)
		}
	})
}
