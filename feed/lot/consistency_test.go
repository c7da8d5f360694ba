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
// is a share of a component, at most 1); and a measured weight equal to the model's own most
// likely item is not flagged as implausible by the same model.
func TestModelSelfConsistent(t *testing.T) {
	t.Parallel()
	cat := cathodetest.Catalogue(t)
	m, err := DefaultModel()
	if err != nil {
		t.Fatal(err)
	}
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
			ch, err := cat.ParseLabel(e.Key)
			if err != nil {
				t.Fatal(err)
			}
			lot := NewLot(m, false)
			own := model(wh, 0, lot.modeMix(&ch), lot.mode.design(f, 0), lot.mode.global(0)).item / 1000
			probe := manifest.Line{Num: 1, ChemistryLabel: e.Key, Chemistry: &ch, Format: f, EnergyWh: wh, Count: 1, CellsPerItem: 1, MassKg: own}
			if err := lot.Add(probe); err != nil {
				t.Fatal(err)
			}
			if lot.flagged != 0 {
				t.Errorf("%s %s: the model's own item of %.4g kg (%.0f Wh/kg) is flagged: %v", e.Key, f, own, wh/own, lot.warnings)
			}
		}
	}
}
