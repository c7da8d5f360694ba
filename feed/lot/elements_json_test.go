package lot

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"
)

// A line's metals are written as encoding/json writes a map of them: the same bytes for the
// same numbers, across the exponent forms' boundaries.
func TestElementMassesJSONAsEncodingJSON(t *testing.T) {
	t.Parallel()
	vals := []float64{0, math.Copysign(0, -1), 1, -1, 1e-6, 9.99999e-7, 1e-7, 1.5e-10, 1e20, 1e21, 1.2345e22, 0.1,
		123.456789, math.SmallestNonzeroFloat64, math.MaxFloat64}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 2000 {
		vals = append(vals, math.Pow(10, rng.Float64()*40-20)*(rng.Float64()-0.3))
	}
	for _, v := range vals {
		got, err := ElementMasses{{"Co", v}, {"Li", -v}}.MarshalJSON()
		if err != nil {
			t.Fatal(err)
		}
		a, _ := json.Marshal(v)
		b, _ := json.Marshal(-v)
		if want := `{"Co":` + string(a) + `,"Li":` + string(b) + `}`; string(got) != want {
			t.Fatalf("%v: got %s, want %s", v, got, want)
		}
	}
	if _, err := (ElementMasses{{"Co", math.NaN()}}).MarshalJSON(); err == nil {
		t.Error("NaN written")
	}
}
