package dist

import (
	"math"
	"math/rand/v2"
)

// LogGamma returns the natural logarithm of a draw from Gamma(shape, 1), shape > 0. For shape
// ≥ 1 it is the method of Marsaglia and Tsang (ACM Trans. Math. Softw. 26 (2000) 363); below 1
// it uses their boost G(a) = G(a+1)·U^(1/a) (same paper, section 6) taken in logs,
// log G(a) = log G(a+1) + log(U)/a, so that a draw far below the smallest float64 (shapes of
// 0.01 give draws of 10⁻³⁰⁰ and less) stays a finite number instead of underflowing to 0.
func LogGamma(rng *rand.Rand, shape float64) float64 {
	boost := 0.0
	if shape < 1 {
		// 1 − Float64 lies in (0, 1], so its logarithm is finite.
		boost = math.Log(1-rng.Float64()) / shape
		shape++
	}
	d := shape - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := rng.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := 1 - rng.Float64()
		if u < 1-0.0331*(x*x)*(x*x) || math.Log(u) < 0.5*x*x+d*(1-v+math.Log(v)) {
			return math.Log(d) + math.Log(v) + boost
		}
	}
}

// Dirichlet replaces the weights w (non-negative, not all zero; they need not sum to 1) with a
// draw from Dirichlet(conc·w/Σw): a gamma draw per positive weight, normalised in log space
// (each draw divided by the largest before summing), so the result sums to 1 whatever the
// shapes. logG is scratch of len(w). A weight of 0 stays 0. When every draw is too small even
// for its logarithm (shapes below about 10⁻³⁰⁶), the draw is the Dirichlet's limit for a
// vanishing concentration: all of the mass on one member, picked with probability its weight.
func Dirichlet(rng *rand.Rand, w []float64, conc float64, logG []float64) {
	total := 0.0
	for _, m := range w {
		total += m
	}
	if !(total > 0) || !(conc > 0) {
		return
	}
	top := math.Inf(-1)
	for i, m := range w {
		logG[i] = math.Inf(-1)
		if m > 0 {
			logG[i] = LogGamma(rng, conc*m/total)
			top = math.Max(top, logG[i])
		}
	}
	if math.IsInf(top, -1) {
		oneOf(rng, w, total)
		return
	}
	sum := 0.0
	for i := range w {
		w[i] = math.Exp(logG[i] - top) // the largest is 1, so the sum is at least 1
		sum += w[i]
	}
	for i := range w {
		w[i] /= sum
	}
}

// oneOf sets w to 1 at one index, picked with probability w[i]/total, and 0 elsewhere.
func oneOf(rng *rand.Rand, w []float64, total float64) {
	u, acc, k := rng.Float64()*total, 0.0, -1
	for i, m := range w {
		if m <= 0 {
			continue
		}
		k, acc = i, acc+m // the last positive weight also takes what rounding leaves above acc
		if u < acc {
			break
		}
	}
	for i := range w {
		w[i] = 0
	}
	w[k] = 1
}
