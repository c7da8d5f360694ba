package assay_test

import (
	"math"
	"strings"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/assay"
)

// Over the whole catalogue, whose NMC grades are near combinations of one another, the fit
// reports each best fit inside its own bootstrap 95 % range or marks that column multi-modal and
// says so in a note; the best fit's cathode shares sum to 1.
func TestInferMixBestInsideRangeOrMultimodal(t *testing.T) {
	cands := cathodetest.Catalogue(t).Entries()
	feeds := []map[string]float64{
		{"LiNi0.6Mn0.2Co0.2O2": 0.30, "C": 0.35, "C2H2F2": 0.03, "Al": 0.02, "Cu": 0.02},
		{"LiNi0.6Mn0.2Co0.2O2": 0.20, "LiCoO2": 0.15, "LiFePO4": 0.12, "C": 0.33, "Al": 0.015, "Cu": 0.015},
		{"LiNi1/3Mn1/3Co1/3O2": 0.15, "LiNi0.8Mn0.1Co0.1O2": 0.15, "C": 0.34, "Al": 0.02, "Cu": 0.02},
	}
	marked := 0
	for k, feed := range feeds {
		for seed := uint64(1); seed <= 4; seed++ {
			fit, err := assay.InferMix(mustAssay(t, assayCSV(composition(feed), 0.03)), cands, 300, seed)
			if err != nil {
				t.Fatal(err)
			}
			shares := 0.0
			for _, c := range fit.Components {
				outside := c.Best < c.Interval95[0]-1e-12*math.Max(1, c.Best) || c.Best > c.Interval95[1]*(1+1e-3)+1e-12
				if outside && !c.Multimodal {
					t.Errorf("feed %d seed %d %s: best %.4g outside its 95 %% range %v and not marked multi-modal", k, seed, c.Name, c.Best, c.Interval95)
				}
				if c.Multimodal {
					marked++
				}
				if c.BestShare != nil {
					shares += *c.BestShare
				}
			}
			if math.Abs(shares-1) > 1e-9 {
				t.Errorf("feed %d seed %d: best-fit cathode shares sum to %.6f", k, seed, shares)
			}
			hasNote := false
			for _, n := range fit.Notes {
				hasNote = hasNote || strings.Contains(n, "multi-modal")
			}
			if anyMarked(fit) != hasNote {
				t.Errorf("feed %d seed %d: multi-modal columns %v, note %v", k, seed, anyMarked(fit), hasNote)
			}
		}
	}
	if marked == 0 {
		t.Error("no column marked multi-modal over the whole catalogue: the NMC grades should trade the signal")
	}
}

func anyMarked(fit *assay.MixFit) bool {
	for _, c := range fit.Components {
		if c.Multimodal {
			return true
		}
	}
	return false
}
