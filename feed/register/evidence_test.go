package register

import (
	"math"
	"strings"
	"testing"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
)

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want)) }

func ptr(x float64) *float64 { return &x }

func estimate(coP50 float64) Estimate {
	return Estimate{BlackMassKg: 100, Payable: ptr(5000), Elements: map[string]EstimateElement{
		"Co": {Kg: dist.Stat{P10: 0.8 * coP50, P50: coP50, P90: 1.2 * coP50}, WtPctP50: coP50, PayableValue: ptr(1000)},
		"Li": {Kg: dist.Stat{P10: 3, P50: 3.5, P90: 4}, WtPctP50: 3.5, PayableValue: ptr(800)},
	}}
}

// An assay times the wet weighing less its moisture, by hand: Co 9.9 ± 0.3 wt% of 212 kg at
// 8 % moisture (195.04 kg dry, 1 % of 212 kg on the scale) is 19.309 ± 0.616 kg.
func TestRankMeasuredOverEstimate(t *testing.T) {
	as := []AssayEvidence{{ID: 1, On: "2026-12-01", Values: []assay.Value{{Element: "Co", WtPct: 9.9, SigmaWtPct: 0.3}}}}
	ws := []WeighingEvidence{{ID: 1, On: "2026-12-01", Kg: 212, State: StateWet, MoistureWtPct: ptr(8)}}
	ev := RankEvidence(estimate(7.27), as, ws)
	if ev.Basis != BasisMeasured || ev.DryMass == nil || !near(ev.DryMass.Kg, 195.04, 1e-9) || !near(ev.DryMass.SigmaKg, 1.9504, 1e-9) {
		t.Fatalf("basis %s dry mass %+v", ev.Basis, ev.DryMass)
	}
	co := ev.Element("Co")
	if co.Basis != BasisMeasured || !near(co.Kg, 19.30896, 1e-9) || !near(co.Measured.SigmaKg, 0.616157, 1e-5) {
		t.Errorf("Co %+v %+v", co, co.Measured)
	}
	if co.EstimateKgP50 != 7.27 || co.EstimateKgP10 != 0.8*7.27 || co.Ratio == nil || !near(*co.Ratio, 19.30896/7.27, 1e-9) {
		t.Errorf("Co estimate beside the measurement: %+v", co)
	}
	li := ev.Element("Li")
	if li.Basis != BasisEstimate || li.Kg != 3.5 || li.Measured != nil || li.Ratio != nil {
		t.Errorf("Li, not assayed, should rest on the estimate: %+v", li)
	}
	// Value: Co's share scaled by what was measured, Li's kept.
	if !near(*co.PayableValue, 1000*19.30896/7.27, 1e-9) || *li.PayableValue != 800 ||
		!near(*ev.Payable, 5000+1000*(19.30896/7.27-1), 1e-9) || !strings.HasPrefix(ev.PayableBasis, BasisMeasured) {
		t.Errorf("value %v (%s), Co %v Li %v", *ev.Payable, ev.PayableBasis, *co.PayableValue, *li.PayableValue)
	}
	if !strings.Contains(strings.Join(ev.Notes, "\n"), "not assayed, from the estimate: Li") {
		t.Errorf("notes %q", ev.Notes)
	}
}

// Two assays combined by inverse-variance weighting, by hand: 10.0 ± 0.2 and 10.6 ± 0.3 wt%
// give 10.1846 ± 0.1664 with chi-square 2.769 on 1 degree of freedom.
func TestRankCombinesAssays(t *testing.T) {
	as := []AssayEvidence{
		{ID: 1, On: "2026-12-01", Values: []assay.Value{{Element: "Co", WtPct: 10.0, SigmaWtPct: 0.2}}},
		{ID: 2, On: "2026-12-03", Values: []assay.Value{{Element: "Co", WtPct: 10.6, SigmaWtPct: 0.3}}},
	}
	ws := []WeighingEvidence{{ID: 1, On: "2026-12-01", Kg: 100, State: StateDry, SigmaKg: 0.5}}
	m := RankEvidence(estimate(10), as, ws).Element("Co").Measured
	if m == nil || !near(m.WtPct, 367.7778/36.1111, 1e-5) || !near(m.SigmaWtPct, 0.166410, 1e-5) || !near(m.ChiSquare, 2.76923, 1e-5) ||
		m.DoF != 1 || m.Disagree || m.Assays != 2 {
		t.Fatalf("combined %+v", m)
	}
	if !near(m.Kg, m.WtPct, 1e-12) || !near(m.SigmaKg, math.Hypot(m.SigmaWtPct, m.WtPct/100*0.5), 1e-12) {
		t.Errorf("kg of 100 kg dry: %+v", m)
	}
}

