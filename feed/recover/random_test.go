package recover_test

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

// Random liquors (any subset of elements, either anion, little or much acid, Fe(II) or Fe(III))
// through random flowsheets: every number of the report finite, the balance closed, for every seed.
func TestRandomLiquorsStayFinite(t *testing.T) {
	t.Parallel()
	tb := tables(t)
	rng := rand.New(rand.NewPCG(42, 1))
	els := []string{"Li", "Ni", "Co", "Mn", "Al", "Fe", "Cu", "P", "F", "Na", "Ca", "Mg", "Zn"}
	pick := func(xs []string) string { return xs[rng.IntN(len(xs))] }
	for k := range 60 {
		g := map[string]float64{}
		for _, el := range els {
			if rng.Float64() < 0.6 {
				g[el] = math.Pow(10, -3+4*rng.Float64())
			}
		}
		if len(g) == 0 {
			g["Li"] = 1
		}
		lq := liquor(50, 1+2000*rng.Float64(), g, 2*rng.Float64(), rng.Float64(), uint64(k))
		fs := recover.DefaultFlowsheet()
		if rng.Float64() < 0.3 {
			lq.Anion = "Cl"
			fs.Steps[3].Product = pick([]string{"electrowin", "hydroxide", "carbonate"})
		} else {
			fs.Steps[3].Product = pick([]string{"electrowin", "hydroxide", "carbonate", "sulfate"})
		}
		fs.Steps[0].Base = pick([]string{"NaOH", "Ca(OH)2", "LiOH", "Na2CO3", "CaCO3"})
		fs.Steps[0].FeOxidant = pick([]string{"H2O2", "air"})
		fs.Steps[0].PH = 2 + 4*rng.Float64()
		if fs.Steps[0].PH > 6.3 {
			fs.Steps[0].Base = "NaOH"
		}
		fs.Steps[1].Oxidant = pick([]string{"KMnO4", "NaClO", "O3", "SO2", "Na2S2O8"})
		fs.Steps[1].Base = "NaOH"
		fs.Steps[2].PH = 3 + 3*rng.Float64()
		fs.Steps[2].OA = 0.2 + 5*rng.Float64()
		fs.Steps[4].Product = pick([]string{"electrowin", "hydroxide", "carbonate"})
		fs.Steps[5].Product = pick([]string{"carbonate", "phosphate"})
		fs.Steps[5].Evaporate = 0.9 * rng.Float64()
		r, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: fs, Tables: tb, Draws: dist.NewDrawer(uint64(k), 50),
			Prices: &recover.ProductPrices{Currency: "EUR", PerKg: map[string]float64{"Co": 20, "Li2CO3": 10}}})
		if err != nil {
			t.Fatalf("case %d: %v", k, err)
		}
		if path := nonFinite(reflect.ValueOf(r), "report"); path != "" {
			t.Fatalf("case %d: non-finite %s (%v, %v)", k, path, g, fs)
		}
		for el, res := range r.BalanceResidual {
			if !(res < 1e-3) {
				t.Errorf("case %d: %s residual %g", k, el, res)
			}
		}
		if !(r.ChargeResidual < 1e-9) || !(r.WaterResidual < 1e-9) {
			t.Errorf("case %d: charge %g water %g", k, r.ChargeResidual, r.WaterResidual)
		}
	}
}

func nonFinite(v reflect.Value, path string) string {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return ""
		}
		return nonFinite(v.Elem(), path)
	case reflect.Float64:
		if math.IsNaN(v.Float()) || math.IsInf(v.Float(), 0) {
			return path
		}
	case reflect.Struct:
		for i := range v.NumField() {
			if v.Type().Field(i).IsExported() {
				if p := nonFinite(v.Field(i), path+"."+v.Type().Field(i).Name); p != "" {
					return p
				}
			}
		}
	case reflect.Slice:
		for i := range v.Len() {
			if p := nonFinite(v.Index(i), path); p != "" {
				return p
			}
		}
	case reflect.Map:
		for _, k := range v.MapKeys() {
			if p := nonFinite(v.MapIndex(k), path+"."+k.String()); p != "" {
				return p
			}
		}
	}
	return ""
}

// A liquor far too strong (every metal at hundreds of g/L) still gives finite numbers, with warnings.
func TestConcentratedLiquor(t *testing.T) {
	t.Parallel()
	g := map[string]float64{"Fe": 300, "Al": 200, "Ni": 300, "Co": 300, "Mn": 300, "Li": 100, "Cu": 100, "P": 100}
	r := plan(t, liquor(30, 1, g, 5, 0, 2), recover.DefaultFlowsheet(), 30)
	if p := nonFinite(reflect.ValueOf(r), "report"); p != "" {
		t.Fatalf("non-finite %s", p)
	}
	for el, res := range r.BalanceResidual {
		if !(res < 1e-3) {
			t.Errorf("%s residual %g", el, res)
		}
	}
	if len(r.Warnings) == 0 {
		t.Error("no warning for a liquor this strong")
	}
}
