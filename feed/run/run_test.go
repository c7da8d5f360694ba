package run_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
	"blackmass/data/datatest"
	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/intake"
	"blackmass/feed/leach"
	"blackmass/feed/lot"
	"blackmass/feed/manifest"
	"blackmass/feed/report"
	"blackmass/feed/run"
	"blackmass/feed/value"
)

// readCSV reads a CSV manifest into fn, dropping the reading's Info.
func readCSV(r io.Reader, name string, opt intake.Options, fn func(manifest.Line) error) error {
	_, err := intake.ReadCSV(r, name, opt, fn)
	return err
}

// embedded returns the embedded catalogue and model.
func embedded(t testing.TB) (*cathode.Catalogue, *lot.Model) {
	t.Helper()
	cat := cathodetest.Catalogue(t)
	m, err := lot.DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	return cat, m
}

func estimate(t testing.TB, manifest string, seed uint64, samples int) (*lot.Result, *lot.Samples) {
	t.Helper()
	cat, m := embedded(t)
	l := lot.NewLot(m, true)
	if err := readCSV(strings.NewReader(manifest), "test.csv", intake.Options{Catalogue: cat}, l.Add); err != nil {
		t.Fatal(err)
	}
	r, s, err := l.Estimate(seed, samples)
	if err != nil {
		t.Fatal(err)
	}
	return r, s
}

// runOn runs the whole chain on a CSV manifest with the tables given (nil: the embedded ones).
func runOn(t testing.TB, tb *run.Tables, manifest string, o run.Options) *report.Report {
	t.Helper()
	if tb == nil {
		var err error
		if tb, err = run.DefaultTables(); err != nil {
			t.Fatal(err)
		}
	}
	r, err := run.Estimate(tb, o, run.Manifest{Name: "t.csv", R: strings.NewReader(manifest)})
	if err != nil {
		t.Fatal(err)
	}
	return r
}

const mixed = `id,chemistry,format,capacity,cells_per_pack,count,mass
a,LCO,pouch,3000 mAh,,100,45 g
b,NMC622,module,5 kWh,12s2p,3,30 kg
c,LFP,pack,960 Wh,15s4p,2,9 kg
d,NCA,cylindrical,4.8 Ah,,50,69 g
e,Li-ion,cylindrical,2.5 Ah,,20,
f,LMO+NMC532 30/70,pack,90 Wh,5s2p,10,0.62 kg
`

// Ensure the elements sum to the black mass in every sample (conservation of mass).
func TestElementsSumToBlackMass(t *testing.T) {
	_, s := estimate(t, mixed, 1, 500)
	for i := range s.N {
		sum := 0.0
		for e := range s.Elements {
			sum += s.Elements[e][i]
		}
		if d := math.Abs(sum - s.BlackMass[i]); d > 1e-9*s.BlackMass[i] {
			t.Fatalf("sample %d: elements sum to %.12g kg, black mass %.12g kg", i, sum, s.BlackMass[i])
		}
		csum := 0.0
		for c := range s.Compounds {
			csum += s.Compounds[c][i]
		}
		if d := math.Abs(csum - s.BlackMass[i]); d > 1e-9*s.BlackMass[i] {
			t.Fatalf("sample %d: compounds sum to %.12g kg, black mass %.12g kg", i, csum, s.BlackMass[i])
		}
	}
}

// Doubling every count doubles every mass exactly, for lines of stated chemistry. (Lines of
// unknown chemistry are left out: their items each hold one chemistry, so twice the items
// scatter less around the prior, by design.)
func TestDoublingCountsDoublesMasses(t *testing.T) {
	known := strings.Replace(mixed, "e,Li-ion,cylindrical,2.5 Ah,,20,\n", "", 1)
	r1, _ := estimate(t, known, 3, 400)
	doubled := known
	for _, n := range []string{"100", "3", "2", "50", "10"} {
		doubled = strings.Replace(doubled, ","+n+",", fmt.Sprintf(",%d,", 2*atoi(n)), 1)
	}
	r2, _ := estimate(t, doubled, 3, 400)
	if r2.Lot.Items != 2*r1.Lot.Items {
		t.Fatalf("items %d, want %d", r2.Lot.Items, 2*r1.Lot.Items)
	}
	for sym, a := range r1.Elements {
		b := r2.Elements[sym]
		for _, p := range [][2]float64{{a.Kg.P10, b.Kg.P10}, {a.Kg.P50, b.Kg.P50}, {a.Kg.P90, b.Kg.P90}, {a.Kg.Mean, b.Kg.Mean}} {
			if math.Abs(p[1]-2*p[0]) > 1e-8*p[1] {
				t.Errorf("%s: %g kg doubled to %g", sym, p[0], p[1])
			}
		}
		if math.Abs(a.WtPct.P50-b.WtPct.P50) > 1e-6 {
			t.Errorf("%s: wt%% changed from %g to %g", sym, a.WtPct.P50, b.WtPct.P50)
		}
	}
}

