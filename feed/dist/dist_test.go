package dist_test

import (
	"math"
	"testing"

	"blackmass/feed/dist"
)

// Percentiles follow the spreadsheet PERCENTILE.INC definition (linear between order statistics
// at h = p·(n−1); ECMA-376 Part 1, §18.17.7.242): for 1..10, P10 = 1.9, P50 = 5.5, P90 = 9.1.
func TestSummarise(t *testing.T) {
	x := []float64{7, 3, 10, 1, 5, 9, 2, 8, 6, 4}
	s := dist.Summarise(x)
	if s.P10 != 1.9 || s.P50 != 5.5 || s.P90 != 9.1 || s.Mean != 5.5 {
		t.Errorf("Summarise = %+v", s)
	}
	if x[0] != 7 {
		t.Error("Summarise changed its input")
	}
	if (dist.Summarise(nil) != dist.Stat{}) {
		t.Error("empty input")
	}
}

// The same seed and name give the same draws; another name gives others; the mode is drawn
// most often and nothing falls outside the range.
func TestDrawer(t *testing.T) {
	a, b := dist.NewDrawer(7, 5000), dist.NewDrawer(7, 5000)
	x, y := a.Draws("p", 1, 2, 4), b.Draws("p", 1, 2, 4)
	z := a.Draws("q", 1, 2, 4)
	same := true
	for i := range x {
		same = same && x[i] == y[i]
		if x[i] < 1 || x[i] > 4 {
			t.Fatalf("draw %v outside 1..4", x[i])
		}
	}
	if !same || x[0] == z[0] {
		t.Error("draws not reproducible per name")
	}
	// Mean of a triangular distribution is (min + mode + max)/3.
	if m := dist.Summarise(x).Mean; math.Abs(m-7.0/3) > 0.05 {
		t.Errorf("mean %v, want 7/3", m)
	}
	if v := dist.NewDrawer(1, 0).Draws("p", 1, 2, 4); len(v) != 1 || v[0] != 2 {
		t.Errorf("mode-only drawer gave %v", v)
	}
}
