package run_test

import (
	"fmt"
	"math"
	"os"
	"runtime"
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/leach"
	"blackmass/feed/lot"
	"blackmass/feed/report"
	"blackmass/feed/run"
)

// unknownHeavy are lots made mostly or only of items of unknown chemistry, whose shares come
// from the prior's Dirichlet draws: one line of a few items, one of many, several formats.
var unknownHeavy = map[string]string{
	"200 unlabelled cylindrical cells": "id,chemistry,format,capacity,count\nu,,cylindrical,2.5 Ah,200\n",
	"3 unlabelled pouch cells":         "id,chemistry,format,capacity,count\nu,,pouch,11 Wh,3\n",
	"one of each, unlabelled": "id,chemistry,format,capacity,cells_per_pack,count\n" +
		"a,,cylindrical,2.5 Ah,,1\nb,,pouch,11 Wh,,1\nc,,pack,90 Wh,5s2p,1\nd,,module,5 kWh,12s2p,1\ne,,prismatic,50 Ah,,1\n",
	"many unknown, some known": "id,chemistry,format,capacity,cells_per_pack,count\n" +
		"a,Li-ion,cylindrical,2.5 Ah,,5000\nb,Li-ion,pack,90 Wh,5s2p,70\nc,NMC622,module,5.2 kWh,12s2p,1\n",
}

// finiteLot estimates a manifest (unknown labels take the prior) and fails unless every number
// of the report is finite and every P10 ≤ P50 ≤ P90.
func finiteLot(t *testing.T, name, manifest string, seed uint64, samples int, withLeach bool) {
	t.Helper()
	opt := run.Options{Seed: seed, Samples: samples, UnknownAsPrior: true, KeepLines: true}
	if withLeach {
		o := leach.DefaultOptions()
		opt.Leach = &o
	}
	where := fmt.Sprintf("%s, seed %d, %d samples", name, seed, samples)
	tb, err := run.DefaultTables()
	if err != nil {
		t.Fatal(err)
	}
	r, err := run.Estimate(tb, opt, run.Manifest{Name: name, R: strings.NewReader(manifest)})
	if err != nil {
		t.Fatalf("%s: %v", where, err)
	}
	if err := r.CheckFinite(); err != nil {
		t.Fatalf("%s: %v", where, err)
	}
	ordered := func(what string, s dist.Stat) {
		if !(s.P10 <= s.P50 && s.P50 <= s.P90) {
			t.Errorf("%s: %s P10/P50/P90 %v/%v/%v out of order", where, what, s.P10, s.P50, s.P90)
		}
	}
	ordered("black mass", r.BlackMassKg)
	for k, a := range r.Elements {
		ordered(k+" kg", a.Kg)
		ordered(k+" wt%", a.WtPct)
	}
	for k, a := range r.Compounds {
		ordered(k+" kg", a.Kg)
		ordered(k+" wt%", a.WtPct)
	}
	for _, g := range r.Groups {
		ordered(g.Chemistry+" cathode", g.CathodeKg)
		ordered(g.Chemistry+" black mass", g.BlackMassKg)
	}
}

// The Monte Carlo is finite and its percentiles ordered for every seed and number of samples,
// on the demo lot and on lots made mostly of unknown chemistry (their shares are Dirichlet
// draws with shapes of 0.01 and less).
func TestFiniteEverySeed(t *testing.T) {
	t.Parallel()
	demo, err := os.ReadFile("../../data/demo/lot-KR-2611.csv")
	if err != nil {
		t.Fatal(err)
	}
	seeds := uint64(200)
	if testing.Short() {
		seeds = 40
	}
	for seed := range seeds {
		finiteLot(t, "demo", string(demo), seed, 4000, seed%20 == 0)
		for name, m := range unknownHeavy {
			finiteLot(t, name, m, seed, []int{10, 37, 1000, 4000}[seed%4], false)
		}
	}
	if !testing.Short() {
		for _, n := range []int{120_000, 200_000} {
			finiteLot(t, "demo", string(demo), 1, n, false)
			finiteLot(t, "200 unlabelled cylindrical cells", unknownHeavy["200 unlabelled cylindrical cells"], 1, n, false)
		}
	}
}

