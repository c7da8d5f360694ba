package calibrate

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"

	"blackmass/feed/dist"
)

// A calibration read from any bytes either fails its check or draws finite factors, not
// negative, for every key it holds, and predicts finite kg.
func FuzzCalibrationCheck(f *testing.F) {
	c, _, err := Fit(lotsOf(simLots(4, 12, "F")), DefaultOptions(simTime))
	if err != nil {
		f.Fatal(err)
	}
	good, _ := json.Marshal(c)
	f.Add(good)
	f.Add([]byte(`{"format":1,"created_at":"2026-11-30T09:00:00Z","elements":[{"element":"Co","factors":[{"family":"LCO",` +
		`"format":"","mean":0.8,"sd":0.1}],"covariance":[[0.01]],"family_factors":[{"family":"LCO","format":"","mean":0.8,` +
		`"sd":0.1}],"family_covariance":[[0.01]]}]}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		var c Calibration
		if json.Unmarshal(b, &c) != nil || c.Check() != nil {
			return
		}
		var keys []Key
		for _, e := range c.Elements {
			for _, fs := range [][]Factor{e.Factors, e.FamilyFactors} {
				for _, fa := range fs {
					keys = append(keys, Key{e.Element, fa.Family, fa.Format}, Key{e.Element, fa.Family, "other"})
				}
			}
		}
		for k, d := range c.Sampler(keys).Draw(rand.NewPCG(1, 2), 20) {
			for _, v := range d {
				if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
					t.Fatalf("key %+v: draw %v", keys[k], v)
				}
			}
		}
		for _, k := range keys {
			m, sd := c.Predict(Measure{Element: k.Element, EstimateSDKg: 1,
				Parts: []Part{{Family: k.Family, Format: k.Format, Kg: 10}}})
			if math.IsNaN(m) || math.IsInf(m, 0) || math.IsNaN(sd) || math.IsInf(sd, 0) {
				t.Fatalf("key %+v: predicted %v ± %v", k, m, sd)
			}
		}
	})
}

// DrawWith takes each element's draws from the drawer's stream of that element: the same for the
// same seed whatever else is drawn, and the posterior means with a drawer of 0 samples.
func TestDrawWith(t *testing.T) {
	t.Parallel()
	c, _ := fitOrFatal(t, lotsOf(simLots(6, 40, "S")), DefaultOptions(simTime))
	co, li := Key{"Co", "LCO", "pouch"}, Key{"Li", "LFP", "pack"}
	both := c.Sampler([]Key{co, li}).DrawWith(dist.NewDrawer(7, 300))
	alone := c.Sampler([]Key{li}).DrawWith(dist.NewDrawer(7, 300))
	if len(both[1]) != 300 || both[1][0] != alone[0][0] || both[1][299] != alone[0][299] {
		t.Error("Li's draws depend on whether Co is drawn")
	}
	e := c.element("Co")
	set, i := e.lookup(co.Family, co.Format)
	fs, _ := e.set(set)
	if m := c.Sampler([]Key{co}).DrawWith(dist.NewDrawer(7, 0)); len(m[0]) != 1 || m[0][0] != fs[i].Mean {
		t.Errorf("0 samples: %v, want the mean %v", m, fs[i].Mean)
	}
}
