package cathode_test

import (
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/data/datatest"
)

func approx(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g ± %g", what, got, want, tol)
	}
}

func mustFormula(t testing.TB, s string) cathode.Formula {
	t.Helper()
	f, err := cathode.ParseFormula(s)
	if err != nil {
		t.Fatalf("ParseFormula(%q): %v", s, err)
	}
	return f
}

func TestEmbeddedTablesLoad(t *testing.T) {
	if _, err := cathode.LoadElements(data.FS); err != nil {
		t.Fatal(err)
	}
	if _, err := cathode.LoadCatalogue(data.FS); err != nil {
		t.Fatal(err)
	}
}

func TestAtomicWeights(t *testing.T) {
	es := cathode.DefaultElements()
	for _, c := range []struct {
		sym  string
		want float64
	}{
		// CIAAW 2021 standard atomic weights (single values).
		{"Co", 58.933194}, {"Mn", 54.938043}, {"Al", 26.9815384}, {"Ni", 58.6934}, {"Fe", 55.845},
		{"P", 30.973761998}, {"F", 18.998403162}, {"Cu", 63.546},
		// IUPAC conventional values for interval elements (Meija et al. 2016 Table 3, kept in 2021).
		{"Li", 6.94}, {"S", 32.06}, {"Cl", 35.45}, {"H", 1.008}, {"O", 15.999}, {"C", 12.011},
	} {
		if got := es.Weight(c.sym); got != c.want {
			t.Errorf("Weight(%s) = %v, want %v", c.sym, got, c.want)
		}
	}
	for _, s := range strings.Fields("H Li C N O F Na Mg Al Si P S Cl K Ca Ti Mn Fe Co Ni Cu Zn") {
		if es.Lookup(s) == nil {
			t.Errorf("element %s missing from the table", s)
		}
	}
}

func TestFaraday(t *testing.T) {
	// CODATA 2018 (SI 2019): F = e·N_A exactly.
	approx(t, "F", cathode.FaradayCPerMol, 96485.33212, 1e-5)
	approx(t, "F/3600", cathode.FaradayAhPerMol, 26.80148, 1e-5)
	// Li equivalent of charge: 3600/F · Ar(Li) = 0.2589 g/Ah (derived from CODATA F and CIAAW Li).
	approx(t, "g Li per Ah", 6.94/cathode.FaradayAhPerMol, 0.2589, 0.0005)
}

func TestMolarMass(t *testing.T) {
	es := cathode.DefaultElements()
	// Expected values computed by hand from the CIAAW 2021 weights above (sum of n·Ar).
	for _, c := range []struct {
		formula string
		want    float64
	}{
		{"LiCoO2", 6.94 + 58.933194 + 2*15.999},                                    // 97.871
		{"LiFePO4", 6.94 + 55.845 + 30.973761998 + 4*15.999},                       // 157.755
		{"LiMn2O4", 6.94 + 2*54.938043 + 4*15.999},                                 // 180.812
		{"LiNi1/3Mn1/3Co1/3O2", 6.94 + (58.6934+54.938043+58.933194)/3 + 2*15.999}, // 96.460
		{"LiNi0.5Mn0.3Co0.2O2", 96.553},
		{"LiNi0.6Mn0.2Co0.2O2", 96.928},
		{"LiNi0.8Mn0.1Co0.1O2", 97.280},
		{"LiNi0.8Co0.15Al0.05O2", 96.082},
		{"CoSO4·7H2O", 58.933194 + 32.06 + 4*15.999 + 7*(2*1.008+15.999)},
		{"Al2(SO4)3", 342.131}, // computed from CIAAW 2021 standard atomic weights (2 Al + 3 S + 12 O)
		{"H2SO4", 98.072}, {"HCl", 36.458}, {"H2O2", 34.014}, {"LiPF6", 151.904},
	} {
		got := mustFormula(t, c.formula).MolarMass(es)
		approx(t, "M("+c.formula+")", got, c.want, 0.005)
	}
}

func TestMassFractions(t *testing.T) {
	es := cathode.DefaultElements()
	// Co is 60.2 wt% of LiCoO2 and Li 4.40 wt% of LiFePO4 (derived from CIAAW 2021).
	for _, c := range []struct {
		formula, sym string
		wantPct      float64
	}{
		{"LiCoO2", "Co", 60.215}, {"LiFePO4", "Li", 4.399}, {"LiFePO4", "Fe", 35.400},
		{"LiNi0.8Mn0.1Co0.1O2", "Ni", 48.268}, {"LiNi0.8Co0.15Al0.05O2", "Al", 1.404},
		{"LiMn2O4", "Mn", 60.768},
	} {
		for _, tm := range mustFormula(t, c.formula).MassFractions(es) {
			if tm.Symbol == c.sym {
				approx(t, c.sym+" wt% in "+c.formula, 100*tm.Amount, c.wantPct, 0.01)
			}
		}
	}
	sum := 0.0
	for _, tm := range mustFormula(t, "LiNi0.8Co0.15Al0.05O2").MassFractions(es) {
		sum += tm.Amount
	}
	approx(t, "sum of fractions", sum, 1, 1e-12)
}

