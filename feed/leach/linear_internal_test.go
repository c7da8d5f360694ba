package leach

import (
	"math/rand/v2"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
)

// The linear form of every catalogue cathode and of the other black-mass compounds on every
// route equals cathode.Dissolve at random extractions, and every one has a linear form (so the
// planner's fast path is the one taken).
func TestLinearDissolveMatchesDissolve(t *testing.T) {
	formulas := []string{"C2H2F2", "LiPF6", "Li2CO3", "LiF"}
	for _, e := range cathodetest.Catalogue(t).Entries() {
		formulas = append(formulas, e.Formula.String())
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for _, fs := range formulas {
		f, err := cathode.ParseFormula(fs)
		if err != nil {
			t.Fatal(err)
		}
		sp, err := cathode.NewSpecies(f)
		if err != nil {
			t.Fatal(err)
		}
		if sp.Inert() || sp.Metallic() {
			continue
		}
		for _, route := range cathode.Routes() {
			lr := newLinearRx(sp, route)
			if lr == nil {
				t.Errorf("%s on %s: no linear form", fs, route)
				continue
			}
			// The indexed extraction equals the pass's, at a random plan and shares.
			if lr.indexed {
				var planAt [nLeachElements]float64
				for k := range planAt {
					planAt[k] = rng.Float64()
				}
				plan := func(s string) float64 {
					if k := elementIndex(s); k >= 0 {
						return planAt[k]
					}
					return 1
				}
				ps := &pass{in: redoxInput{route: route, plan: plan}, fRed: rng.Float64(), fAcid: rng.Float64()}
				xs := make([]float64, len(lr.metals))
				if !lr.extractions(xs, &planAt, ps.fAcid, ps.fRed) {
					t.Fatalf("%s: extraction out of range", fs)
				}
				ext := ps.extraction(sp)
				for i, m := range lr.metals {
					if xs[i] != ext(m) {
						t.Errorf("%s on %s: %s indexed %v, pass %v", fs, route, m, xs[i], ext(m))
					}
				}
			}
			for range 20 {
				x := map[string]float64{}
				xs := make([]float64, len(lr.metals))
				for i, m := range lr.metals {
					xs[i] = rng.Float64()
					x[m] = xs[i]
				}
				rx, err := cathode.Dissolve(sp, route, func(s string) float64 { return x[s] })
				if err != nil {
					t.Fatal(err)
				}
				if got, want := lr.at(xs), vecOf(rx); !lr.agrees(got, want) {
					t.Errorf("%s on %s at %v: linear %+v, Dissolve %+v", fs, route, x, got, want)
				}
			}
		}
	}
}
