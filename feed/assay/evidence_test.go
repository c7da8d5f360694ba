package assay_test

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/intake"
	"blackmass/feed/leach"
)

// readTestAssay reads an assay of the invented scenario in testdata/assay.
func readTestAssay(t *testing.T, name string) *assay.Assay {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "assay", name)
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	a, err := intake.ReadAssay(f, name)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// peroxideKgPerKg quotes 1 kg of the assay at full extraction and returns the stoichiometric
// H2O2 (pure) with the quote.
func peroxideKgPerKg(t *testing.T, a *assay.Assay, ml assay.MissingLi) (float64, *assay.Quote) {
	t.Helper()
	o := leach.DefaultOptions()
	o.ExtractionOverride = map[string]float64{"*": 1}
	q, err := assay.QuoteFrom(a, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 1, Samples: 20, Seed: 1, Leach: o, MissingLi: ml})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range q.Leach.Reagents {
		if strings.HasPrefix(r.Name, "H2O2") {
			return r.StoichKg.P50, q
		}
	}
	t.Fatal("no H2O2 in the quote")
	return 0, nil
}

// An assay without lithium is not read as Co(IV) oxide: by default the stoichiometric lithium of
// LiCoO2 is assumed, and the peroxide demand is that of the same assay with that lithium given.
// Hand calculation (CIAAW 2021 atomic weights: Co 58.933194, H 1.008, O 15.999): 20 wt% Co is
// 200/58.933194 = 3.39367 mol/kg; Co(III) → Co(II) takes one electron, half a mol of H2O2
// (2 LiCoO2 + 3 H2SO4 + H2O2 → Li2SO4 + 2 CoSO4 + 4 H2O + O2, Jha et al., Waste Manag. 33 (2013)
// 1890), so 1.69684 mol × 34.014 g/mol = 57.72 g H2O2 per kg. Read as CoO2 (Co(IV), two
// electrons) it would be twice that, 115.4 g: the misreading this guards against.
func TestQuoteMissingLithium(t *testing.T) {
	t.Parallel()
	noLi := readTestAssay(t, "no-li-WB-0415.csv")
	withLi := readTestAssay(t, "li-WB-0415.csv")
	got, q := peroxideKgPerKg(t, noLi, assay.MissingLi{Mode: assay.LiStoichiometric})
	want, _ := peroxideKgPerKg(t, withLi, assay.MissingLi{Mode: assay.LiStoichiometric})
	nearly(t, "H2O2 with Li missing vs given", got, want, 1e-6)
	nearly(t, "H2O2 against the hand calculation", got, 0.05772, 0.0001)
	if !slices.ContainsFunc(q.Warnings, func(w string) bool {
		return strings.Contains(w, "Li not assayed") && strings.Contains(w, "stoichiometric") && strings.Contains(w, "2.36 wt%")
	}) {
		t.Errorf("no warning naming the lithium assumed: %q", q.Warnings)
	}
	if len(q.Missing) == 0 || q.Missing[0].Element != "Li" || q.Missing[0].Basis != assay.BasisAssumed {
		t.Errorf("missing elements: %+v", q.Missing)
	}
	if _, ok := q.Elements["Li"]; ok {
		t.Error("assumed lithium counted among the element masses (and so valued)")
	}
	// The user may declare the oxides delithiated: then, and only then, Co(IV).
	none, q := peroxideKgPerKg(t, noLi, assay.MissingLi{Mode: assay.LiNone})
	nearly(t, "H2O2 with no lithium declared", none, 2*0.05772, 0.0002)
	if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, "Co(IV)") }) {
		t.Errorf("no warning of the delithiated reading: %q", q.Warnings)
	}
	// A value given stands in as typed: 2.355182 wt% is the stoichiometric lithium again.
	given, _ := peroxideKgPerKg(t, noLi, assay.MissingLi{Mode: assay.LiGiven, WtPct: 2.355182})
	nearly(t, "H2O2 with lithium given", given, want, 1e-6)
	// Without P beside Fe, F or C, a warning says so.
	for _, el := range []string{"F not assayed"} {
		if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.HasPrefix(w, el) }) {
			t.Errorf("no warning %q: %q", el, q.Warnings)
		}
	}
}