// The finiteness guard says whether the number came from an input or from the model.
func TestCheckFiniteNamesTheOrigin(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	model := &report.Report{Elements: map[string]dist.Amount{"Co": {Kg: dist.Stat{P10: nan}}}}
	if err := model.CheckFinite(); err == nil || !strings.Contains(err.Error(), "model produced") || !strings.Contains(err.Error(), "report.elements.Co.kg.p10") {
		t.Errorf("model fault: %v", err)
	}
	input := &report.Report{Lot: lot.LotSummary{NameplateKWh: math.Inf(1)}}
	if err := input.CheckFinite(); err == nil || !strings.Contains(err.Error(), "an input is out of its physical range") {
		t.Errorf("input fault: %v", err)
	}
	line := &report.Report{Lines: []lot.LineResult{{VoltageV: nan}}}
	if err := line.CheckFinite(); err == nil || !strings.Contains(err.Error(), "an input") {
		t.Errorf("line input: %v", err)
	}
	lineModel := &report.Report{Lines: []lot.LineResult{{CathodeKg: nan}}}
	if err := lineModel.CheckFinite(); err == nil || !strings.Contains(err.Error(), "model produced") ||
		!strings.Contains(err.Error(), "report.lines[0].cathode_active_kg_most_likely") {
		t.Errorf("line result: %v", err)
	}
	if err := (&report.Report{}).CheckFinite(); err != nil {
		t.Errorf("finite report: %v", err)
	}
}

// BenchmarkDemoPerSample runs the demo lot's whole estimate (Monte Carlo, report, leach plan)
// at 20,000 samples and reports the cost per sample: µs, bytes allocated, and bytes of heap
// held at the end (the draws, by compound and element, kept for the report). Memory grows with
// samples and with the lot's compounds, elements and formats, not with lines or groups (a
// group's per-sample masses are summarised as it is drawn).
func BenchmarkDemoPerSample(b *testing.B) {
	demo, tb := demoLot(b)
	const samples = 20_000
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	var held uint64
	for b.Loop() {
		o := leach.DefaultOptions()
		r, err := run.Estimate(tb, run.Options{Seed: 1, Samples: samples, Leach: &o, UnknownAsPrior: true},
			run.Manifest{Name: "demo.csv", R: strings.NewReader(demo)})
		if err != nil {
			b.Fatal(err)
		}
		b.StopTimer()
		var ms runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&ms)
		held = max(held, ms.HeapAlloc)
		runtime.KeepAlive(r)
		b.StartTimer()
	}
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N)/samples, "µs/sample")
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/samples, "B-alloc/sample")
	b.ReportMetric(float64(held)/samples, "B-held/sample")
}

// TestSameOnAnyProcessors runs the demo lot, with the leach plan, at a sample count the Monte
// Carlo and the leach planner share out across processors, on one, two and three of them: the
// report must be byte for byte the same (each sample is modelled on its own, streams are named).
func TestSameOnAnyProcessors(t *testing.T) {
	demo, tb := demoLot(t)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var first []byte
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		o := leach.DefaultOptions()
		r, err := run.Estimate(tb, run.Options{Seed: 7, Samples: 20_000, Leach: &o, UnknownAsPrior: true, KeepLines: true},
			run.Manifest{Name: "demo.csv", R: strings.NewReader(demo)})
		if err != nil {
			t.Fatal(err)
		}
		var b strings.Builder
		if err := r.WriteJSON(&b); err != nil {
			t.Fatal(err)
		}
		if procs == 1 {
			first = []byte(b.String())
		} else if b.String() != string(first) {
			t.Errorf("the report on %d processors differs from the one on 1", procs)
		}
	}
}

// demoLot returns the demo manifest's text and the built-in tables.
func demoLot(tb testing.TB) (string, *run.Tables) {
	tb.Helper()
	demo, err := os.ReadFile("../../data/demo/lot-KR-2611.csv")
	if err != nil {
		tb.Fatal(err)
	}
	t, err := run.DefaultTables()
	if err != nil {
		tb.Fatal(err)
	}
	return string(demo), t
}
