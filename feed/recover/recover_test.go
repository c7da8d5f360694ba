package recover_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"blackmass/data"
	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

func tables(t testing.TB) *recover.Tables {
	t.Helper()
	tb, err := recover.LoadTables(data.FS)
	if err != nil {
		t.Fatal(err)
	}
	return tb
}

// liquor is a sulfate liquor of n samples around the given g/L (each sample's concentrations
// scaled by up to ±30 %), with free acid in mol/L H2SO4 and the Fe split by fe3Share.
func liquor(n int, vL float64, gPerL map[string]float64, acidMolPerL, fe3Share float64, seed uint64) recover.Liquor {
	rng := rand.New(rand.NewPCG(seed, 7))
	lq := recover.Liquor{Anion: "SO4", ElementKg: map[string][]float64{}}
	for range n {
		f := 0.7 + 0.6*rng.Float64()
		lq.VolumeL = append(lq.VolumeL, vL)
		lq.WaterKg = append(lq.WaterKg, vL*0.95)
		lq.FreeAcidMol = append(lq.FreeAcidMol, acidMolPerL*vL*f)
	}
	for el, g := range gPerL {
		for i := range n {
			f := 0.7 + 0.6*rng.Float64()
			lq.ElementKg[el] = append(lq.ElementKg[el], g*f*lq.VolumeL[i]/1000)
		}
	}
	if fe, ok := lq.ElementKg["Fe"]; ok {
		for _, kg := range fe {
			lq.Fe3Kg = append(lq.Fe3Kg, kg*fe3Share)
		}
	}
	return lq
}

// nmcLiquor is a sulfate leach liquor of mixed NMC black mass (g/L).
var nmcLiquor = map[string]float64{"Li": 3.5, "Ni": 10, "Co": 10, "Mn": 9.5, "Al": 2, "Fe": 1, "Cu": 1.5, "P": 0.3, "F": 0.5}

func plan(t testing.TB, lq recover.Liquor, fs recover.Flowsheet, n int) *recover.Report {
	t.Helper()
	samples := n
	if n == 1 {
		samples = 0
	}
	r, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: fs, Tables: tables(t), Draws: dist.NewDrawer(11, samples)})
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func near(a, b, rel float64) bool { return math.Abs(a-b) <= rel*math.Abs(b) }