// With a lot's estimate, the missing lithium is the estimate's, marked so, and the quote's basis
// says it rests on the estimate too.
func TestCompleteFromEstimate(t *testing.T) {
	t.Parallel()
	noLi := readTestAssay(t, "no-li-WB-0415.csv")
	est := map[string]dist.Amount{"Li": {WtPct: dist.Stat{P10: 2.2, P50: 2.355182, P90: 2.5, Mean: 2.355}}, "Co": {WtPct: dist.Stat{P10: 19, P50: 20, P90: 21}}}
	full, notes := assay.Complete(noLi, est)
	if len(notes) != 1 || !strings.Contains(notes[0], "Li not assayed: taken from the lot's estimate") {
		t.Errorf("notes %q", notes)
	}
	if len(noLi.Values) != 2 {
		t.Error("Complete changed the assay it was given")
	}
	o := leach.DefaultOptions()
	q, err := assay.QuoteFrom(full, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 1, Samples: 20, Seed: 1, Leach: o})
	if err != nil {
		t.Fatal(err)
	}
	if q.Basis != "assay+estimate+weighing" || len(q.Missing) != 1 || q.Missing[0].Element != "F" {
		t.Errorf("basis %q, missing %+v", q.Basis, q.Missing)
	}
	rc := assay.Reconcile(est, noLi, 2)
	if rc.Basis != "estimate+assay" || len(rc.Missing) != 1 || !strings.HasPrefix(rc.Missing[0], "Li not assayed") {
		t.Errorf("reconciliation basis %q, missing %q", rc.Basis, rc.Missing)
	}
}

// Values below the detection limit are drawn uniformly from 0 to the limit (mean half the
// limit, the mean of a uniform distribution), shown as "< limit", and the weighed mass loses its
// moisture before any metal is counted.
func TestQuoteCensoredAndMoisture(t *testing.T) {
	t.Parallel()
	a := readTestAssay(t, "censored-WB-0412.csv")
	q, err := assay.QuoteFrom(a, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 100, Samples: 4000, Seed: 3, Leach: leach.DefaultOptions()})
	if err != nil {
		t.Fatal(err)
	}
	cu := q.ElementDraws["Cu"]
	mean := 0.0
	for i, kg := range cu {
		pct := 100 * kg / q.BlackMassDraws[i]
		if pct < 0 || pct > 0.05+1e-12 {
			t.Fatalf("Cu draw %d at %g wt%%, outside 0 to the 0.05 wt%% limit", i, pct)
		}
		mean += pct / float64(len(cu))
	}
	// The mean of 4000 uniform draws on [0, 0.05] lies within 0.025 ± 0.0011 (5 standard errors
	// of 0.05/√12/√4000).
	nearly(t, "Cu mean wt%", mean, 0.025, 0.0011)
	if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, "Cu < 0.05 wt%") }) {
		t.Errorf("no warning of the censored values: %q", q.Warnings)
	}
	// Moisture 6.5 ± 0.5 wt% of the wet mass (the assay's line): 100 kg wet is 93.5 kg dry at
	// P50, and cobalt is 8.1 % of the dry mass.
	nearly(t, "wet kg", q.Weighing.WetMassKg, 100, 0)
	nearly(t, "dry kg P50", q.Weighing.DryMassKg.P50, 93.5, 0.05)
	nearly(t, "Co kg P50", q.Elements["Co"].Kg.P50, 0.081*93.5, 0.05)
	// The quote's own moisture wins, with a warning that the assay's sample held another.
	q, err = assay.QuoteFrom(a, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 100, Samples: 50, Seed: 3, Leach: leach.DefaultOptions(),
		Moisture: assay.Moisture{WtPct: 10, Known: true}})
	if err != nil {
		t.Fatal(err)
	}
	nearly(t, "dry kg with 10 % moisture given", q.Weighing.DryMassKg.P90, 90, 1e-9)
	for i, bm := range q.BlackMassDraws {
		if sum := q.ElementDraws["Co"][i] / bm; math.Abs(sum-q.ElementDraws["Co"][0]/q.BlackMassDraws[0]) > 0.05 {
			t.Fatalf("draw %d: Co share %g of the dry mass", i, sum)
		}
	}
	if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, "assay's sample held 6.5 wt%") }) {
		t.Errorf("no warning of the disagreeing moisture: %q", q.Warnings)
	}
	// Without any moisture the weighed mass is dry, and the quote says so.
	q, err = assay.QuoteFrom(readTestAssay(t, "li-WB-0415.csv"), assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 100, Samples: 20, Seed: 3, Leach: leach.DefaultOptions()})
	if err != nil {
		t.Fatal(err)
	}
	if q.Weighing.DryMassKg.P50 != 100 || !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, "taken as dry") }) {
		t.Errorf("no moisture: dry %v, warnings %q", q.Weighing.DryMassKg, q.Warnings)
	}
}

