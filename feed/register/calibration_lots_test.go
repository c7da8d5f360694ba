package register

import (
	"context"
	"math"
	"strings"
	"testing"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/lot"
)

// A lot with a manifest, an assay and a weighing becomes a calibration lot: per assayed element
// its assays combined (inverse-variance) times the latest weighing, with the assays' and the
// weighing's uncertainties combined, against each group's estimate; a lot of two groups recorded
// without their elements is named and skipped, and so is a lot whose assays disagree; lots
// without an assay or a weighing are not read.
func TestCalibrationLots(t *testing.T) {
	t.Parallel()
	r, _ := openTemp(t)
	ctx := context.Background()
	one := sampleLot("ONE", "s", "2026-11-01", 1) // one group, recorded without group elements
	two := sampleLot("TWO", "s", "2026-11-02", 1)
	two.Report.Groups = append(two.Report.Groups, lot.GroupResult{Chemistry: "LCO", Format: "pouch"})
	grouped := sampleLot("GROUPED", "s", "2026-11-03", 1)
	grouped.Report.Groups = []lot.GroupResult{
		{Chemistry: "NMC622", Format: "pack", ElementsKg: map[string]dist.Stat{"Co": {P10: 5, P50: 6, P90: 7}, "Ni": {P10: 12, P50: 13, P90: 14}}},
		{Chemistry: "LCO", Format: "pouch", ElementsKg: map[string]dist.Stat{"Co": {P10: 3, P50: 4, P90: 5}}},
	}
	clash := sampleLot("CLASH", "s", "2026-11-04", 1)
	for _, l := range []Lot{one, two, grouped, clash, sampleLot("UNWEIGHED", "s", "2026-11-04", 1)} {
		if _, err := r.Add(ctx, l, false); err != nil {
			t.Fatal(err)
		}
	}
	a := &assay.Assay{Values: []assay.Value{{Element: "Co", WtPct: 8, SigmaWtPct: 0.3}, {Element: "Ni", WtPct: 12, SigmaWtPct: 0.4},
		{Element: "Na", WtPct: 0.1, SigmaWtPct: 0.01}}}
	older := &assay.Assay{Values: []assay.Value{{Element: "Co", WtPct: 8.4, SigmaWtPct: 0.3}}}
	clashing := &assay.Assay{Values: []assay.Value{{Element: "Co", WtPct: 50, SigmaWtPct: 1}}}
	for _, id := range []string{"ONE", "TWO", "GROUPED", "CLASH", "UNWEIGHED"} {
		if id == "CLASH" {
			if _, err := r.AddAssay(ctx, id, "lab", "2026-11-09", "mixup.csv", "x", []byte("x"), clashing); err != nil {
				t.Fatal(err)
			}
		}
		if _, err := r.AddAssay(ctx, id, "lab", "2026-11-10", "old.csv", "x", []byte("x"), older); err != nil {
			t.Fatal(err)
		}
		if _, err := r.AddAssay(ctx, id, "lab", "2026-11-20", "a.csv", "x", []byte("x"), a); err != nil {
			t.Fatal(err)
		}
		if id == "UNWEIGHED" {
			continue
		}
		if err := r.Weigh(ctx, id, "2026-11-05", 50, ""); err != nil {
			t.Fatal(err)
		}
		if err := r.Weigh(ctx, id, "2026-11-15", 100, "the latest"); err != nil {
			t.Fatal(err)
		}
	}
	lots, skipped, err := r.CalibrationLots(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(lots) != 2 || lots[0].ID != "ONE" || lots[1].ID != "GROUPED" {
		t.Fatalf("lots %+v", lots)
	}
	if len(skipped) != 2 || skipped[0].Lot != "TWO" || skipped[1].Lot != "CLASH" || !strings.Contains(skipped[1].Reason, "disagree") {
		t.Errorf("skipped %+v", skipped)
	}
	g := lots[1]
	if len(g.Measures) != 2 {
		t.Fatalf("measures %+v (Na is not tracked by the estimate)", g.Measures)
	}
	co := g.Measures[0]
	// 8 ± 0.3 and 8.4 ± 0.3 wt% combine to 8.2 ± 0.3/√2 wt%, of 100 kg; sd √(0.212² + (1 % of 8.2)²) kg.
	if co.Element != "Co" || math.Abs(co.MeasuredKg-8.2) > 1e-9 || math.Abs(co.MeasuredSDKg-math.Hypot(0.3/math.Sqrt2, 0.082)) > 1e-9 {
		t.Errorf("Co measure %+v", co)
	}
	if len(co.Parts) != 2 || co.Parts[0].Kg != 6 || co.Parts[1].Family != "LCO" || co.Parts[1].Kg != 4 {
		t.Errorf("Co parts %+v", co.Parts)
	}
	if ni := g.Measures[1]; len(ni.Parts) != 1 || ni.Parts[0].Family != "NMC622" {
		t.Errorf("Ni parts %+v", ni.Parts)
	}
	if p := lots[0].Measures[0].Parts; len(p) != 1 || p[0].Kg != 10 {
		t.Errorf("a single group without its elements takes the lot's: %+v", p)
	}
}