// The disagreement flag sits at the chi-square 95 % point on one degree of freedom, 3.841
// (NIST/SEMATECH e-Handbook of Statistical Methods, 2012, table 1.3.6.7.4): two values of
// standard uncertainty 1 differing by d have chi-square d²/2.
func TestRankFlagsDisagreement(t *testing.T) {
	for _, c := range []struct {
		chi2     float64
		disagree bool
	}{{3.70, false}, {3.95, true}, {18, true}} {
		d := math.Sqrt(2 * c.chi2)
		as := []AssayEvidence{
			{ID: 1, On: "2026-12-01", Values: []assay.Value{{Element: "Co", WtPct: 10, SigmaWtPct: 1}}},
			{ID: 2, On: "2026-12-02", Values: []assay.Value{{Element: "Co", WtPct: 10 + d, SigmaWtPct: 1}}},
		}
		ev := RankEvidence(estimate(10), as, []WeighingEvidence{{Kg: 100, State: StateDry, On: "2026-12-01"}})
		m := ev.Element("Co").Measured
		if !near(m.ChiSquare, c.chi2, 1e-9) || m.Disagree != c.disagree {
			t.Errorf("chi-square %v: disagree %v, want %v", m.ChiSquare, m.Disagree, c.disagree)
		}
		if flagged := strings.Contains(strings.Join(ev.Notes, "\n"), "disagree"); flagged != c.disagree {
			t.Errorf("chi-square %v: note %q", c.chi2, ev.Notes)
		}
	}
}

// Below the detection limit in every assay: a range from 0 to the tightest limit times the dry
// mass, its middle and the uniform's sigma (limit/√12). A detected value well above another
// assay's limit is a disagreement.
func TestRankCensored(t *testing.T) {
	var a, b assay.Value
	a.Element, b.Element = "Cu", "Cu"
	a.Censor(0.05)
	b.Censor(0.03)
	as := []AssayEvidence{{ID: 1, On: "2026-12-01", Values: []assay.Value{a}}, {ID: 2, On: "2026-12-02", Values: []assay.Value{b}}}
	ws := []WeighingEvidence{{Kg: 100, State: StateDry, On: "2026-12-01"}}
	cu := RankEvidence(estimate(10), as, ws).Element("Cu")
	m := cu.Measured
	if cu.Basis != BasisMeasured || !m.Censored || m.LimitWtPct != 0.03 || m.MinKg != 0 || !near(m.MaxKg, 0.03, 1e-12) ||
		!near(m.Kg, 0.015, 1e-12) || !near(m.SigmaWtPct, 0.03/math.Sqrt(12), 1e-12) || cu.Ratio != nil || cu.EstimateKgP50 != 0 {
		t.Errorf("censored Cu %+v %+v", cu, m)
	}
	det := assay.Value{Element: "Cu", WtPct: 1.2, SigmaWtPct: 0.1}
	as[1].Values = []assay.Value{det}
	m = RankEvidence(estimate(10), as, ws).Element("Cu").Measured
	if m.Censored || m.WtPct != 1.2 || !m.Disagree {
		t.Errorf("1.2 ± 0.1 wt%% beside < 0.05: %+v", m)
	}
}

