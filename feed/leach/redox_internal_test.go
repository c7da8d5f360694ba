package leach

import (
	"math"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
	"blackmass/data"
	"blackmass/data/datatest"
)

// Every reductant's half-reaction balances: reductant + w H2O → products + h H+ + e e−, with the
// products SO4²− (sulfate), Na+ (sodium), O2, and for ascorbic acid dehydroascorbic acid C6H6O6.
// Elements and charge are counted from the formulas, so a wrong column in reductants.csv fails.
func TestReductantHalfReactionsBalance(t *testing.T) {
	all, err := LoadReductants(fsTables{data.FS}, cathode.DefaultElements())
	if err != nil {
		t.Fatal(err)
	}
	product := map[string]string{"C6H8O6": "C6H6O6"}
	for _, r := range all {
		t.Run(r.Key, func(t *testing.T) {
			f, err := cathode.ParseFormula(r.Formula)
			if err != nil {
				t.Fatal(err)
			}
			left := map[string]float64{"H": 2 * -r.WaterMol, "O": -r.WaterMol}
			for _, tm := range f.Terms() {
				left[tm.Symbol] += tm.Amount
			}
			right := map[string]float64{"S": r.SulfateMol, "O": 4*r.SulfateMol + 2*r.O2Mol, "Na": r.SodiumMol, "H": r.HPlusMol}
			if p, ok := product[r.Formula]; ok {
				pf, _ := cathode.ParseFormula(p)
				for _, tm := range pf.Terms() {
					right[tm.Symbol] += tm.Amount
				}
			}
			for _, el := range []string{"H", "O", "S", "Na", "C"} {
				if math.Abs(left[el]-right[el]) > 1e-12 {
					t.Errorf("%s: %g on the left, %g on the right", el, left[el], right[el])
				}
			}
			charge := -2*r.SulfateMol + r.SodiumMol + r.HPlusMol - r.ElectronsMol
			if math.Abs(charge) > 1e-12 {
				t.Errorf("charge on the right %g, want 0", charge)
			}
		})
	}
}

// Electrons close in every sample: what the metals of the solids take (their oxidation-state
// change as they dissolve, from the species' states) equals what the metals of the feed, the
// reductant and chloride give, less what goes to H2 and to the peroxide acting as oxidant.
func TestLeachElectronsClose(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	reds, err := LoadReductants(fsTables{data.FS}, cathode.DefaultElements())
	if err != nil {
		t.Fatal(err)
	}
	h2o2, _ := FindReductant(reds, "H2O2")
	so2, _ := FindReductant(reds, "SO2")
	for _, e := range cat.Entries() {
		for _, route := range cathode.Routes() {
			for _, red := range []*Reductant{h2o2, so2} {
				for _, dose := range []float64{0.2, 0.6, 5} {
					var species []cathode.Species
					var mol []float64
					for _, x := range []struct {
						f string
						n float64
					}{{e.Formula.String(), 1}, {"Al", 0.1}, {"Cu", 0.1}, {"Fe", 0.05}} {
						f, _ := cathode.ParseFormula(x.f)
						sp, err := cathode.NewSpecies(f)
						if err != nil {
							t.Fatal(err)
						}
						species, mol = append(species, sp), append(mol, x.n)
					}
					r := red
					if route == cathode.Hydrochloric {
						r = nil
					}
					es := cathode.DefaultElements()
					in := redoxInput{route: route, species: species, mol: mol, plan: func(string) float64 { return 0.9 }, hPlus: dose * 8, red: r, redMol: dose,
						lost: 0.2, lattice: 0.3, metalE0: func(s string) float64 { return es.Lookup(s).StandardPotential }}
					res, err := leachSample(in)
					if err != nil {
						t.Fatal(err)
					}
					// Electrons taken by the oxide's metals: Σ (state − aqueous charge) over what
					// of them dissolved, computed from the liquor and the species' states.
					var taken float64
					ox := species[0]
					for _, tm := range ox.Formula.Terms() {
						z := cathode.AqueousCharge(tm.Symbol)
						if !cathode.IsMetal(tm.Symbol) || z == 0 || tm.Symbol == "Li" {
							continue
						}
						k := elementIndex(tm.Symbol)
						metalFromFeed := 0.0
						for c := 1; c < len(species); c++ {
							if species[c].Formula.Terms()[0].Symbol == tm.Symbol {
								metalFromFeed = -1 // the same element also came as metal: skip this check
							}
						}
						if metalFromFeed < 0 || k < 0 {
							continue
						}
						taken += (ox.State(tm.Symbol) - z) * res.liquorMol[k]
					}
					if route == cathode.SulfuricSelective && ox.Anion() == "phosphate" {
						continue // the phosphate's iron is oxidised into the residue: checked by the charge balance
					}
					// The oxides' own oxygen gives electrons (as O2) on the sulfuric routes only.
					if route == cathode.Hydrochloric && res.eFromLattice != 0 {
						t.Errorf("%s hydrochloric: %g e− from the oxides' oxygen", e.Key, res.eFromLattice)
					}
					given := res.eFromMetals + 2*res.cl2 + res.eFromLattice
					if r != nil {
						given += res.redUsed * r.ElectronsMol
					}
					if math.Abs(taken-given) > 1e-9*math.Max(1, math.Abs(taken)) {
						t.Errorf("%s %s %s dose %g: oxides took %.9g e−, were given %.9g", e.Key, route, red.Key, dose, taken, given)
					}
				}
			}
		}
	}
}

