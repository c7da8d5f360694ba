package calibrate

import (
	"math"
	"math/rand/v2"
	"testing"
)

// A factor few lots inform (sd above its mean) never draws 0 or below, which would take the metal
// out of the lot, and its draws keep the posterior's mean and standard deviation; two correlated
// factors keep their correlation's sign. The log-normal's moments: mean m, variance
// m²(exp(σ²) − 1) (Johnson, Kotz and Balakrishnan 1994, Continuous Univariate Distributions vol.
// 1, ch. 14).
func TestFactorDrawsPositiveWithPosteriorMoments(t *testing.T) {
	t.Parallel()
	c := &Calibration{Format: FormatVersion, Elements: []Element{{Element: "Co",
		Factors: []Factor{{Family: "unknown", Format: "cylindrical", Mean: 0.757, SD: 1.024},
			{Family: "NMC622", Format: "pack", Mean: 0.85, SD: 0.04}},
		Covariance: [][]float64{{1.024 * 1.024, 0.5 * 1.024 * 0.04}, {0.5 * 1.024 * 0.04, 0.04 * 0.04}}}}}
	s := c.Sampler([]Key{{"Co", "unknown", "cylindrical"}, {"Co", "NMC622", "pack"}})
	const n = 400_000
	f := s.Draw(rand.NewPCG(7, 11), n)
	for k, want := range []struct{ mean, sd, tol float64 }{{0.757, 1.024, 0.04}, {0.85, 0.04, 0.01}} {
		var sum, sq float64
		for _, v := range f[k] {
			if !(v > 0) || math.IsInf(v, 0) {
				t.Fatalf("factor %d drew %v", k, v)
			}
			sum += v
			sq += v * v
		}
		mean := sum / n
		sd := math.Sqrt(sq/n - mean*mean)
		if math.Abs(mean-want.mean) > want.tol*want.mean || math.Abs(sd-want.sd) > 3*want.tol*want.sd {
			t.Errorf("factor %d: mean %.4f sd %.4f, want %.4f and %.4f", k, mean, sd, want.mean, want.sd)
		}
	}
	var cov float64
	for i := range n {
		cov += (f[0][i] - 0.757) * (f[1][i] - 0.85)
	}
	if cov <= 0 {
		t.Errorf("correlated factors drew uncorrelated or opposite (covariance sum %g)", cov)
	}
}