func atoi(s string) int {
	var n int
	fmt.Sscan(s, &n)
	return n
}

func TestPercentilesOrdered(t *testing.T) {
	r, _ := estimate(t, mixed, 5, 1000)
	check := func(what string, s dist.Stat) {
		if !(s.P10 <= s.P50 && s.P50 <= s.P90) {
			t.Errorf("%s: P10 %g, P50 %g, P90 %g not ordered", what, s.P10, s.P50, s.P90)
		}
	}
	check("black mass", r.BlackMassKg)
	for k, a := range r.Elements {
		check(k+" kg", a.Kg)
		check(k+" wt%", a.WtPct)
	}
	for k, a := range r.Compounds {
		check(k, a.Kg)
	}
	for _, g := range r.Groups {
		check(g.Chemistry, g.BlackMassKg)
	}
}

func TestSeedReproducible(t *testing.T) {
	enc := func(r *lot.Result) []byte {
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	a, _ := estimate(t, mixed, 42, 2000)
	b, _ := estimate(t, mixed, 42, 2000)
	if !bytes.Equal(enc(a), enc(b)) {
		t.Fatal("same seed gave different JSON")
	}
	c, _ := estimate(t, mixed, 43, 2000)
	if bytes.Equal(enc(a), enc(c)) {
		t.Fatal("a different seed gave identical JSON")
	}
	for sym, x := range a.Elements {
		y := c.Elements[sym]
		if w := x.Kg.P90 - x.Kg.P10; math.Abs(x.Kg.P50-y.Kg.P50) > w {
			t.Errorf("%s: P50 moved %g with the seed, more than the P10–P90 width %g", sym, math.Abs(x.Kg.P50-y.Kg.P50), w)
		}
	}
}

func TestMassMismatchFlagged(t *testing.T) {
	// 3 Ah × 3.7 V = 11.1 Wh in 450 g is 25 Wh/kg: far below any LCO cell.
	r, _ := estimate(t, "id,chemistry,format,capacity,voltage,count,mass\nx1,LCO,pouch,3 Ah,3.7,10,450 g\n", 1, 100)
	if r.Lot.LinesFlaggedByMass != 1 || len(r.Lines[0].Flags) == 0 || !strings.Contains(strings.Join(r.Warnings, "\n"), "line 2 (x1)") {
		t.Errorf("mass mismatch not flagged: %+v %q", r.Lot, r.Warnings)
	}
}

func TestManifestForms(t *testing.T) {
	// Semicolons with a decimal comma, a BOM, comments, blank lines, synonyms and kWh: the same lot.
	a, _ := estimate(t, "chemistry,format,capacity,count\nNMC811,pouch,1.5 kWh,2\n", 1, 100)
	b, _ := estimate(t, "\ufeff# comment\nChem;Shape;Nameplate;Qty\n\nnmc-811;Pouch;1,5 kWh;2\n", 1, 100)
	if a.BlackMassKg != b.BlackMassKg {
		t.Errorf("forms differ: %+v vs %+v", a.BlackMassKg, b.BlackMassKg)
	}
	// Per-cell capacity of a pack with a series-parallel tag equals the pack capacity.
	c, _ := estimate(t, "chemistry,format,capacity,capacity_basis,voltage,cells_per_pack,count\nNMC811,pack,3 Ah,cell,3.6,10s4p,1\n", 1, 100)
	d, _ := estimate(t, "chemistry,format,capacity,cells_per_pack,count\nNMC811,pack,432 Wh,10s4p,1\n", 1, 100)
	if math.Abs(c.BlackMassKg.P50-d.BlackMassKg.P50) > 1e-9 {
		t.Errorf("per-cell %v vs per-pack %v", c.BlackMassKg, d.BlackMassKg)
	}
}

// Single-chemistry lots give black-mass compositions inside the typical ranges of leaching and
// characterisation papers (from memory, e.g. Vanderbruggen et al., Minerals Eng.
// 2021; Babanejad et al., J. Sustain. Metall. 2022), widened by 10 % relative because real fines
// also carry moisture, plastics and dust that the model leaves out.
func TestBlackMassCompositionRanges(t *testing.T) {
	type rng struct{ lo, hi float64 }
	for _, c := range []struct {
		line string
		want map[string]rng
	}{
		{"LCO,pouch,11 Wh", map[string]rng{"Co": {20, 35}, "Li": {3, 4.5}, "Al": {1, 6}, "Cu": {1, 6}, "C": {20, 35}, "F": {1, 3}}},
		{"NMC622,module,5 kWh", map[string]rng{"Co": {3, 10}, "Ni": {10, 27}, "Mn": {3, 10}, "Li": {3, 4.5}, "Al": {1, 5}, "Cu": {1, 5}, "C": {30, 45}, "F": {1, 3}}},
		{"NMC811,pouch,200 Wh", map[string]rng{"Co": {3, 10}, "Ni": {10, 27}, "Mn": {3, 10}, "Li": {3, 4.5}, "C": {30, 45}}},
		{"NCA,cylindrical,17 Wh", map[string]rng{"Co": {4, 6}, "Ni": {22, 28}, "Li": {3, 4}, "Al": {1, 5}, "Cu": {1, 5}, "C": {30, 40}}},
		{"LFP,prismatic,1 kWh", map[string]rng{"Fe": {18, 28}, "P": {10, 15}, "Li": {2, 3.5}, "Al": {1, 5}, "Cu": {1, 5}, "C": {25, 40}, "F": {1, 3}}},
	} {
		r, _ := estimate(t, "chemistry,format,capacity,count\n"+c.line+",100\n", 1, 500)
		for el, w := range c.want {
			got := r.Elements[el].WtPct.P50
			if got < 0.9*w.lo || got > 1.1*w.hi {
				t.Errorf("%s: %s %.2f wt%%, typical %g–%g", c.line, el, got, w.lo, w.hi)
			}
		}
	}
}

// Conservation and charge balance on a real lot, every route.
func TestLeachChargeBalanceAndScaling(t *testing.T) {
	for _, route := range cathode.Routes() {
		lr := leachLot(t, route, 100)
		if lr.Liquor.ChargeResidual > 1e-9 {
			t.Errorf("%s: liquor charge balance off by %.3g relative", route, lr.Liquor.ChargeResidual)
		}
		// Doubling pulp density halves the volume and doubles the concentrations.
		lr2 := leachLot(t, route, 200)
		nearly(t, route.String()+" volume", lr2.Liquor.VolumeL.P50, lr.Liquor.VolumeL.P50/2, 1e-6*lr.Liquor.VolumeL.P50)
		for el, c := range lr.Liquor.Elements {
			nearly(t, route.String()+" "+el+" g/L", lr2.Liquor.Elements[el].GPerL.P50, 2*c.GPerL.P50, 1e-6*c.GPerL.P50)
		}
	}
	// Zero extraction of an element gives none of it in the liquor.
	o := leach.DefaultOptions()
	o.ExtractionOverride = map[string]float64{"Co": 0}
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	lr, err := leach.PlanFor(tb.Leach, map[string]float64{"LiCoO2": 1, "LiNi0.8Mn0.1Co0.1O2": 1}, o, 1, 50)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := lr.Liquor.Elements["Co"]; ok {
		t.Errorf("Co in liquor with zero extraction: %+v", lr.Liquor.Elements["Co"])
	}
	if lr.Liquor.ChargeResidual > 1e-9 {
		t.Errorf("partial extraction: charge residual %g", lr.Liquor.ChargeResidual)
	}
}

func leachLot(t *testing.T, route cathode.Route, pulp float64) *leach.Report {
	t.Helper()
	o := leach.DefaultOptions()
	o.Route, o.PulpDensityGPerL = route, pulp
	if route == cathode.Hydrochloric {
		o.AcidWtPct = 32
	}
	return runOn(t, nil, mixed, run.Options{Seed: 1, Samples: 300, Leach: &o}).Leach
}

func nearly(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g ± %g", what, got, want, tol)
	}
}

