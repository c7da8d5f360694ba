package feed

import (
	"math/rand/v2"

	"blackmass/cathode"
	"blackmass/feed/dist"
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
	rng := rand.New(ps.d.Source("shares " + key))
	partShare := make([]float64, len(ch.Parts))
	scratch := make([]float64, len(mean))
	flat := make([]float64, n*len(mean))
	w := make([]float64, len(mean))
	for s := range out {
		sh := flat[s*len(mean) : (s+1)*len(mean)]
		for i, p := range ch.Parts {
			partShare[i] = p.Share
		}
		if ch.SplitConcentration > 0 {
			dirichlet(partShare, ch.SplitConcentration, rng, scratch)
		}
		for i, p := range ch.Parts {
			w := w[:len(p.Members)]
			for k, m := range p.Members {
				w[k] = mean[m]
			}
			if p.Concentration > 0 && len(w) > 1 {
				dirichlet(w, p.Concentration, rng, scratch)
				if p.Alternatives {
					realise(w, items, rng, scratch)
				}
			} else {
				tot := 0.0
				for _, x := range w {
					tot += x
				}
				for k := range w {
					w[k] /= tot
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

// dirichlet replaces the shares w with a draw from Dirichlet(conc·w), drawn and normalised in
// log space so that small shapes neither underflow nor leave 0/0 (see dist.Dirichlet).
func dirichlet(w []float64, conc float64, rng *rand.Rand, scratch []float64) {
	dist.Dirichlet(rng, w, conc, scratch[:len(w)])
}

// realise turns shares q into the shares actually held by items items, each holding one
// alternative: a multinomial draw for a few items, a Dirichlet(items·q) for many.
func realise(q []float64, items int, rng *rand.Rand, scratch []float64) {
	if items <= 0 {
		return
	}
	if items > maxExactItems {
		dirichlet(q, float64(items), rng, scratch)
		return
	}
	counts := scratch[:len(q)]
	clear(counts)
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
