package calibrate

import (
	"math"
	"math/rand/v2"
	"slices"

	"blackmass/feed/dist"
)

// Key names one factor a lot's Monte Carlo needs: an element from one family and format.
type Key struct{ Element, Family, Format string }

// Sampler draws, sample by sample, the factors of a chosen set of keys: jointly within an
// element (the factors of one element are correlated through the lots they share), from the
// marginal posterior of just the factors the keys use, so a draw costs one normal per factor
// used, not per factor fitted.
type Sampler struct {
	keys   []Key
	groups []drawGroup
	slot   []slot // per key
}

type slot struct{ group, pos int } // group −1: uncalibrated

// drawGroup is the factors of one element's set that the keys use.
type drawGroup struct {
	element string
	set     int
	mean    []float64
	sd      []float64 // each factor's marginal standard deviation
	chol    []float64 // lower-triangular, k×k row-major
}

// stream names the group's random stream.
func (g drawGroup) stream() string {
	if g.set == familySet {
		return "calibration/" + g.element + "/family"
	}
	return "calibration/" + g.element
}

// Sampler returns a sampler of the factors for keys. A key whose element or family the
// calibration has no factor for is uncalibrated: its factor is 1.
func (c *Calibration) Sampler(keys []Key) *Sampler {
	s := &Sampler{keys: keys, slot: make([]slot, len(keys))}
	type groupKey struct {
		element string
		set     int
	}
	byGroup := map[groupKey]int{}
	var cells [][]int // per group: factor indices used
	for i, k := range keys {
		s.slot[i] = slot{-1, 0}
		e := c.element(k.Element)
		if e == nil {
			continue
		}
		set, fi := e.lookup(k.Family, k.Format)
		if set < 0 {
			continue
		}
		g, ok := byGroup[groupKey{k.Element, set}]
		if !ok {
			g = len(s.groups)
			byGroup[groupKey{k.Element, set}] = g
			s.groups = append(s.groups, drawGroup{element: k.Element, set: set})
			cells = append(cells, nil)
		}
		pos := slices.Index(cells[g], fi)
		if pos < 0 {
			pos = len(cells[g])
			cells[g] = append(cells[g], fi)
		}
		s.slot[i] = slot{g, pos}
	}
	for g := range s.groups {
		fs, cov := c.element(s.groups[g].element).set(s.groups[g].set)
		sub := make([][]float64, len(cells[g]))
		for a, fa := range cells[g] {
			s.groups[g].mean = append(s.groups[g].mean, fs[fa].Mean)
			sub[a] = make([]float64, len(cells[g]))
			for b, fb := range cells[g] {
				sub[a][b] = cov[fa][fb]
			}
			s.groups[g].sd = append(s.groups[g].sd, math.Sqrt(cov[fa][fa]))
		}
		// Check has shown the full covariance positive definite, so is every principal submatrix.
		s.groups[g].chol, _ = cholesky(sub)
	}
	return s
}

// Calibrated reports whether key i has a factor (false: its factor is 1).
func (s *Sampler) Calibrated(i int) bool { return s.slot[i].group >= 0 }

// Draw returns n draws of every key's factor, [key][sample], from one stream src. Keys that
// share a factor share its slice; the slices are read-only.
func (s *Sampler) Draw(src rand.Source, n int) [][]float64 {
	r := rand.New(src)
	return s.draw(n, func(int) *rand.Rand { return r })
}

// DrawWith returns the factors' draws for the drawer's samples, each element from its own
// stream ("calibration/<element>", and "calibration/<element>/family" for the family-only
// factors), so that calibrating one more element shifts no other parameter. With a drawer of
// 0 samples (most likely values) each factor is its posterior mean.
func (s *Sampler) DrawWith(d *dist.Drawer) [][]float64 {
	if d.Samples() == 0 {
		return s.means()
	}
	return s.draw(d.Samples(), func(g int) *rand.Rand { return rand.New(d.Source(s.groups[g].stream())) })
}

