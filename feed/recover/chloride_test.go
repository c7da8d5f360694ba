package recover_test

import (
	"strings"
	"testing"

	"blackmass/feed/recover"
)

// TestChlorideLabels: on a chloride liquor the acid an electrowinning cell or an oxalate
// precipitation gives back is HCl (2 mol per mol of metal), not H2SO4, and the effluent's
// caution names the salt it holds.
func TestChlorideLabels(t *testing.T) {
	for _, product := range []string{"electrowin", "oxalate"} {
		lq := liquor(20, 1000, nmcLiquor, 0.3, 0.3, 5)
		lq.Anion = "Cl"
		fs := recover.DefaultFlowsheet()
		fs.Steps[3].Product = product
		r := plan(t, lq, fs, 20)
		found := false
		for _, st := range r.Stages {
			for _, f := range st.Figures {
				if strings.Contains(f.Name, "H2SO4") {
					t.Errorf("%s on a chloride liquor: figure %q", product, f.Name)
				}
				if strings.Contains(f.Name, "kg HCl") {
					found = true
				}
			}
			for _, c := range st.Cautions {
				if strings.Contains(c, "sodium sulfate") {
					t.Errorf("%s stage on a chloride liquor: caution %q", st.Kind, c)
				}
			}
		}
		if !found {
			t.Errorf("%s on a chloride liquor: no figure of the HCl given back", product)
		}
	}
}