// The leach tables read their atomic weights from the same files: a changed sulfur weight
// changes the acid's and a reductant's molar mass (H2SO4 = 2 H + S + 4 O, CIAAW 2021 H 1.008,
// O 15.999, here with S = 33).
func TestLeachTablesOwnAtomicWeights(t *testing.T) {
	own := datatest.Edited(t, map[string]func(string) string{"atomic_weights.csv": func(s string) string {
		return strings.Replace(s, "S,sulfur,16,32.06,", "S,sulfur,16,33,", 1)
	}})
	lt, err := LoadTables(own)
	if err != nil {
		t.Fatal(err)
	}
	if m, want := lt.molarMassG("H2SO4"), 2*1.008+33+4*15.999; math.Abs(m-want) > 1e-9 {
		t.Errorf("H2SO4 with S = 33: %v g/mol, want %v", m, want)
	}
	for _, r := range lt.reductants {
		if strings.Contains(r.Formula, "S") && !strings.Contains(r.Formula, "Si") {
			f, err := cathode.DefaultElements().ParseFormula(r.Formula)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(r.MolarMassGMol-f.MolarMass(cathode.DefaultElements())-f.Moles("S")*(33-32.06)) > 1e-9 {
				t.Errorf("%s: %v g/mol does not use S = 33", r.Key, r.MolarMassGMol)
			}
			return
		}
	}
	t.Error("no sulfur reductant in the table")
}

// Acid alone on LiCoO2, the oxide's own oxygen giving every electron: 4 LiCoO2 + 6 H2SO4 →
// 2 Li2SO4 + 4 CoSO4 + 6 H2O + O2, so 3 H+ and 1/4 O2 per LiCoO2 (balanced by hand from the
// oxidation states: Co(III) → Co(II) takes 1 e−, 2 O(−II) → O2 gives 4).
func TestLatticeOxygenAcidOnlyLiCoO2(t *testing.T) {
	f, err := cathode.ParseFormula("LiCoO2")
	if err != nil {
		t.Fatal(err)
	}
	sp, err := cathode.NewSpecies(f)
	if err != nil {
		t.Fatal(err)
	}
	es := cathode.DefaultElements()
	in := redoxInput{route: cathode.SulfuricPeroxide, species: []cathode.Species{sp}, mol: []float64{1}, plan: func(string) float64 { return 1 },
		hPlus: math.Inf(1), lattice: 1, metalE0: func(s string) float64 { return es.Lookup(s).StandardPotential }}
	res, err := leachSample(in)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"Co dissolved (mol)", res.liquorMol[elementIndex("Co")], 1},
		{"H+ used (mol)", res.hPlusUsed, 3},
		{"O2 (mol)", res.o2, 0.25},
		{"electrons from the lattice", res.eFromLattice, 1},
	} {
		if math.Abs(c.got-c.want) > 1e-9 {
			t.Errorf("%s = %.9g, want %g", c.what, c.got, c.want)
		}
	}
	// With none of it, nothing reduces the Co(III): it stays in the residue.
	in.lattice = 0
	if res, err = leachSample(in); err != nil {
		t.Fatal(err)
	}
	if co := res.liquorMol[elementIndex("Co")]; co > 1e-9 {
		t.Errorf("Co dissolved without any electrons: %g mol", co)
	}
}