func (s *Sampler) means() [][]float64 {
	out := make([][]float64, len(s.keys))
	for i, sl := range s.slot {
		out[i] = []float64{1}
		if sl.group >= 0 {
			out[i][0] = s.groups[sl.group].mean[sl.pos]
		}
	}
	return out
}

// draw makes n joint draws per group. The posterior is Gaussian, but a factor on a mass cannot
// be negative, and where few lots inform a factor its spread can reach its mean (a draw of 0,
// or below, would remove the metal from the lot). So each factor is drawn log-normal with the
// posterior's mean and standard deviation, correlated through the posterior's Cholesky factor:
// u = (L·z)_a / sd_a is standard normal and f = mean·exp(σu − σ²/2) with σ² = ln(1 + (sd/mean)²)
// (the moments of the log-normal: Johnson, Kotz and Balakrishnan 1994, Continuous Univariate
// Distributions vol. 1, ch. 14). A well-informed factor (sd a few per cent of its mean) draws
// all but as the Gaussian; a factor with a mean not above 0 is taken as 0.
func (s *Sampler) draw(n int, rng func(g int) *rand.Rand) [][]float64 {
	per := make([][][]float64, len(s.groups))
	for g, gr := range s.groups {
		k := len(gr.mean)
		per[g] = make([][]float64, k)
		sigma := make([]float64, k)
		for a := range k {
			per[g][a] = make([]float64, n)
			if gr.mean[a] > 0 {
				cv := gr.sd[a] / gr.mean[a]
				sigma[a] = math.Sqrt(math.Log1p(cv * cv))
			}
		}
		r := rng(g)
		z := make([]float64, k)
		for i := range n {
			for a := range k {
				z[a] = r.NormFloat64()
				if gr.mean[a] <= 0 {
					continue // per[g][a][i] stays 0
				}
				dev := 0.0
				for b, l := range gr.chol[a*k : a*k+a+1] {
					dev += l * z[b]
				}
				u := 0.0
				if gr.sd[a] > 0 {
					u = dev / gr.sd[a]
				}
				per[g][a][i] = gr.mean[a] * math.Exp(sigma[a]*u-sigma[a]*sigma[a]/2)
			}
		}
	}
	var ones []float64
	out := make([][]float64, len(s.keys))
	for i, sl := range s.slot {
		if sl.group >= 0 {
			out[i] = per[sl.group][sl.pos]
			continue
		}
		if ones == nil {
			ones = make([]float64, n)
			for j := range ones {
				ones[j] = 1
			}
		}
		out[i] = ones
	}
	return out
}

// Predict returns the calibrated estimate of a measure's element (mean kg) and its standard
// deviation: the factors' posterior through the parts, and the estimate's own spread scaled
// by the calibrated-to-uncalibrated ratio. Parts without a factor stay as estimated; the two
// sets of factors are taken as independent of each other.
func (c *Calibration) Predict(m Measure) (meanKg, sdKg float64) {
	o := newObs(0, m)
	e := c.element(m.Element)
	type use struct {
		set, idx int
		kg       float64
	}
	var used []use
	for _, p := range m.Parts {
		set, fi := -1, -1
		if e != nil {
			set, fi = e.lookup(p.Family, p.Format)
		}
		if set < 0 {
			meanKg += p.Kg
			continue
		}
		fs, _ := e.set(set)
		meanKg += fs[fi].Mean * p.Kg
		used = append(used, use{set, fi, p.Kg})
	}
	v := 0.0
	for _, a := range used {
		_, cov := e.set(a.set)
		for _, b := range used {
			if a.set == b.set {
				v += a.kg * b.kg * cov[a.idx][b.idx]
			}
		}
	}
	r := 1.0
	if o.est > 0 && meanKg > 0 {
		r = meanKg / o.est
	}
	return meanKg, math.Sqrt(v + r*r*o.estSD*o.estSD)
}
