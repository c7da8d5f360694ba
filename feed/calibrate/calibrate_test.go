package calibrate

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"blackmass/feed/dist"
)

func quantiles(x []float64) (p10, p90 float64) {
	s := slices.Clone(x)
	slices.Sort(s)
	return dist.Quantile(s, 0.1), dist.Quantile(s, 0.9)
}

func fitOrFatal(t testing.TB, lots []Lot, opt Options) (*Calibration, *Report) {
	t.Helper()
	c, r, err := Fit(lots, opt)
	if err != nil {
		t.Fatal(err)
	}
	if err := c.Check(); err != nil {
		t.Fatal(err)
	}
	return c, r
}

// The fit recovers the true factors within 3 of its own standard deviations, and the calibrated
// P10-P90 holds the true kg of held-out lots about 80 % of the time, with 5 lots and with 200.
func TestRecoversFactors(t *testing.T) {
	t.Parallel()
	held := simLots(99, 600, "H")
	for _, n := range []int{5, 200} {
		sim := simLots(uint64(n), n, "S")
		c, rep := fitOrFatal(t, lotsOf(sim), DefaultOptions(simTime))
		if len(rep.LeftOut) > 0 {
			t.Errorf("%d lots: clean simulated lots left out: %+v", n, rep.LeftOut)
		}
		for _, e := range c.Elements {
			for fi, f := range e.Factors {
				want := simTarget(c, sim, e.Element, fi)
				t.Logf("%d lots: %s %-20s factor %.3f ± %.3f (true %.3f, prior sd %.3f, %.1f lots)", n, e.Element,
					cellName(cell{f.Family, f.Format}), f.Mean, f.SD, want, f.PriorSD, f.Lots)
				if math.Abs(f.Mean-want) > 3*f.SD {
					t.Errorf("%d lots: %s %s: factor %.3f ± %.3f, true %.3f", n, e.Element,
						cellName(cell{f.Family, f.Format}), f.Mean, f.SD, want)
				}
			}
		}
		before, after := simCoverage(nil, held, 400, 5), simCoverage(c, held, 400, 5)
		for _, el := range simElements {
			t.Logf("%d lots: %s held-out P10-P90 coverage %.1f %% before, %.1f %% after", n, el, 100*before[el], 100*after[el])
			if after[el] < 0.7 || after[el] > 0.9 {
				t.Errorf("%d lots: %s: calibrated coverage %.1f %%, want 70-90 %%", n, el, 100*after[el])
			}
		}
		for _, er := range rep.Elements {
			t.Logf("%d lots: %s bias %+.3f -> %+.3f (leave-one-out), coverage %.0f %% -> %.0f %%, %d disagree", n, er.Element,
				er.BiasBefore, er.BiasAfter, 100*er.CoverageBefore, 100*er.CoverageAfter, len(er.Disagree))
		}
	}
}

// With many lots the bias the report finds before calibration is the true one (ln 0.8 for Co,
// ln 0.9 for Li), and leave-one-out prediction removes it.
func TestReportBias(t *testing.T) {
	t.Parallel()
	_, rep := fitOrFatal(t, lotsOf(simLots(3, 300, "S")), DefaultOptions(simTime))
	want := map[string]float64{"Co": math.Log(0.8), "Li": math.Log(0.9)}
	for _, er := range rep.Elements {
		w, ok := want[er.Element]
		if !ok {
			continue
		}
		// The lot-level scatter is symmetric in kg, so ln(ratio) averages a little below
		// ln(factor): −σ²/2 with σ up to 0.18 is under 0.02.
		if math.Abs(er.BiasBefore-w) > 0.04 {
			t.Errorf("%s: bias before %.3f, want %.3f", er.Element, er.BiasBefore, w)
		}
		if math.Abs(er.BiasAfter) > 0.03 {
			t.Errorf("%s: bias after %.3f, want about 0", er.Element, er.BiasAfter)
		}
		if er.CoverageAfter < 0.7 || er.CoverageAfter > 0.9 || er.CoverageBefore > er.CoverageAfter {
			t.Errorf("%s: coverage %.2f before, %.2f after", er.Element, er.CoverageBefore, er.CoverageAfter)
		}
	}
}

