package dist_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mathext"

	"blackmass/feed/dist"
)

// Percentiles follow the spreadsheet PERCENTILE.INC definition (linear between order statistics
// at h = p·(n−1); ECMA-376 Part 1, §18.17.7.242): for 1..10, P10 = 1.9, P50 = 5.5, P90 = 9.1.
func TestSummarise(t *testing.T) {
	x := []float64{7, 3, 10, 1, 5, 9, 2, 8, 6, 4}
	s := dist.Summarise(x)
	if s.P10 != 1.9 || s.P50 != 5.5 || s.P90 != 9.1 || s.Mean != 5.5 {
		t.Errorf("Summarise = %+v", s)
	}
	if x[0] != 7 {
		t.Error("Summarise changed its input")
	}
	if (dist.Summarise(nil) != dist.Stat{}) {
		t.Error("empty input")
	}
}

// The same seed and name give the same draws; another name gives others; the mode is drawn
// most often and nothing falls outside the range.
func TestDrawer(t *testing.T) {
	a, b := dist.NewDrawer(7, 5000), dist.NewDrawer(7, 5000)
	x, y := a.Draws("p", 1, 2, 4), b.Draws("p", 1, 2, 4)
	z := a.Draws("q", 1, 2, 4)
	same := true
	for i := range x {
		same = same && x[i] == y[i]
		if x[i] < 1 || x[i] > 4 {
			t.Fatalf("draw %v outside 1..4", x[i])
		}
	}
	if !same || x[0] == z[0] {
		t.Error("draws not reproducible per name")
	}
	// Mean of a triangular distribution is (min + mode + max)/3.
	if m := dist.Summarise(x).Mean; math.Abs(m-7.0/3) > 0.05 {
		t.Errorf("mean %v, want 7/3", m)
	}
	if v := dist.NewDrawer(1, 0).Draws("p", 1, 2, 4); len(v) != 1 || v[0] != 2 {
		t.Errorf("mode-only drawer gave %v", v)
	}
}

// The log of a Gamma(a, 1) draw has mean ψ(a) and variance ψ'(a) (digamma and trigamma; e.g.
// Johnson, Kotz and Balakrishnan, Continuous Univariate Distributions vol. 1, 2nd ed. (1994),
// ch. 17), which holds for shapes far below 1, where the draw itself underflows float64.
func TestLogGammaMoments(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	const n = 200_000
	for _, a := range []float64{1e-4, 0.01, 0.3, 1, 2.5, 40} {
		sum, sum2 := 0.0, 0.0
		for range n {
			x := dist.LogGamma(rng, a)
			if math.IsNaN(x) || math.IsInf(x, 0) {
				t.Fatalf("shape %g: draw %v", a, x)
			}
			sum += x
			sum2 += x * x
		}
		mean := sum / n
		variance := sum2/n - mean*mean
		wantMean, wantVar := mathext.Digamma(a), trigamma(a)
		// Standard error of the mean is sqrt(var/n); 5 of them.
		if se := math.Sqrt(wantVar / n); math.Abs(mean-wantMean) > 5*se {
			t.Errorf("shape %g: mean log %v, want ψ(a) = %v ± %v", a, mean, wantMean, 5*se)
		}
		if math.Abs(variance/wantVar-1) > 0.03 {
			t.Errorf("shape %g: variance of log %v, want ψ'(a) = %v", a, variance, wantVar)
		}
	}
}

// trigamma is ψ'(x) by the recurrence ψ'(x) = ψ'(x+1) + 1/x² up to x ≥ 20 and the asymptotic
// series 1/x + 1/(2x²) + 1/(6x³) − 1/(30x⁵) + 1/(42x⁷) (Abramowitz and Stegun 6.4.6, 6.4.12).
func trigamma(x float64) float64 {
	s := 0.0
	for ; x < 20; x++ {
		s += 1 / (x * x)
	}
	return s + 1/x + 1/(2*x*x) + 1/(6*x*x*x) - 1/(30*math.Pow(x, 5)) + 1/(42*math.Pow(x, 7))
}