// The lithium carbonate equivalent of 1 kg Li is M(Li2CO3)/(2·M(Li)) = 5.323 (the trade's LCE
// conversion factor; computed from CIAAW 2021 atomic weights).
func TestLCEFactor(t *testing.T) {
	nearly(t, "LCE per kg Li", value.LCEPerKgLi(), 5.323, 0.0005)
}

// Value: every element priced from the same draws, the lot's payable value is the sum of the
// elements' (per sample, so its mean is the sum of means), lithium priced as LCE; without a
// price list there is no value at all.
func TestLotValue(t *testing.T) {
	pl, err := intake.ReadPrices(strings.NewReader("item,basis,price_per_kg,currency,payable,source\nCo,metal,20,EUR,0.7,test\nLi,LCE,10,EUR,50%,test\nNi,metal,15,EUR,1,test\n"), "p.csv")
	if err != nil {
		t.Fatal(err)
	}
	with := func(prices *value.PriceList) *report.Report {
		return runOn(t, nil, mixed, run.Options{Seed: 2, Samples: 500, Prices: prices})
	}
	if r := with(nil); r.Value != nil {
		t.Errorf("value without prices: %+v", r.Value)
	}
	r := with(pl)
	v := r.Value
	if v == nil || v.Currency != "EUR" || len(v.Elements) != 3 {
		t.Fatalf("value %+v", v)
	}
	sum := 0.0
	for _, e := range v.Elements {
		sum += e.PayableVal.Mean
		if e.Element == "Li" {
			nearly(t, "Li priced kg", e.ProductKg.Mean, r.Elements["Li"].Kg.Mean*value.LCEPerKgLi(), 1e-6*e.ProductKg.Mean)
		}
		if e.Element == "Co" {
			nearly(t, "Co payable", e.PayableVal.Mean, r.Elements["Co"].Kg.Mean*20*0.7, 1e-6*e.PayableVal.Mean)
		}
	}
	nearly(t, "payable = Σ elements (means)", v.Payable.Mean, sum, 1e-6*sum)
	if len(v.Unpriced) == 0 || !slices.Contains(v.Unpriced, "Mn") {
		t.Errorf("unpriced metals not listed: %v", v.Unpriced)
	}
	for _, bad := range []struct{ in, want string }{
		{"item,price_per_kg,currency,payable,source\nCo,10,EUR,0.5,a\nNi,10,USD,0.5,b\n", "one currency"},
		{"item,price_per_kg,currency,payable,source\nCo,10,EUR,1.5,a\n", "payable share"},
		{"item,basis,price_per_kg,currency,payable,source\nCo,LCE,10,EUR,0.5,a\n", "LCE for lithium"},
		{"item,price_per_kg,currency,payable,source\nCo,NaN,EUR,0.5,a\n", "want a price"},
		{"item,price_per_kg,currency,payable,source\nCo,10,EUR,0.5,a\nCo,11,EUR,0.5,a\n", "priced twice"},
		{"item,price_per_kg,currency,payable\nCo,10,EUR,0.5\n", "source"},
	} {
		if _, err := intake.ReadPrices(strings.NewReader(bad.in), "p.csv"); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("ReadPrices(%q) = %v, want %q", bad.in, err, bad.want)
		}
	}
}

