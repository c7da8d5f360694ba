package recover_test

import (
	"strings"
	"testing"

	"blackmass/feed/recover"
)

// TestChlorideLabels: on a chloride liquor the acid an oxalate precipitation gives back is HCl
// (2 mol per mol of metal), not H2SO4, no figure names H2SO4, and the effluent's caution names
// the salt it holds.
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
		if product == "oxalate" && !found {
			t.Errorf("%s on a chloride liquor: no figure of the HCl given back", product)
		}
	}
}

// TestChlorideElectrowinChlorine: a chloride electrolyte gives chlorine at the anode
// (2 Cl- -> Cl2 + 2 e-; Cl2 is oxidised before water on the usual anodes), one Cl2 per metal
// plated (M2+ + 2 Cl- -> M + Cl2), so no oxygen and no acid regenerated; the stage cautions
// name the chlorine.
func TestChlorideElectrowinChlorine(t *testing.T) {
	lq := liquor(20, 1000, nmcLiquor, 0.3, 0.3, 5)
	lq.Anion = "Cl"
	r := plan(t, lq, recover.DefaultFlowsheet(), 20)
	for _, st := range r.Stages {
		if st.Kind != recover.KindCobalt {
			continue
		}
		var platedKg, cl2Kg float64
		for _, s := range st.Solids {
			platedKg += s.DryKg.Mean
		}
		for _, g := range st.Gases {
			switch g.Formula {
			case "O2":
				t.Errorf("cobalt electrowinning from chloride: O2 %.3g kg at the anode", g.Kg.Mean)
			case "Cl2":
				cl2Kg = g.Kg.Mean
			}
		}
		for _, f := range st.Figures {
			if strings.HasPrefix(f.Name, "acid regenerated") {
				t.Errorf("cobalt electrowinning from chloride: figure %q", f.Name)
			}
		}
		// Co 58.933, Cl2 70.906 g/mol (CIAAW 2021): about 1.2 kg Cl2 per kg plated (Co with a
		// little Ni and Cu, all M2+).
		if platedKg <= 0 || cl2Kg < 1.1*platedKg || cl2Kg > 1.3*platedKg {
			t.Errorf("cobalt electrowinning from chloride: %.3g kg plated, %.3g kg Cl2", platedKg, cl2Kg)
		}
		if !strings.Contains(strings.Join(st.Cautions, " "), "chlorine") {
			t.Errorf("cobalt electrowinning from chloride: no chlorine caution in %q", st.Cautions)
		}
		return
	}
	t.Fatal("no cobalt stage")
}