// A Dirichlet draw is finite, non-negative and sums to 1 for every concentration, down to
// shapes whose gamma draws are all below the smallest float64; its mean shares are the weights
// (a Dirichlet's mean is α_i/Σα; Kotz, Balakrishnan and Johnson, Continuous Multivariate
// Distributions vol. 1, 2nd ed. (2000), ch. 49).
func TestDirichletSumsToOne(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 4))
	weights := []float64{0.5, 0.3, 0.15, 0.049, 0.001, 0}
	for _, conc := range []float64{1e-320, 1e-300, 1e-12, 0.01, 2, 200, 1e6} {
		mean := make([]float64, len(weights))
		const n = 20_000
		w, scratch := make([]float64, len(weights)), make([]float64, len(weights))
		for range n {
			copy(w, weights)
			dist.Dirichlet(rng, w, conc, scratch)
			sum := 0.0
			for i, x := range w {
				if math.IsNaN(x) || x < 0 || x > 1 {
					t.Fatalf("conc %g: share %v", conc, x)
				}
				sum += x
				mean[i] += x / n
			}
			if math.Abs(sum-1) > 1e-12 {
				t.Fatalf("conc %g: shares sum to %v", conc, sum)
			}
			if w[len(w)-1] != 0 {
				t.Fatalf("conc %g: a zero weight drew %v", conc, w[len(w)-1])
			}
		}
		for i, m := range mean {
			// A share's variance is at most q(1−q) (the limit of a vanishing concentration).
			if se := math.Sqrt(weights[i] * (1 - weights[i]) / n); math.Abs(m-weights[i]) > 5*se+1e-12 {
				t.Errorf("conc %g: mean share %d is %v, want %v ± %v", conc, i, m, weights[i], 5*se)
			}
		}
	}
}

// Sig keeps 9 significant digits at every magnitude float64 holds, subnormals included.
func TestSigExtremes(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ in, want float64 }{
		{8.23036e-318, 8.23036e-318}, {5.1423723121945485e-301, 5.14237231e-301}, {1.23456789123e300, 1.23456789e300},
		{-2.0000000004e-310, -2e-310}, {123.4567891234, 123.456789}, {math.MaxFloat64, 1.79769313e308},
	} {
		if got := dist.Sig(c.in); got != c.want {
			t.Errorf("Sig(%g) = %g, want %g", c.in, got, c.want)
		}
	}
}

// Selection gives the same P10/P50/P90 as sorting and interpolating (PERCENTILE.INC), for
// sizes around the selection and bracketing thresholds, with ties, with runs of zeros, sorted,
// and with a period that fools the brackets' evenly spaced subsample (so the fallback runs).
func TestSummariseSelectionMatchesSort(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{1, 2, 9, 10, 63, 64, 65, 100, 1001, 4000, 8191, 8192, 8193, 20_000, 200_000} {
		for _, kind := range []string{"uniform", "ties", "zeros", "sorted", "periodic"} {
			x := make([]float64, n)
			for i := range x {
				switch kind {
				case "uniform":
					x[i] = rng.Float64()
				case "ties":
					x[i] = float64(rng.IntN(5))
				case "zeros":
					if rng.IntN(3) > 0 {
						x[i] = rng.ExpFloat64()
					}
				case "sorted":
					x[i] = float64(i) / float64(n)
				case "periodic": // the subsample (every n/4096th value) sees only 1s
					x[i] = rng.Float64() * 2
				}
			}
			if kind == "periodic" {
				for j := range 4096 {
					if k := j * n / 4096; k < n {
						x[k] = 1
					}
				}
			}
			s := slices.Clone(x)
			slices.Sort(s)
			got := dist.Summarise(x)
			for _, c := range []struct {
				p, got float64
			}{{0.1, got.P10}, {0.5, got.P50}, {0.9, got.P90}} {
				if want := dist.Sig(dist.Quantile(s, c.p)); c.got != want {
					t.Errorf("n %d %s: quantile %v = %v, sorting gives %v", n, kind, c.p, c.got, want)
				}
			}
		}
	}
}

// BenchmarkSummarise200k summarises 200,000 draws, the largest sample a run takes.
func BenchmarkSummarise200k(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, 200_000)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	for b.Loop() {
		dist.Summarise(x)
	}
}
