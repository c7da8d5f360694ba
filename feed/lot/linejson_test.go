package lot

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"
)

// A line's JSON is encoding/json's, byte for byte, over random lines: empty and set optional
// fields, text with quotes, HTML characters, control characters, invalid UTF-8 and line
// separators, numbers of every size and sign.
func TestLineJSONAsEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	texts := []string{"", "L-1", `say "hi"`, `back\slash`, "<b>&amp;</b>", "tab\tnl\n", "\x00\x1f", "\xff\xfe", "\u2028\u2029", "ünï 電池", "e\u0301"}
	text := func() string { return texts[rng.IntN(len(texts))] }
	nums := []float64{0, math.Copysign(0, -1), 1, -1.5, 1e-7, 1e-6, 123456.789, 1e20, 1e21, 3e300, math.SmallestNonzeroFloat64}
	num := func() float64 { return nums[rng.IntN(len(nums))] * float64(1+rng.IntN(3)) }
	for i := range 3000 {
		l := LineResult{Line: rng.IntN(1 << 20), ID: text(), Description: text(), ChemistryLabel: text(), Chemistry: text(), Unknown: rng.IntN(2) == 0,
			Format: text(), Count: rng.IntN(5) - 1, CellsPerItem: rng.IntN(3), CapacityText: text(), CapacityGiven: text(), CapacityBasis: text(),
			VoltageV: num(), Application: text(), EnergyWhPerItem: num(), EnergyAssumed: rng.IntN(2) == 0, EnergyFromMass: rng.IntN(2) == 0,
			ChargeAhPerItem: num(), ModelMassKgEach: num(), MeasuredMassKg: num(), MeasuredWhPerKg: num(), CathodeKg: num(), BlackMassKg: num(), Notes: text()}
		switch i % 3 {
		case 0:
			l.ElementsKg = ElementMasses{{"Co", num()}, {"Li", num()}}
			l.Flags = []string{text(), text()}
		case 1:
			l.ElementsKg, l.Flags = ElementMasses{}, []string{}
		}
		want, err := json.Marshal(&l)
		if err != nil {
			t.Fatal(err)
		}
		got, err := l.AppendJSON(nil)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Fatalf("line %d:\n got %s\nwant %s", i, got, want)
		}
	}
	for _, bad := range []LineResult{{VoltageV: math.NaN()}, {BlackMassKg: math.Inf(1)}, {ElementsKg: ElementMasses{{"Co", math.Inf(-1)}}}} {
		if _, err := bad.AppendJSON(nil); err == nil {
			t.Errorf("%+v: no error for a value that is not finite", bad)
		}
	}
}