// The tables are passed in, not global: a lot estimated with tables of its own (here an
// extraction table capping Co at about 50 %) gives results that follow those tables.
func TestOwnTables(t *testing.T) {
	own := datatest.Edited(t, map[string]func(string) string{"extraction.csv": func(s string) string {
		return regexp.MustCompile(`(?m)^sulfuric-peroxide,Co,[^\n]*$`).ReplaceAllString(s, "sulfuric-peroxide,Co,0.49,0.5,0.51,test table")
	}})
	tb, err := run.LoadTables(own)
	if err != nil {
		t.Fatal(err)
	}
	lo := leach.DefaultOptions()
	r := runOn(t, tb, "chemistry,format,capacity,count\nLCO,pouch,11 Wh,100\n", run.Options{Seed: 1, Samples: 100, Leach: &lo})
	if x := r.Leach.Liquor.ExtractionReached["Co"].P50; x > 0.52 {
		t.Errorf("Co extraction %v with a table capping it at 0.51", x)
	}
}

// Cells of an older era hold more cathode per kWh than current ones of the same cathode: lower
// voltage and capacity (derived: kg per kWh = 1 / (V × mAh/g)). The era-unknown label lies between.
func TestEraChangesCathodePerKWh(t *testing.T) {
	for _, c := range []struct{ older, unstated, current, format string }{
		{"LCO-4.2V", "LCO", "LCO-HV", "pouch"},
		{"LFP-early", "LFP", "LFP-current", "prismatic"},
	} {
		cam := func(label string) float64 {
			r, _ := estimate(t, fmt.Sprintf("chemistry,format,capacity,count\n%s,%s,1 kWh,1\n", label, c.format), 1, 2000)
			return r.Groups[0].CathodeKg.P50
		}
		o, u, n := cam(c.older), cam(c.unstated), cam(c.current)
		if !(o > 1.1*n && u > n && u < o) {
			t.Errorf("%s %.3f, %s %.3f, %s %.3f kg cathode per kWh: want older > unstated > current", c.older, o, c.unstated, u, c.current, n)
		}
	}
}

