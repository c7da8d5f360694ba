package cathode_test

import (
	"math"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
)

func FuzzParseFormula(f *testing.F) {
	for _, s := range []string{"LiCoO2", "LiNi1/3Mn1/3Co1/3O2", "CoSO4·7H2O", "Al2(SO4)3", "Li(Ni0.8(Co)0.15)Al0.05O2", "((((", "1/0", "C6*2H2O"} {
		f.Add(s)
	}
	es := cathode.DefaultElements()
	f.Fuzz(func(t *testing.T, s string) {
		fm, err := cathode.ParseFormula(s)
		if err != nil {
			return
		}
		m := fm.MolarMass(es)
		if !(m > 0) || math.IsInf(m, 0) {
			t.Fatalf("%q: molar mass %v", s, m)
		}
		sum := 0.0
		for _, tm := range fm.MassFractions(es) {
			if tm.Amount < 0 {
				t.Fatalf("%q: negative fraction", s)
			}
			sum += tm.Amount
		}
		if math.Abs(sum-1) > 1e-9 {
			t.Fatalf("%q: fractions sum to %v", s, sum)
		}
		again, err := cathode.ParseFormula(fm.Canonical())
		if err != nil {
			t.Fatalf("%q: canonical %q does not parse: %v", s, fm.Canonical(), err)
		}
		if math.Abs(again.MolarMass(es)-m) > 1e-9*m {
			t.Fatalf("%q: canonical %q changes the molar mass", s, fm.Canonical())
		}
		if sp, err := cathode.NewSpecies(fm); err == nil {
			for _, r := range cathode.Routes() {
				_, _ = cathode.Dissolve(sp, r, nil)
			}
		}
	})
}

func FuzzParseLabel(f *testing.F) {
	cat := cathodetest.Catalogue(f)
	for _, s := range []string{"NMC811", "NCM 8:1:1", "LMO+NMC532 70/30", "Li-ion", "LiNi0.9Mn0.05Co0.05O2", "nmc(9.5.5)", "+", "NMC 0:0:0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		ch, err := cat.ParseLabel(s)
		if err != nil {
			return
		}
		sum := 0.0
		for _, c := range ch.Components {
			if !(c.MassFraction >= 0) {
				t.Fatalf("%q: fraction %v", s, c.MassFraction)
			}
			sum += c.MassFraction
		}
		if math.Abs(sum-1) > 1e-9 || ch.Key == "" {
			t.Fatalf("%q: fractions sum to %v, key %q", s, sum, ch.Key)
		}
	})
}