// The peroxide loss near boiling is the 80 °C row carried 10 °C up by the table's rule: the
// decomposition rate doubles every 10 °C, and for first-order decay the share left squares.
func TestPeroxideLossNearBoilingFollowsTheDoubling(t *testing.T) {
	lt, err := LoadTables(data.FS)
	if err != nil {
		t.Fatal(err)
	}
	at80, at90 := lt.peroxideLoss(80), lt.peroxideLoss(90)
	if at90.fromC != 90 || at80.fromC != 80 {
		t.Fatalf("rows from %g and %g °C, want 80 and 90", at80.fromC, at90.fromC)
	}
	for _, c := range []struct {
		name     string
		low, hot float64
	}{{"min", at80.r.Min, at90.r.Min}, {"mode", at80.r.Mode, at90.r.Mode}, {"max", at80.r.Max, at90.r.Max}} {
		if want := 1 - (1-c.low)*(1-c.low); math.Abs(c.hot-want) > 0.005 {
			t.Errorf("%s: %.3f at 90 °C, want %.3f from %.3f at 80 °C", c.name, c.hot, want, c.low)
		}
	}
}

// Solubility against temperature, g per 100 g water, from the CRC Handbook of Chemistry and
// Physics, 91st ed. (2010), 8-112 to 8-117 (the table's mass % converted): Li2SO4 34.23 at 25 °C,
// 31.23 at 90 °C and 30.89 at 100 °C (retrograde); MnSO4 62.87 at 20 °C and 40.45 at 90 °C;
// NiSO4 37.74 at 20 °C, rising; Al2(SO4)3 37.93 at 0 °C and 38.5 at 25 °C (no 20 °C value).
func TestSolubilityCurvesFromTheHandbook(t *testing.T) {
	lt, err := LoadTables(data.FS)
	if err != nil {
		t.Fatal(err)
	}
	salts := map[string]salt{}
	for _, sl := range lt.salts {
		salts[sl.name] = sl
	}
	for _, c := range []struct {
		salt     string
		tC, want float64
	}{
		{"Li2SO4", 25, 34.23},
		{"Li2SO4", 90, 31.23},
		{"Li2SO4", 95, (31.23 + 30.89) / 2}, // linear between the 90 and 100 °C values
		{"Li2SO4", 120, 30.89},              // held flat beyond the table
		{"MnSO4", 90, 40.45},
		{"Al2(SO4)3", 20, 37.93 + 0.8*(38.5-37.93)}, // between 0 and 25 °C across the gap
	} {
		if got := salts[c.salt].gPer100gAt(c.tC); math.Abs(got-c.want) > 1e-9 {
			t.Errorf("%s at %g °C: %v g/100 g water, want %v", c.salt, c.tC, got, c.want)
		}
	}
	for _, c := range []struct {
		salt              string
		lo, hi, want, atC float64
	}{
		{"MnSO4", 20, 90, 40.45, 90}, // falls when hot: the hot leach binds
		{"NiSO4", 20, 90, 37.74, 20}, // rises: the cooled liquor binds
		{"CoSO4", 20, 90, 35.32, 20}, // peaks near 60 °C, least at 20 °C
		{"MnSO4", 20, 25, 62.87, 20},
	} {
		g, at := salts[c.salt].leastSoluble(c.lo, c.hi)
		if math.Abs(g-c.want) > 1e-9 || at != c.atC {
			t.Errorf("%s between %g and %g °C: least %v at %g °C, want %v at %g °C", c.salt, c.lo, c.hi, g, at, c.want, c.atC)
		}
	}
}

func TestSamplePct(t *testing.T) {
	for share, want := range map[float64]string{0: "0 %", 0.002: "under 1 %", 0.005: "1 %", 0.25: "25 %", 1: "100 %"} {
		if got := samplePct(share); got != want {
			t.Errorf("samplePct(%v) = %q, want %q", share, got, want)
		}
	}
}

// A solubility table with a bad column or value is refused, naming the file, line and column.
func TestSolubilityTableErrors(t *testing.T) {
	for name, edit := range map[string]func(string) string{
		"negative": func(s string) string { return strings.Replace(s, "Li2SO4,Li,SO4,35.69,", "Li2SO4,Li,SO4,-35.69,", 1) },
		"no unit":  func(s string) string { return strings.Replace(s, "g_per_100g_water_0C,", "g_per_100g_water_0,", 1) },
		"empty": func(s string) string {
			return strings.Replace(s, "Li2SO4,Li,SO4,35.69,34.95,34.41,34.23,33.87,33.33,32.98,32.45,32.1,31.58,31.23,30.89,", "Li2SO4,Li,SO4,,,,,,,,,,,,,", 1)
		},
	} {
		_, err := LoadTables(datatest.Edited(t, map[string]func(string) string{"solubility.csv": edit}))
		t.Logf("%s: %v", name, err)
		if err == nil || !strings.Contains(err.Error(), "solubility.csv:") {
			t.Errorf("%s: %v", name, err)
		}
	}
}
