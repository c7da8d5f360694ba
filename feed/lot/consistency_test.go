package lot

import (
	"math"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/manifest"
)

// consistencySamples is enough draws to reach the ranges' tails.
const consistencySamples = 2000

// For every catalogued chemistry in every format, at every draw: the components sum to the cell
// mass and the cell to the item (conservation of mass); the black mass is no more than the
// coatings, the foils' carry-over and the other carry-overs allow (each recovery and carry-over
// is a share of a component, at most 1).
func TestModelSelfConsistent(t *testing.T) {
	t.Parallel()
	cat := cathodetest.Catalogue(t)
	for _, e := range cat.Entries() {
		for _, f := range manifest.Formats() {
			const wh = 50.0
			for i, d := range cellDraws(t, e.Key, f, wh, 0)[:consistencySamples] {
				b := d.b
				parts := b.cam + b.graphite + b.al + b.cu + b.electrolyte + b.bc + b.separator + b.casing
				if math.Abs(parts-b.cell) > 1e-9*b.cell || math.Abs(b.item*(1-d.fd.overhead)-b.cell) > 1e-9*b.cell {
					t.Fatalf("%s %s draw %d: components %g g, cell %g g, item %g g", e.Key, f, i, parts, b.cell, b.item)
				}
				bm := make([]float64, nFixedCompounds+1)
				b.blackMass(bm, d.fd, d.g, []int{nFixedCompounds}, []float64{1})
				total := 0.0
				for _, v := range bm {
					total += v
				}
				// The most each component can give to the fines.
				bound := b.cam + b.graphite + b.bc + b.al*d.g.carryAl + b.cu*d.g.carryCu + b.casing*max(d.g.carryCasing, d.g.carryPolymer) +
					b.separator*d.g.carryPolymer + b.electrolyte*d.g.lipf6
				if !(total <= bound*(1+1e-12)) || total > b.cell {
					t.Fatalf("%s %s draw %d: black mass %g g above what the cell can give (%g g; cell %g g)", e.Key, f, i, total, bound, b.cell)
				}
			}
		}
	}
}

// For every catalogued chemistry in every format, the modelled item at every parameter's mode
// lies inside the plausible Wh/kg band the same model uses to flag a measured weight, so a weight
// equal to the model's own item is not flagged. No chemistry is excepted.
func TestModelInsideItsBand(t *testing.T) {
	t.Parallel()
	cat := cathodetest.Catalogue(t)
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range cat.Entries() {
		ch, err := cat.ParseLabel(e.Key)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range manifest.Formats() {
			const wh = 50.0
			lot := NewLot(m, false)
			own := model(wh, 0, lot.modeMix(&ch), lot.mode.designOf(&ch, f, 0), lot.mode.global(0)).item / 1000
			lo, hi := lot.band(&ch, f)
			in := wh/own >= lo && wh/own <= hi
			probe := manifest.Line{Num: 1, ChemistryLabel: e.Key, Chemistry: &ch, Format: f, EnergyWh: wh, Count: 1, CellsPerItem: 1, MassKg: own}
			if err := lot.Add(probe); err != nil {
				t.Fatal(err)
			}
			if in != (lot.flagged == 0) {
				t.Errorf("%s %s: %.0f Wh/kg in %.0f–%.0f is %v, flagged %d", e.Key, f, wh/own, lo, hi, in, lot.flagged)
			}
			t.Logf("%-12s %-12s model %4.0f Wh/kg, band %4.0f–%4.0f", e.Key, f, wh/own, lo, hi)
			if !in {
				t.Errorf("%s %s: the model's own item (%.0f Wh/kg) lies outside the plausible %.0f–%.0f Wh/kg", e.Key, f, wh/own, lo, hi)
			}
		}
	}
}

// A measured weight inside the plausible band constrains the result: the line's modelled item
// weighs what was measured, and of two weights the heavier gives more foil (Cu, Al) in the black
// mass, the cathode staying what the nameplate gives; a weight the band flags constrains nothing.
func TestWeightConstrainsTheCell(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
	ch, err := cat.ParseLabel("NMC622")
	if err != nil {
		t.Fatal(err)
	}
	run := func(kg float64) (*Result, LineResult) {
		t.Helper()
		lot := NewLot(m, true)
		ln := manifest.Line{Num: 1, ChemistryLabel: "NMC622", Chemistry: &ch, Format: manifest.Pouch, EnergyWh: 200, Count: 10, CellsPerItem: 1, MassKg: kg}
		if err := lot.Add(ln); err != nil {
			t.Fatal(err)
		}
		r, _, err := lot.Estimate(1, 2000)
		if err != nil {
			t.Fatal(err)
		}
		return r, r.Lines[0]
	}
	// 200 Wh at 190 and at 230 Wh/kg: both inside the NMC622 band (160-260 Wh/kg).
	heavy, hl := run(200.0 / 190)
	light, ll := run(200.0 / 230)
	none, nl := run(0)
	for _, c := range []struct {
		l    LineResult
		want float64
	}{{hl, 200.0 / 190}, {ll, 200.0 / 230}} {
		if math.Abs(c.l.ModelMassKgEach-c.want) > 1e-4*c.want {
			t.Errorf("weighed %.4f kg, modelled item %.4f kg", c.want, c.l.ModelMassKgEach)
		}
	}
	if nl.ModelMassKgEach == hl.ModelMassKgEach {
		t.Errorf("no weight and a weight give the same item: %v", nl.ModelMassKgEach)
	}
	for _, el := range []string{"Cu", "Al"} {
		if !(heavy.Elements[el].Kg.P50 > light.Elements[el].Kg.P50) {
			t.Errorf("%s: heavier cells %.4f kg, lighter %.4f kg in the black mass", el, heavy.Elements[el].Kg.P50, light.Elements[el].Kg.P50)
		}
	}
	if d := math.Abs(heavy.Elements["Co"].Kg.P50 - none.Elements["Co"].Kg.P50); d > 1e-9 {
		t.Errorf("the weight changed the cathode's cobalt by %g kg", d)
	}
	// 200 Wh at 100 Wh/kg is flagged: the result is the unweighed one.
	flagged, _ := run(2)
	if flagged.Elements["Cu"].Kg.P50 != none.Elements["Cu"].Kg.P50 {
		t.Errorf("a flagged weight changed the copper: %.4f against %.4f kg", flagged.Elements["Cu"].Kg.P50, none.Elements["Cu"].Kg.P50)
	}
}
