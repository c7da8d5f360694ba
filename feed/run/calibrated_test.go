package run_test

import (
	"math"
	"strings"
	"testing"
	"time"

	"blackmass/feed/calibrate"
	"blackmass/feed/run"
)

// oneFactor is a calibration of one element with one factor, for one chemistry and format.
func oneFactor(element, chemistry, format string, mean, sd float64) *calibrate.Calibration {
	return &calibrate.Calibration{Format: calibrate.FormatVersion, Version: 7, CreatedAt: time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC),
		Lots: []string{"A", "B", "C"}, Elements: []calibrate.Element{{Element: element, Lots: 3,
			Factors:       []calibrate.Factor{{Family: chemistry, Format: format, Mean: mean, SD: sd, PriorSD: 0.1, Lots: 3}},
			Covariance:    [][]float64{{sd * sd}},
			FamilyFactors: []calibrate.Factor{{Family: chemistry, Mean: mean, SD: sd, PriorSD: 0.1, Lots: 3}}, FamilyCovariance: [][]float64{{sd * sd}}}}}
}

// A calibration of the LCO pouch group's cobalt scales that group's share of the lot's cobalt by
// its factor (mean 0.5, a tight posterior), leaves the other groups' cobalt, every other element
// and the black mass as they were, names itself first among the warnings, and gives the same
// report for the same seed; every seed gives finite numbers.
func TestCalibratedEstimate(t *testing.T) {
	t.Parallel()
	cal := oneFactor("Co", "LCO", "pouch", 0.5, 1e-6)
	if err := cal.Check(); err != nil {
		t.Fatal(err)
	}
	plain := runOn(t, nil, mixed, run.Options{Seed: 4, Samples: 2000})
	o := run.Options{Seed: 4, Samples: 2000, Calibration: cal, CalibrationSource: "bench.db"}
	c := runOn(t, nil, mixed, o)
	lcoCo := 0.0
	for _, g := range plain.Groups {
		if g.Chemistry == "LCO" && g.Format == "pouch" {
			lcoCo = g.ElementsKg["Co"].Mean
		}
	}
	if lcoCo == 0 {
		t.Fatal("no LCO pouch cobalt in the mixed lot")
	}
	want := plain.Elements["Co"].Kg.Mean - 0.5*lcoCo
	if got := c.Elements["Co"].Kg.Mean; math.Abs(got-want) > 1e-4*want {
		t.Errorf("Co mean %g kg calibrated, want %g", got, want)
	}
	for _, el := range []string{"Ni", "Li", "Al"} {
		if c.Elements[el].Kg != plain.Elements[el].Kg {
			t.Errorf("%s changed: %+v against %+v", el, c.Elements[el].Kg, plain.Elements[el].Kg)
		}
	}
	if c.BlackMassKg != plain.BlackMassKg {
		t.Error("the black mass changed")
	}
	if c.Calibration == nil || c.Calibration.Version != 7 || c.Calibration.Register != "bench.db" ||
		!strings.HasPrefix(c.Warnings[0], "calibrated:") || !strings.Contains(c.Warnings[0], "calibration 7 of register bench.db") {
		t.Errorf("calibration %+v, first warning %q", c.Calibration, c.Warnings[0])
	}
	if plain.Calibration != nil || strings.HasPrefix(plain.Warnings[0], "calibrated") {
		t.Error("an uncalibrated run names a calibration")
	}
	again := runOn(t, nil, mixed, o)
	if again.Elements["Co"] != c.Elements["Co"] {
		t.Error("the same seed gave a different calibrated cobalt")
	}
	wide := oneFactor("Co", "LCO", "", 1, 0.9) // draws below 0 are taken as 0
	for seed := range uint64(20) {
		_ = runOn(t, nil, mixed, run.Options{Seed: seed, Samples: 200, Calibration: wide}) // runOn fails on a non-finite report
	}
}
