package register

import (
	"context"
	"errors"
	"fmt"
	"reflect"
	"testing"
	"time"

	"blackmass/feed/calibrate"
)

// smallCalibration fits a calibration on three invented lots of one family and format.
func smallCalibration(t *testing.T, coRatio float64) *calibrate.Calibration {
	t.Helper()
	var lots []calibrate.Lot
	for i, kg := range []float64{10, 20, 40} {
		lots = append(lots, calibrate.Lot{ID: fmt.Sprintf("CAL-%d", i+1), Measures: []calibrate.Measure{{Element: "Co",
			MeasuredKg: coRatio * kg, MeasuredSDKg: 0.03 * kg, EstimateSDKg: 0.15 * kg,
			Parts: []calibrate.Part{{Family: "NMC622", Format: "pack", Kg: kg}}}}})
	}
	c, _, err := calibrate.Fit(lots, calibrate.DefaultOptions(time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC)))
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// Calibrations are numbered in the order saved and read back as saved; the latest is the last.
func TestCalibrations(t *testing.T) {
	t.Parallel()
	r, _ := openTemp(t)
	ctx := context.Background()
	if _, err := r.LatestCalibration(ctx); !errors.Is(err, ErrNoCalibration) {
		t.Fatalf("empty register: %v", err)
	}
	first, second := smallCalibration(t, 0.8), smallCalibration(t, 0.9)
	for i, c := range []*calibrate.Calibration{first, second} {
		v, err := r.SaveCalibration(ctx, c)
		if err != nil || v != i+1 {
			t.Fatalf("save %d: version %d, %v", i+1, v, err)
		}
	}
	if first.Version != 0 {
		t.Error("saving changed the caller's calibration")
	}
	latest, err := r.LatestCalibration(ctx)
	if err != nil {
		t.Fatal(err)
	}
	want := *second
	want.Version = 2
	if !reflect.DeepEqual(latest, &want) {
		t.Errorf("latest %+v, want %+v", latest, want)
	}
	one, err := r.Calibration(ctx, 1)
	if err != nil || one.Version != 1 || one.Elements[0].Factors[0].Mean != first.Elements[0].Factors[0].Mean {
		t.Errorf("version 1: %+v, %v", one, err)
	}
	if _, err := r.Calibration(ctx, 3); !errors.Is(err, ErrNoCalibration) {
		t.Errorf("version 3: %v", err)
	}
	bad := *first
	bad.Format = 0
	if _, err := r.SaveCalibration(ctx, &bad); err == nil {
		t.Error("a calibration of an unknown format was saved")
	}
	var n int
	if err := r.db.QueryRow("SELECT count(*) FROM audit WHERE action = 'calibrate'").Scan(&n); err != nil || n != 2 {
		t.Errorf("%d calibrate audit rows, %v", n, err)
	}
}
