package recover_test

import (
	"fmt"
	"testing"

	"blackmass/feed/recover"
)

// Every element that enters (liquor and reagents) leaves as products, cakes, gases or the
// solutions left, to 0.1 % in every sample, and every solution stays neutral, for every choice
// of base, oxidant and product.
func TestBalanceEveryChoice(t *testing.T) {
	t.Parallel()
	variants := map[string]func(*recover.Flowsheet){
		"default": func(*recover.Flowsheet) {},
		"lime":    func(f *recover.Flowsheet) { f.Steps[0].Base = "Ca(OH)2"; f.Steps[1].Base = "CaCO3" },
		"soda":    func(f *recover.Flowsheet) { f.Steps[0].Base = "Na2CO3"; f.Steps[0].FeOxidant = "air" },
		"lioh":    func(f *recover.Flowsheet) { f.Steps[0].Base = "LiOH" },
		"naclo":   func(f *recover.Flowsheet) { f.Steps[1].Oxidant = "NaClO"; f.Steps[3].Product = "hydroxide" },
		"ozone":   func(f *recover.Flowsheet) { f.Steps[1].Oxidant = "O3"; f.Steps[3].Product = "carbonate" },
		"so2":     func(f *recover.Flowsheet) { f.Steps[1].Oxidant = "SO2"; f.Steps[3].Product = "sulfate" },
		"persulfate": func(f *recover.Flowsheet) {
			f.Steps[1].Oxidant = "Na2S2O8"
			f.Steps[4].Product = "carbonate"
			f.Steps[5].Product = "phosphate"
		},
		"ni-ew":   func(f *recover.Flowsheet) { f.Steps[4].Product = "electrowin"; f.Steps[5].Evaporate = 0.6 },
		"oxalate": func(f *recover.Flowsheet) { f.Steps[3].Product = "oxalate"; f.Steps[4].Product = "oxalate" },
		"ni-sulfate": func(f *recover.Flowsheet) {
			f.Steps[4].Product = "sulfate"
			f.Steps[2].Stages = 2
			f.Steps[2].OA = 2
		},
	}
	for name, edit := range variants {
		fs := recover.DefaultFlowsheet()
		edit(&fs)
		lq := liquor(400, 1000, nmcLiquor, 0.3, 0.5, 3)
		r := plan(t, lq, fs, 400)
		for el, res := range r.BalanceResidual {
			if !(res < 1e-3) {
				t.Errorf("%s: %s balance residual %g", name, el, res)
			}
		}
		if len(r.BalanceResidual) < 10 {
			t.Errorf("%s: only %d elements balanced: %v", name, len(r.BalanceResidual), r.BalanceResidual)
		}
		if !(r.ChargeResidual < 1e-9) {
			t.Errorf("%s: charge residual %g", name, r.ChargeResidual)
		}
		// The reagents to order add up every stage's: means are additive.
		for _, tot := range r.Reagents {
			sum := 0.0
			for _, st := range r.Stages {
				for _, g := range st.Reagents {
					if g.Name == tot.Name {
						sum += g.Kg.Mean
					}
				}
			}
			if !near(tot.Kg.Mean, sum, 1e-6) {
				t.Errorf("%s: %s total %g kg, stages add to %g", name, tot.Name, tot.Kg.Mean, sum)
			}
		}
		if testing.Verbose() {
			fmt.Println(name, r.BalanceResidual)
		}
	}
}
