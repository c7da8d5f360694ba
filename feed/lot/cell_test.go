package lot

import (
	"math"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/data/datatest"
	"blackmass/feed/manifest"
)

// The current collectors follow from the cathode's capacity, the areal capacity and the foils'
// thickness and density: a hand-worked cell.
func TestFoilsFromAreaAndThickness(t *testing.T) {
	// Densities at 20 °C: Al 2.70 g/cm³, Cu 8.96 g/cm³ (CRC Handbook of Chemistry and Physics,
	// section 4, density of the elements).
	g := globals{np: 1.1, qGraphiteMAhG: 350, utilisation: 0.9, rhoAlGCm3: 2.70, rhoCuGCm3: 8.96}
	f := design{arealMAhCm2: 2, alUm: 15, cuUm: 10, elGPerM2: 63, bc: 0.03, sep: 0.03, casing: 0.2}
	// 0.9 Ah at 3.6 V (3.24 Wh) from a 150 mAh/g cathode used at 90 %: 6.667 g of cathode holding
	// 1 Ah, coated 2 mAh/cm² a side on both sides of 250 cm² of each foil.
	b := model(3.24, 0, mix{capMAhG: 150, voltV: 3.6}, f, g)
	const camG = 1 / 0.150
	want := map[string][2]float64{
		"cathode":     {b.cam, camG},
		"graphite":    {b.graphite, 1.1 / 0.350},
		"Al foil":     {b.al, 250 * 15e-4 * 2.70},
		"Cu foil":     {b.cu, 250 * 10e-4 * 8.96},
		"electrolyte": {b.electrolyte, 63 * 2 * 250e-4}, // 63 g/m² over the 500 cm² coated
		"cell":        {b.cell, (camG + 1.1/0.350 + 250*15e-4*2.70 + 250*10e-4*8.96 + 63*2*250e-4) / (1 - 0.03 - 0.03 - 0.2)},
	}
	for name, gw := range want {
		if math.Abs(gw[0]-gw[1]) > 1e-9*gw[1] {
			t.Errorf("%s: %.6f g, want %.6f g", name, gw[0], gw[1])
		}
	}
	// Halving the areal capacity doubles the foil area and so the foils and the electrolyte in
	// the coatings' pores, and nothing else but the cell mass they are part of.
	f.arealMAhCm2 = 1
	b2 := model(3.24, 0, mix{capMAhG: 150, voltV: 3.6}, f, g)
	if math.Abs(b2.al-2*b.al) > 1e-9 || math.Abs(b2.cu-2*b.cu) > 1e-9 || b2.cam != b.cam || math.Abs(b2.electrolyte-2*b.electrolyte) > 1e-9 {
		t.Errorf("halved areal capacity: Al %.4f→%.4f g, Cu %.4f→%.4f g", b.al, b2.al, b.cu, b2.cu)
	}
}

// A chemistry's own design row (data/model.csv, scope "chemistry") replaces its format's areal
// capacity for that chemistry alone: the early LiFePO4 cells take the published 26650 power
// cell's 1.28 mAh/cm² (Prada et al., J. Electrochem. Soc. 160 (2013) A616), current LiFePO4 and
// a blend holding the early grade keep the format's.
func TestChemistryDesignRow(t *testing.T) {
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	cat := cathodetest.Catalogue(t)
	ps := newParamSet(m, 0, 0)
	format := ps.design(manifest.Cylindrical, 0).arealMAhCm2
	for label, want := range map[string]float64{"LFP-early": 1.28, "LFP-current": format, "LFP-early+NMC532 50/50": format} {
		ch, err := cat.ParseLabel(label)
		if err != nil {
			t.Fatal(err)
		}
		if got := ps.designOf(&ch, manifest.Cylindrical, 0).arealMAhCm2; got != want {
			t.Errorf("%s: %g mAh/cm², want %g", label, got, want)
		}
	}
	if _, err := LoadModel(datatest.Edited(t, map[string]func(string) string{"model.csv": func(s string) string { return s + "\nchemistry LFP-early,np_ratio,1,1.1,1.2,ratio,x\n" }})); err == nil {
		t.Error("a chemistry row of a parameter other than its own design was accepted")
	}
}