// A lot whose Co assay reads ten times the truth (a decimal slip) is named and left out, and
// the fit is the fit without it; kept, it drags the Co factor.
func TestOutlierLeftOut(t *testing.T) {
	t.Parallel()
	sim := simLots(17, 40, "S")
	clean, _ := fitOrFatal(t, lotsOf(sim), DefaultOptions(simTime))
	bad := lotsOf(simLots(17, 40, "S"))
	slip := Lot{ID: "SLIP-1", Measures: slices.Clone(newSimLot(rand.New(rand.NewPCG(1, 2)), "SLIP-1").lot.Measures)}
	co := slices.IndexFunc(slip.Measures, func(m Measure) bool { return m.Element == "Co" })
	if co < 0 {
		t.Fatal("the slip lot holds no Co")
	}
	slip.Measures[co].MeasuredKg *= 10
	slip.Measures[co].MeasuredSDKg *= 10
	bad = append(bad, slip)
	c, rep := fitOrFatal(t, bad, DefaultOptions(simTime))
	if len(rep.LeftOut) != 1 || rep.LeftOut[0].Lot != "SLIP-1" || rep.LeftOut[0].Element != "Co" {
		t.Fatalf("left out %+v, want SLIP-1 for Co", rep.LeftOut)
	}
	t.Logf("left out: %s: %s", rep.LeftOut[0].Lot, rep.LeftOut[0].Reason)
	sameFactors(t, clean, c, 1e-9)
	opt := DefaultOptions(simTime)
	opt.Keep = []string{"SLIP-1"}
	kept, _ := fitOrFatal(t, bad, opt)
	coClean, coKept := clean.element("Co"), kept.element("Co")
	moved := 0.0
	for i := range coClean.Factors {
		moved = math.Max(moved, math.Abs(coClean.Factors[i].Mean-coKept.Factors[i].Mean)/coClean.Factors[i].SD)
	}
	if moved < 1 {
		t.Errorf("keeping the slip moves no Co factor by a standard deviation (%.2f): the test lot is not an outlier", moved)
	}
}

func sameFactors(t *testing.T, a, b *Calibration, tol float64) {
	t.Helper()
	if len(a.Elements) != len(b.Elements) {
		t.Fatalf("%d elements, want %d", len(b.Elements), len(a.Elements))
	}
	for i, ea := range a.Elements {
		eb := b.Elements[i]
		if len(ea.Factors) != len(eb.Factors) {
			t.Fatalf("%s: %d factors, want %d", ea.Element, len(eb.Factors), len(ea.Factors))
		}
		for j, fa := range ea.Factors {
			fb := eb.Factors[j]
			if fa.Family != fb.Family || fa.Format != fb.Format || math.Abs(fa.Mean-fb.Mean) > tol || math.Abs(fa.SD-fb.SD) > tol {
				t.Errorf("%s: factor %+v, want %+v", ea.Element, fb, fa)
			}
		}
	}
}

// A Co assay 2.5 times the truth passes the ratio bound but not the leave-one-out z rule.
func TestOutlierByZ(t *testing.T) {
	t.Parallel()
	lots := lotsOf(simLots(23, 30, "S"))
	for i, m := range lots[4].Measures {
		if m.Element == "Co" {
			lots[4].Measures[i].MeasuredKg *= 2.5
		}
	}
	_, rep := fitOrFatal(t, lots, DefaultOptions(simTime))
	if len(rep.LeftOut) != 1 || rep.LeftOut[0].Lot != lots[4].ID || !(rep.LeftOut[0].Z > 4) {
		t.Fatalf("left out %+v, want %s by z", rep.LeftOut, lots[4].ID)
	}
}