func TestTheoreticalCapacity(t *testing.T) {
	es := cathode.DefaultElements()
	q := func(f string, n float64) float64 {
		return cathode.TheoreticalCapacityMAhPerG(n, mustFormula(t, f).MolarMass(es))
	}
	// Published theoretical capacities, to the 3 significant figures the literature gives:
	approx(t, "q(LiCoO2)", q("LiCoO2", 1), 274, 0.5)              // Nitta et al., Materials Today 18 (2015) 252, Table 1
	approx(t, "q(LiFePO4)", q("LiFePO4", 1), 170, 0.5)            // Padhi, Nanjundaswamy, Goodenough, J. Electrochem. Soc. 144 (1997) 1188
	approx(t, "q(LiMn2O4)", q("LiMn2O4", 1), 148, 0.5)            // Thackeray, David, Bruce, Goodenough, Mater. Res. Bull. 18 (1983) 461 (LiMn2O4: 148 mAh/g; from memory)
	approx(t, "q(NMC111)", q("LiNi1/3Mn1/3Co1/3O2", 1), 278, 0.5) // Ohzuku & Makimura, Chem. Lett. 30 (2001) 642 (LiCo1/3Ni1/3Mn1/3O2: 278 mAh/g; from memory)
	approx(t, "q(graphite as LiC6)", q("C6", 1), 372, 0.5)        // battery textbooks: 372 mAh/g
	approx(t, "q(Li4Ti5O12, 3 Li)", q("Li4Ti5O12", 3), 175, 0.5)  // battery textbooks: 175 mAh/g
}

func TestParseFormulaErrors(t *testing.T) {
	for _, c := range []struct {
		in   string
		want error
		pos  int
	}{
		{"", cathode.ErrEmptyFormula, 1},
		{"   ", cathode.ErrEmptyFormula, 4},
		{"LiXx2", cathode.ErrUnknownElement, 3},
		{"Li(CoO2", cathode.ErrSyntax, 3},
		{"LiCoO2)", cathode.ErrSyntax, 7},
		{"Li1/0CoO2", cathode.ErrCount, 3},
		{"Li0CoO2", cathode.ErrCount, 3},
		{"licoo2", cathode.ErrSyntax, 1},
		{"2", cathode.ErrSyntax, 2},
		{"CoSO4·", cathode.ErrSyntax, 8},
		{"Li()", cathode.ErrSyntax, 3},
		{"Co.", cathode.ErrCount, 3},
	} {
		_, err := cathode.ParseFormula(c.in)
		var fe *cathode.FormulaError
		if !errors.As(err, &fe) || !errors.Is(err, c.want) {
			t.Errorf("ParseFormula(%q) = %v, want a FormulaError wrapping %v", c.in, err, c.want)
			continue
		}
		if fe.Pos+1 != c.pos {
			t.Errorf("ParseFormula(%q): position %d, want %d (%v)", c.in, fe.Pos+1, c.pos, err)
		}
	}
}

func TestParseFormulaForms(t *testing.T) {
	es := cathode.DefaultElements()
	same := [][]string{
		{"CoSO4·7H2O", "CoSO4*7H2O", " CoSO4 * 7 H2O ", "CoSO11H14"},
		{"LiNi1/3Mn1/3Co1/3O2", "Li(Ni1Mn1Co1)1/3O2", "LiNi.333333333333333333Mn0.3333333333333333Co0.33333333333333333O2"},
		{"Al2(SO4)3", "Al2[SO4]3", "Al2S3O12"},
	}
	for _, group := range same {
		want := mustFormula(t, group[0]).MolarMass(es)
		for _, s := range group[1:] {
			approx(t, "M("+s+")", mustFormula(t, s).MolarMass(es), want, 1e-9)
		}
	}
	f := mustFormula(t, "LiNi0.8Mn0.1Co0.1O2")
	if got := f.Canonical(); got != "LiNi0.8Mn0.1Co0.1O2" {
		t.Errorf("Canonical = %q", got)
	}
}

// The atomic weights travel with what was read with them: a catalogue loaded from tables of its
// own computes molar masses and leach stoichiometry from those tables, not from the embedded
// ones.
func TestOwnAtomicWeights(t *testing.T) {
	own := datatest.Edited(t, map[string]func(string) string{"atomic_weights.csv": func(s string) string {
		return regexp.MustCompile(`(?m)^(Co,cobalt,27,)58\.933194`).ReplaceAllString(s, "${1}60")
	}})
	cat, err := cathode.LoadCatalogue(own)
	if err != nil {
		t.Fatal(err)
	}
	e := cat.Lookup("LCO")
	if m := e.MolarMassGPerMol(); math.Abs(m-(97.871-58.933194+60)) > 0.01 {
		t.Errorf("LiCoO2 with Co = 60: molar mass %v", m)
	}
	rx, err := cathode.Dissolve(e.Species, cathode.SulfuricPeroxide, nil)
	if err != nil {
		t.Fatal(err)
	}
	if perKg := rx.PerKg(1); math.Abs(perKg-1000/e.MolarMassGPerMol()) > 1e-9 {
		t.Errorf("per kg uses another table: %v", perKg)
	}
}