// An estimate below a detection limit agrees with it; one far above it is flagged.
func TestReconcileCensored(t *testing.T) {
	t.Parallel()
	a := readTestAssay(t, "censored-WB-0412.csv")
	est := func(cu float64) map[string]dist.Amount {
		return map[string]dist.Amount{"Cu": {WtPct: dist.Stat{P10: cu * 0.9, P50: cu, P90: cu * 1.1, Mean: cu}}}
	}
	for _, c := range []struct {
		cu   float64
		flag bool
	}{{0.03, false}, {2, true}} {
		rc := assay.Reconcile(est(c.cu), a, 2)
		for _, cmp := range rc.Comparisons {
			if cmp.Element == "Cu" && (cmp.Flag != c.flag || cmp.AssayText != "< 0.05 wt%") {
				t.Errorf("estimate %g wt%% against < 0.05: %+v", c.cu, cmp)
			}
		}
	}
}

func TestParseMissingLiAndMoisture(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]assay.MissingLi{"stoichiometric": {}, "none": {Mode: assay.LiNone}, "3,2 wt%": {Mode: assay.LiGiven, WtPct: 3.2}} {
		if got, err := assay.ParseMissingLi(in); err != nil || got != want {
			t.Errorf("ParseMissingLi(%q) = %+v, %v", in, got, err)
		}
	}
	for _, bad := range []string{"lots", "-1", "45"} {
		if _, err := assay.ParseMissingLi(bad); err == nil {
			t.Errorf("ParseMissingLi(%q) accepted", bad)
		}
	}
	if m, err := assay.ParseMoisture("8,5 %"); err != nil || m.WtPct != 8.5 || !m.Known {
		t.Errorf("ParseMoisture: %+v %v", m, err)
	}
	for _, bad := range []string{"wet", "-2", "99"} {
		if _, err := assay.ParseMoisture(bad); err == nil {
			t.Errorf("ParseMoisture(%q) accepted", bad)
		}
	}
}

// With Li left off, the mix fit gives the lithium of the cathodes it infers: an assay of 40 %
// LiCoO2 and 30 % graphite less its lithium implies 0.4 × M(Li)/M(LiCoO2) = 0.4 × 6.94/97.873 =
// 2.836 wt% Li (CIAAW 2021), and the quote takes that as the missing lithium.
func TestMissingLiFromMix(t *testing.T) {
	t.Parallel()
	wt := composition(map[string]float64{"LiCoO2": 0.4, "C": 0.3})
	delete(wt, "Li")
	a := mustAssay(t, assayCSV(wt, 0.01))
	fit, err := assay.InferMix(a, candidates(t, "LCO", "NMC111", "LFP"), 50, 1)
	if err != nil {
		t.Fatal(err)
	}
	nearly(t, "implied Li wt%", fit.Implied["Li"], 2.836, 0.005)
	ml := assay.MissingLiFromMix(fit)
	if ml.Mode != assay.LiGiven || ml.From == "" {
		t.Fatalf("%+v", ml)
	}
	q, err := assay.QuoteFrom(a, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 1, Samples: 20, Seed: 1, Leach: leach.DefaultOptions(), MissingLi: ml})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, "the lithium of the chemistry mix inferred") }) {
		t.Errorf("warnings %q", q.Warnings)
	}
	if m := assay.MissingLiFromMix(nil); m.Mode != assay.LiStoichiometric {
		t.Errorf("without a fit: %+v", m)
	}
}

// An element below the detection limit that no species takes is named with its limit, never
// with the half-limit the Monte Carlo draws around: the lab said "< 20 mg/kg", not 0.001 wt%.
func TestQuoteUnplacedCensoredShowsLimit(t *testing.T) {
	t.Parallel()
	a := readTestAssay(t, "censored-WB-0412.csv")
	q, err := assay.QuoteFrom(a, assay.QuoteOptions{Tables: embeddedTables(t), BlackMassKg: 100, Samples: 50, Seed: 3, Leach: leach.DefaultOptions()})
	if err != nil {
		t.Fatal(err)
	}
	// Mg ND with LOD 20 mg/kg = 0.002 wt%; Zn BDL with LOD 30 ppm = 0.003 wt% (1 wt% = 10^4 ppm).
	for _, want := range []string{"Mg < 0.002 wt% (below the detection limit) could not be placed", "Zn < 0.003 wt% (below the detection limit) could not be placed"} {
		if !slices.ContainsFunc(q.Warnings, func(w string) bool { return strings.Contains(w, want) }) {
			t.Errorf("no warning %q in %q", want, q.Warnings)
		}
	}
	for _, w := range q.Warnings {
		if strings.Contains(w, "0.001 wt% Mg") || strings.Contains(w, "0.0015 wt% Zn") {
			t.Errorf("a censored value shown as its half-limit: %q", w)
		}
	}
}
