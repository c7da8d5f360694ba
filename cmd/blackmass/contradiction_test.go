package main

import (
	"strings"
	"testing"
)

// chem's selective row shows what that route dissolves: a layered oxide stays whole (no acid,
// no sulfates), a phosphate gives its lithium and keeps its iron as FePO4.
func TestChemSelectiveRowShowsWhatTheRouteDissolves(t *testing.T) {
	code, out, errs := cli(t, "", "chem", "NMC622", "LFP")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var oxide, phosphate string
	for _, ln := range strings.Split(out, "\n") {
		if strings.HasPrefix(strings.TrimSpace(ln), "sulfuric-selective") && strings.Contains(ln, "→") {
			switch {
			case strings.Contains(ln, "LiNi0.6Mn0.2Co0.2O2"):
				oxide = ln
			case strings.Contains(ln, "LiFePO4"):
				phosphate = ln
			}
		}
	}
	if oxide == "" || strings.Contains(oxide, "SO4") || !strings.Contains(oxide, "residue") {
		t.Errorf("NMC622 on the selective route: %q, want it left in the residue", oxide)
	}
	if !strings.Contains(phosphate, "Li2SO4") || !strings.Contains(phosphate, "FePO4") {
		t.Errorf("LFP on the selective route: %q, want Li2SO4 and FePO4", phosphate)
	}
}
