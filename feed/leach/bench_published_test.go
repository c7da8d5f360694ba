package leach_test

import (
	"fmt"
	"testing"

	"blackmass/feed/leach"
)

// benchLeach is a published bench leach of LiCoO2 in H2SO4 with H2O2 (vol% of the 30 wt%
// solution) and the extractions it reached.
type benchLeach struct {
	source           string
	acidM, h2o2VolPc float64
	tempC, gPerL     float64
	li, co           float64 // extraction reached, 0 where not given
	spare            bool    // peroxide to spare: at least 1.5× what the cobalt needs
}

var benchLeaches = []benchLeach{
	// Summary of leaching systems for LiCoO2, Table 1 of RSC Adv. 11 (2021) 27689 (secondary).
	{"RSC Adv. 11 (2021) 27689, Table 1: 70 °C, 20 g/L, 60 min", 2, 8, 70, 20, 0.99, 0.99, true},
	{"RSC Adv. 11 (2021) 27689, Table 1: 80 °C, 50 g/L, 60 min", 2, 5, 80, 50, 0.99, 0.99, true},
	{"RSC Adv. 11 (2021) 27689, Table 1: 75 °C, 100 g/L, 30 min", 2, 5, 75, 100, 0.94, 0.93, false},
	// Jha et al., Waste Manag. 33 (2013) 1890: 70 % Co at 0.96× the peroxide the cobalt needs
	// (numbers from memory).
	{"Jha et al. 2013: 75 °C, 100 g/L, 60 min (from memory)", 2, 5, 75, 100, 0, 0.70, false},
}

// Published bench leaches against the planner's P10–P90 of the extraction reached. A leach with
// peroxide to spare is not called peroxide-limited in most samples and its published extraction
// lies inside the band; the test prints the coverage of every published value.
func TestPublishedBenchLeaches(t *testing.T) {
	inside, total := 0, 0
	for _, b := range benchLeaches {
		o := leach.DefaultOptions()
		o.RecipeAcidMolPerL, o.RecipeH2O2VolPct, o.TemperatureC, o.PulpDensityGPerL = b.acidM, b.h2o2VolPc, b.tempC, b.gPerL
		lr, err := leach.PlanFor(tables(t), map[string]float64{"LiCoO2": 1}, o, 1, 1000)
		if err != nil {
			t.Fatal(err)
		}
		limited := 0.0
		for _, l := range lr.Limiting {
			limited = max(limited, l.SampleShare)
		}
		for _, el := range []struct {
			sym string
			pub float64
		}{{"Li", b.li}, {"Co", b.co}} {
			if el.pub == 0 {
				continue
			}
			st := lr.Liquor.ExtractionReached[el.sym]
			in := el.pub >= st.P10 && el.pub <= st.P90
			total++
			if in {
				inside++
			}
			t.Logf("%-58s %s published %.2f, model P10–P90 %.3f–%.3f; H2O2 %.2f× the need (P50), limiting in %.0f %% of samples",
				b.source, el.sym, el.pub, st.P10, st.P90, lr.Reagents[1].Ratio.P50, 100*limited)
			if b.spare && !in {
				t.Errorf("%s: %s published %.2f outside the model's %.3f–%.3f", b.source, el.sym, el.pub, st.P10, st.P90)
			}
		}
		if b.spare && limited > 0.5 {
			t.Errorf("%s: H2O2 at %.2f× the need is limiting in %.0f %% of samples", b.source, lr.Reagents[1].Ratio.P50, 100*limited)
		}
		if b.co == 0.70 && !(b.co >= lr.Liquor.ExtractionReached["Co"].P10 && b.co <= lr.Liquor.ExtractionReached["Co"].P90) {
			t.Errorf("%s: the peroxide-short leach's 70 %% Co lies outside %v: the decomposition allowance disagrees", b.source, lr.Liquor.ExtractionReached["Co"])
		}
	}
	fmt.Printf("published bench leaches: %d of %d extractions inside the model's P10–P90\n", inside, total)
}
