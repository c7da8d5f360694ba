package lot

import (
	"math/rand/v2"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// maxExactItems is the largest group whose items are drawn one by one (a multinomial draw); a
// larger group's realised shares are drawn from a Dirichlet with the items as concentration,
// whose variance q(1−q)/(N+1) matches the multinomial's q(1−q)/N to within 1/N.
const maxExactItems = 64

// shareSampler draws, sample after sample, the shares of a chemistry's components in a group
// of items: the systematic part (how uncertain the family's or prior's shares are, one draw per
// sample shared by every line of the group) and, where each item holds one of several
// alternatives, the per-item part (a few items scatter around the shares; many average out).
// A chemistry with fixed shares gets its mean shares in every sample. Drawn in turn, the shares
// need memory for one sample, not for all of them.
type shareSampler struct {
	ch               *cathode.Chemistry
	items            int
	mean             []float64
	fixed            bool
	rng              *rand.Rand
	sh, w, partShare []float64
	scratch          []float64
}

// shareDraws returns the sampler of the shares of ch in a group of items, its stream named key.
func (ps *paramSet) shareDraws(ch *cathode.Chemistry, key string, items int) *shareSampler {
	mean := ch.MeanShares()
	ss := &shareSampler{ch: ch, items: items, mean: mean, fixed: !ch.Uncertain() || ps.d.Samples() == 0}
	if ss.fixed {
		return ss
	}
	ss.rng = rand.New(ps.d.Source("shares " + key))
	ss.partShare = make([]float64, len(ch.Parts))
	ss.sh, ss.w, ss.scratch = make([]float64, len(mean)), make([]float64, len(mean)), make([]float64, len(mean))
	return ss
}

// next returns the shares of the next sample. The slice is reused by the following call.
func (ss *shareSampler) next() []float64 {
	if ss.fixed {
		return ss.mean
	}
	ch, rng, sh, partShare, scratch := ss.ch, ss.rng, ss.sh, ss.partShare, ss.scratch
	for i, p := range ch.Parts {
		partShare[i] = p.Share
	}
	if ch.SplitConcentration > 0 {
		dirichlet(partShare, ch.SplitConcentration, rng, scratch)
	}
	for i, p := range ch.Parts {
		w := ss.w[:len(p.Members)]
		for k, m := range p.Members {
			w[k] = ss.mean[m]
		}
		if p.Concentration > 0 && len(w) > 1 {
			dirichlet(w, p.Concentration, rng, scratch)
			if p.Alternatives {
				realise(w, ss.items, rng, scratch)
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
	return sh
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
