package recover_test

import (
	"testing"

	"blackmass/feed/recover"
)

func share(t *testing.T, r *recover.Report, el, to string) float64 {
	t.Helper()
	for _, f := range r.Fates {
		if f.Element != el {
			continue
		}
		for _, d := range f.To {
			if d.Name == to {
				return d.WtPct.P50 / 100
			}
		}
		return 0
	}
	t.Fatalf("no fate of %s", el)
	return 0
}

func shareP10(t *testing.T, r *recover.Report, el, to string) float64 {
	t.Helper()
	for _, f := range r.Fates {
		if f.Element == el {
			for _, d := range f.To {
				if d.Name == to {
					return d.WtPct.P10 / 100
				}
			}
		}
	}
	return 0
}

// Chernyaev et al. 2021 (Sci. Rep., doi 10.1038/s41598-021-02019-2, abstract): without Al, Fe
// precipitated already at pH 3.5 with no co-precipitation of Ni, Co or Li; Fe and Al both
// precipitate at ca. pH 4, and 2-4 g/L Al lose Ni 2-10 %, Co 1-2 %, Li 2-10 % to the cake at
// pH 4. Chernyaev et al. 2023 (Sci. Rep. 13:21445, abstract): hydroxide nucleation from pH 3.
func TestImpurityRemovalAsPublished(t *testing.T) {
	t.Parallel()
	base := map[string]float64{"Li": 3.5, "Ni": 10, "Co": 10}
	withFe := map[string]float64{"Fe": 2}
	for k, v := range base {
		withFe[k] = v
	}
	imp := func(pH float64) recover.Flowsheet {
		return steps(step(recover.KindImpurity, func(s *recover.Step) { s.PH = pH; s.Copper = "none" }))
	}
	lq := liquor(300, 1000, withFe, 0.3, 1, 5)
	r := plan(t, lq, imp(3.5), 300)
	if got := shareP10(t, r, "Fe", "impurity cake"); got < 0.97 {
		t.Errorf("Fe out at pH 3.5 without Al: %.3f (P10), want nearly all", got)
	}
	for _, el := range []string{"Ni", "Co", "Li"} {
		if got := share(t, r, el, "impurity cake"); got > 1e-6 {
			t.Errorf("%s lost without Al at pH 3.5: %.4f, want none", el, got)
		}
	}
	// Hydroxide from pH 3: at pH 2 the iron stays. (A hydroxide's residual falls a decade per 1/3
	// pH unit; the measured onset-to-complete window, pH 3 to 3.5, is narrower than that, so
	// pH 2.5 lies between what the model and the measurement give.)
	if got := share(t, plan(t, lq, imp(2), 300), "Fe", "impurity cake"); got > 0.05 {
		t.Errorf("Fe out at pH 2: %.3f, want it still dissolved (hydroxide from pH 3)", got)
	}
	withAl := map[string]float64{"Al": 3}
	for k, v := range withFe {
		withAl[k] = v
	}
	r = plan(t, liquor(300, 1000, withAl, 0.3, 1, 6), imp(4), 300)
	if got := share(t, r, "Al", "impurity cake"); got < 0.95 {
		t.Errorf("Al out at pH 4: %.3f, want nearly all", got)
	}
	for _, c := range []struct {
		el     string
		lo, hi float64
	}{{"Ni", 0.02, 0.10}, {"Co", 0.01, 0.02}, {"Li", 0.02, 0.10}} {
		if got := share(t, r, c.el, "impurity cake"); got < c.lo || got > c.hi {
			t.Errorf("%s lost at pH 4 with 3 g/L Al: %.4f, published %g-%g", c.el, got, c.lo, c.hi)
		}
	}
	// LiOH halves the co-precipitation (same source).
	lioh := imp(4)
	lioh.Steps[0].Base = "LiOH"
	r2 := plan(t, liquor(300, 1000, withAl, 0.3, 1, 6), lioh, 300)
	if a, b := share(t, r2, "Co", "impurity cake"), share(t, r, "Co", "impurity cake"); !(a < 0.6*b && a > 0.4*b) {
		t.Errorf("Co loss with LiOH %.4f against NaOH %.4f: want about half", a, b)
	}
}
