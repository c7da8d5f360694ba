package calibrate

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkFit1000 calibrates on 1,000 simulated lots (four elements, up to three parts each).
func BenchmarkFit1000(b *testing.B) {
	lots := lotsOf(simLots(1, 1000, "B"))
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := Fit(lots, DefaultOptions(simTime)); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFactorDraw draws the factors a lot of three (family, format) parts needs for nine
// elements (27 keys, the elements the model tracks, every one calibrated: the simulation's Co
// factors stand in for each) and applies them, per Monte Carlo sample: the cost the calibration
// adds to each sample of an estimate.
func BenchmarkFactorDraw(b *testing.B) {
	fit, _ := fitOrFatal(b, lotsOf(simLots(2, 200, "B")), DefaultOptions(simTime))
	c := &Calibration{Format: FormatVersion, CreatedAt: simTime}
	var keys []Key
	for _, el := range []string{"Co", "Li", "Mn", "Ni", "Al", "Cu", "Fe", "P", "C"} {
		e := *fit.element("Co")
		e.Element = el
		c.Elements = append(c.Elements, e)
		for _, p := range [][2]string{{"NMC622", "pack"}, {"NMC811", "pouch"}, {"LCO", "cylindrical"}} {
			keys = append(keys, Key{el, p[0], p[1]})
		}
	}
	const samples = 1000
	kg := make([]float64, samples)
	src := rand.NewPCG(1, 2)
	b.ReportAllocs()
	for b.Loop() {
		s := c.Sampler(keys)
		f := s.Draw(src, samples)
		for k := range f {
			for i, v := range f[k] {
				kg[i] += v
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/samples, "ns/sample")
}
