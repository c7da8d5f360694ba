package lot

import (
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"

	"blackmass/cathode"
)

// maxExactItems is the largest group whose items are drawn one by one (a multinomial draw); a
// larger group's realised shares are drawn from a Dirichlet with the items as concentration,
// whose variance q(1−q)/(N+1) matches the multinomial's q(1−q)/N to within 1/N.
const maxExactItems = 64

// shareDraws returns, for each sample, the shares of a chemistry's components in a group of
// items: the systematic part (how uncertain the family's or prior's shares are, one draw per
// sample shared by every line of the group) and, where each item holds one of several
// alternatives, the per-item part (a few items scatter around the shares; many average out).
// A chemistry with fixed shares gets its mean shares in every sample.
func (ps *paramSet) shareDraws(ch *cathode.Chemistry, key string, items int) [][]float64 {
	n := max(ps.d.Samples(), 1)
	mean := ch.MeanShares()
	out := make([][]float64, n)
	if !ch.Uncertain() || ps.d.Samples() == 0 {
		for s := range out {
			out[s] = mean
		}
		return out
	}
	src := ps.d.Source("shares " + key)
	rng := rand.New(src)
	gam := func(alpha float64) float64 {
		return distuv.Gamma{Alpha: alpha, Beta: 1, Src: src}.Rand()
	}
	partShare := make([]float64, len(ch.Parts))
	flat := make([]float64, n*len(mean))
	for s := range out {
		sh := flat[s*len(mean) : (s+1)*len(mean)]
		for i, p := range ch.Parts {
			partShare[i] = p.Share
		}
		if ch.SplitConcentration > 0 {
			dirichlet(partShare, ch.SplitConcentration, gam)
		}
		for i, p := range ch.Parts {
			w := make([]float64, len(p.Members))
			tot := 0.0
			for k, m := range p.Members {
				w[k] = mean[m]
				tot += mean[m]
			}
			for k := range w {
				w[k] /= tot
			}
			if p.Concentration > 0 && len(w) > 1 {
				dirichlet(w, p.Concentration, gam)
				if p.Alternatives {
					realise(w, items, rng, gam)
				}
			}
			for k, m := range p.Members {
				sh[m] = partShare[i] * w[k]
			}
		}
		out[s] = sh
	}
	return out
}

// dirichlet replaces the mean shares w with a draw from Dirichlet(conc·w). A draw that
// underflows to all zeros (tiny concentrations) keeps the means.
func dirichlet(w []float64, conc float64, gam func(float64) float64) {
	g := make([]float64, len(w))
	sum := 0.0
	for i, m := range w {
		if m > 0 {
			g[i] = gam(conc * m)
		}
		sum += g[i]
	}
	if !(sum > 0) {
		return
	}
	for i := range w {
		w[i] = g[i] / sum
	}
}

// realise turns shares q into the shares actually held by items items, each holding one
// alternative: a multinomial draw for a few items, a Dirichlet(items·q) for many.
func realise(q []float64, items int, rng *rand.Rand, gam func(float64) float64) {
	if items <= 0 {
		return
	}
	if items > maxExactItems {
		dirichlet(q, float64(items), gam)
		return
	}
	counts := make([]float64, len(q))
	for range items {
		u, acc := rng.Float64(), 0.0
		k := len(q) - 1
		for i, x := range q {
			acc += x
			if u < acc {
				k = i
				break
			}
		}
		counts[k]++
	}
	for i := range q {
		q[i] = counts[i] / float64(items)
	}
}