// Excluded lots are left out and named as excluded; unknown ids in Keep or Exclude are refused.
func TestExcludeAndKeepIDs(t *testing.T) {
	t.Parallel()
	lots := lotsOf(simLots(5, 10, "S"))
	opt := DefaultOptions(simTime)
	opt.Exclude = []string{lots[2].ID}
	c, rep := fitOrFatal(t, lots, opt)
	if len(rep.LeftOut) != 1 || !rep.LeftOut[0].Excluded || slices.Contains(c.Lots, lots[2].ID) || len(c.Lots) != 9 {
		t.Errorf("left out %+v, used %v", rep.LeftOut, c.Lots)
	}
	// The report counts every assayed lot given, the excluded one too: 10 given = 9 used + 1 out.
	if rep.Lots != 10 || len(rep.Used)+len(rep.LeftOut) != rep.Lots {
		t.Errorf("report: %d lots given, %d used, %d left out; want 10 = 9 + 1", rep.Lots, len(rep.Used), len(rep.LeftOut))
	}
	opt.Keep = []string{"NO-SUCH-LOT"}
	if _, _, err := Fit(lots, opt); err == nil || !strings.Contains(err.Error(), "NO-SUCH-LOT") {
		t.Errorf("unknown kept lot: %v", err)
	}
	opt.Keep = []string{lots[2].ID}
	if _, _, err := Fit(lots, opt); err == nil {
		t.Error("a lot both kept and excluded was accepted")
	}
}

// Too few assayed lots give an error that says how many are needed, not a fit.
func TestTooFewLots(t *testing.T) {
	t.Parallel()
	lots := lotsOf(simLots(5, 3, "S"))
	_, _, err := Fit(lots[:2], DefaultOptions(simTime))
	if !errors.Is(err, ErrTooFewLots) || !strings.Contains(err.Error(), "at least 3") || !strings.Contains(err.Error(), "have 2") {
		t.Errorf("two lots: %v", err)
	}
	opt := DefaultOptions(simTime)
	opt.Exclude = []string{lots[0].ID}
	if _, _, err := Fit(lots, opt); !errors.Is(err, ErrTooFewLots) || !strings.Contains(err.Error(), "excluded") {
		t.Errorf("three lots, one excluded: %v", err)
	}
	if _, _, err := Fit(nil, DefaultOptions(simTime)); !errors.Is(err, ErrTooFewLots) {
		t.Errorf("no lots: %v", err)
	}
}

// Bad input is refused with the lot and element named.
func TestBadInput(t *testing.T) {
	t.Parallel()
	good := lotsOf(simLots(5, 4, "S"))
	cases := map[string]func(l []Lot){
		"no uncertainty":  func(l []Lot) { l[1].Measures[0].MeasuredSDKg = 0 },
		"negative kg":     func(l []Lot) { l[1].Measures[0].Parts[0].Kg = -1 },
		"NaN measured":    func(l []Lot) { l[1].Measures[0].MeasuredKg = math.NaN() },
		"duplicate id":    func(l []Lot) { l[1].ID = l[0].ID },
		"no parts":        func(l []Lot) { l[1].Measures[0].Parts = nil },
		"element twice":   func(l []Lot) { l[1].Measures = append(l[1].Measures, l[1].Measures[0]) },
		"censored at 0":   func(l []Lot) { l[1].Measures[0].Censored, l[1].Measures[0].MeasuredKg = true, 0 },
		"part, no family": func(l []Lot) { l[1].Measures[0].Parts[0].Family = "" },
	}
	for name, spoil := range cases {
		lots := lotsOf(simLots(5, 4, "S"))
		spoil(lots)
		if _, _, err := Fit(lots, DefaultOptions(simTime)); err == nil || !strings.Contains(err.Error(), "lot ") {
			t.Errorf("%s: %v", name, err)
		}
	}
	if _, _, err := Fit(good, Options{}); err == nil {
		t.Error("zero options accepted")
	}
}