// A quote from an assay is valued on the same draws as its metals: 100 kg of black mass at
// 10 wt% Co (σ 0.2) and 3.5 wt% Li, Co at 20 per kg with 70 % payable, Li at 10 per kg LCE
// with 50 % payable. LCE per kg Li = M(Li2CO3) / (2 M(Li)), from CIAAW 2021 atomic weights.
func TestQuoteValue(t *testing.T) {
	pl, err := intake.ReadPrices(strings.NewReader("item,basis,price_per_kg,currency,payable,source\nCo,metal,20,EUR,0.7,test\nLi,LCE,10,EUR,0.5,test\n"), "p.csv")
	if err != nil {
		t.Fatal(err)
	}
	a, err := intake.ReadAssay(strings.NewReader("element,value,unit,uncertainty\nCo,10,wt%,0.2\nLi,3.5,wt%,0.1\nC,40,wt%,1\n"), "a.csv")
	if err != nil {
		t.Fatal(err)
	}
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	lo := leach.DefaultOptions()
	quote := func(prices *value.PriceList) *report.Report {
		r, err := run.Quote(tb, run.Options{Seed: 3, Samples: 400, Leach: &lo, Prices: prices}, a, assay.QuoteOptions{BlackMassKg: 100})
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	if r := quote(nil); r.Value != nil {
		t.Errorf("value without prices: %+v", r.Value)
	}
	qr := quote(pl)
	v := qr.Value
	if v == nil || len(v.Elements) != 2 {
		t.Fatalf("value %+v", v)
	}
	for _, e := range v.Elements {
		switch e.Element {
		case "Co":
			nearly(t, "Co payable (mean)", e.PayableVal.Mean, qr.Elements["Co"].Kg.Mean*20*0.7, 1e-7*e.PayableVal.Mean) // summaries keep 9 significant digits
			nearly(t, "Co payable near 10 kg × 20 × 0.7", e.PayableVal.P50, 140, 3)
		case "Li":
			nearly(t, "Li as LCE (kg)", e.ProductKg.Mean, qr.Elements["Li"].Kg.Mean*value.LCEPerKgLi(), 1e-7*e.ProductKg.Mean)
		}
	}
	nearly(t, "payable per tonne of black mass", v.PayablePerTonneBM.Mean, v.Payable.Mean*10, 1e-6*v.Payable.Mean)
	if v.PayablePerKWh != nil {
		t.Error("a quote from an assay has no energy to value per kWh")
	}
}