// The dry mass: dry as weighed; wet less the assay's moisture when the weighing has none
// (10 ± 1 % of 100 kg: 90 kg, sigma hypot(0.9, 1)); wet without any moisture leaves the metal on
// the estimate; neither wet nor dry, no moisture: taken as dry with a note; the latest weighing.
func TestRankDryMass(t *testing.T) {
	co := []assay.Value{{Element: "Co", WtPct: 10, SigmaWtPct: 0.2}}
	moist := []AssayEvidence{{ID: 4, On: "2026-12-01", Values: co, MoistureWtPct: ptr(10), MoistureSigmaWtPct: 1}}
	plain := []AssayEvidence{{ID: 4, On: "2026-12-01", Values: co}}
	wet := []WeighingEvidence{{ID: 1, On: "2026-12-01", Kg: 100, State: StateWet}}
	ev := RankEvidence(estimate(10), moist, wet)
	if ev.DryMass == nil || !near(ev.DryMass.Kg, 90, 1e-12) || !near(ev.DryMass.SigmaKg, math.Hypot(0.9, 1), 1e-12) ||
		!strings.Contains(ev.DryMass.MoistureFrom, "assay 4") || !near(ev.Element("Co").Kg, 9, 1e-12) {
		t.Errorf("wet less the assay's moisture: %+v", ev.DryMass)
	}
	ev = RankEvidence(estimate(10), plain, wet)
	if ev.DryMass != nil || ev.Basis != BasisEstimate || ev.Element("Co").Kg != 10 || !strings.Contains(strings.Join(ev.Notes, " "), "wet with no moisture") {
		t.Errorf("wet without moisture: %+v", ev)
	}
	unsaid := []WeighingEvidence{{ID: 1, On: "2026-11-20", Kg: 50, State: StateDry}, {ID: 2, On: "2026-12-01", Kg: 100}}
	ev = RankEvidence(estimate(10), plain, unsaid)
	if ev.DryMass == nil || ev.DryMass.Kg != 100 || ev.DryMass.State != StateDry || !strings.Contains(strings.Join(ev.Notes, " "), "taken as dry") {
		t.Errorf("latest weighing, neither wet nor dry: %+v %q", ev.DryMass, ev.Notes)
	}
	// A dry weighing ignores the assay's moisture: the sample was wet, the mass on the scale dry.
	ev = RankEvidence(estimate(10), moist, []WeighingEvidence{{Kg: 80, State: StateDry, On: "2026-12-02"}})
	if ev.DryMass.Kg != 80 || ev.DryMass.MoistureWtPct != 0 {
		t.Errorf("dry weighing: %+v", ev.DryMass)
	}
}

// No assay or no weighing: every figure is the estimate's, and the value is the estimate's.
func TestRankEstimateOnly(t *testing.T) {
	for _, c := range []struct {
		as []AssayEvidence
		ws []WeighingEvidence
	}{
		{nil, nil},
		{nil, []WeighingEvidence{{Kg: 100, State: StateDry, On: "2026-12-01"}}},
		{[]AssayEvidence{{Values: []assay.Value{{Element: "Co", WtPct: 10, SigmaWtPct: 0.2}}}}, nil},
	} {
		ev := RankEvidence(estimate(10), c.as, c.ws)
		if ev.Basis != BasisEstimate || ev.Element("Co").Kg != 10 || ev.Element("Co").Measured != nil || *ev.Payable != 5000 ||
			ev.PayableBasis != BasisEstimate {
			t.Errorf("%d assays %d weighings: %+v", len(c.as), len(c.ws), ev)
		}
	}
}

// A censored measurement has no measured/estimate ratio (a range divided by a number is a
// range): only its upper end, limit × dry mass over the estimate's P50. By hand: Co below
// 0.05 wt% of 100 kg dry is below 0.05 kg; over an estimate of 0.2 kg that is below 0.25.
func TestRankCensoredRatioIsABound(t *testing.T) {
	var co assay.Value
	co.Element = "Co"
	co.Censor(0.05)
	as := []AssayEvidence{{ID: 1, On: "2026-12-01", Values: []assay.Value{co}}}
	ws := []WeighingEvidence{{Kg: 100, State: StateDry, On: "2026-12-01"}}
	e := RankEvidence(estimate(0.2), as, ws).Element("Co")
	if e.Ratio != nil {
		t.Errorf("a censored Co has a ratio %v (from the half-limit); want none", *e.Ratio)
	}
	if e.RatioAtMost == nil || !near(*e.RatioAtMost, 0.25, 1e-12) {
		t.Errorf("ratio at most %v, want 0.05 kg / 0.2 kg = 0.25", e.RatioAtMost)
	}
	// The notes (lot show, the export's notes column) say so, with the range.
	ev := RankEvidence(estimate(0.2), as, ws)
	if !strings.Contains(strings.Join(ev.Notes, "\n"), "Co: below the detection limit, 0 to 0.05 kg") {
		t.Errorf("notes %q lack the censored Co", ev.Notes)
	}
}
