// Package dist summarises Monte Carlo draws (P10/P50/P90 and mean) and draws model parameters
// reproducibly: each parameter from its own stream seeded by the run's seed and the parameter's
// name, so adding a parameter does not shift the others.
package dist

import (
	"hash/fnv"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"gonum.org/v1/gonum/stat/distuv"
)

// Stat summarises a quantity's Monte Carlo distribution. Percentiles use linear interpolation
// between order statistics (the definition of spreadsheet PERCENTILE.INC).
type Stat struct {
	P10  float64 `json:"p10"`
	P50  float64 `json:"p50"`
	P90  float64 `json:"p90"`
	Mean float64 `json:"mean"`
}

// Amount is a mass with its share of the black mass.
type Amount struct {
	Kg    Stat `json:"kg"`
	WtPct Stat `json:"wt_pct"`
}

// Summarise returns P10/P50/P90 and the mean of x, rounded to 9 significant digits so that
// reports are stable text. The quantiles are found by selection on one copy of x (the median
// first, then P10 among the values below it and P90 among those above), not by a sort.
func Summarise(x []float64) Stat {
	if len(x) == 0 {
		return Stat{}
	}
	s := slices.Clone(x)
	mean := 0.0
	for _, v := range s {
		mean += v
	}
	mean /= float64(len(s))
	if len(s) < minSelect || math.IsNaN(mean) || math.IsInf(mean, 0) {
		slices.Sort(s)
		return Stat{P10: Sig(Quantile(s, 0.1)), P50: Sig(Quantile(s, 0.5)), P90: Sig(Quantile(s, 0.9)), Mean: Sig(mean)}
	}
	n := len(s)
	k10, k50, k90 := order(n, 0.1), order(n, 0.5), order(n, 0.9)
	selectK(s, k50)
	p50 := interpolate(s, k50, s[k50+1:], 0.5)
	selectK(s[:k50], k10)
	p10 := interpolate(s, k10, s[k10+1:k50+1], 0.1)
	selectK(s[k50+1:], k90-k50-1)
	p90 := interpolate(s, k90, s[k90+1:], 0.9)
	return Stat{P10: Sig(p10), P50: Sig(p50), P90: Sig(p90), Mean: Sig(mean)}
}

// minSelect is the smallest sample Summarise quantiles by selection; below it k10 < k50 < k90
// need not hold and a sort costs nothing.
const minSelect = 64

// order is the index of the lower order statistic of the p-quantile of n values, ⌊p·(n−1)⌋.
func order(n int, p float64) int { return int(math.Floor(p * float64(n-1))) }

// interpolate is Quantile's linear step from s[k] (in place after selection) towards the
// smallest of above, the values that follow it, at h = p·(n−1).
func interpolate(s []float64, k int, above []float64, p float64) float64 {
	if len(above) == 0 {
		return s[k]
	}
	h := p * float64(len(s)-1)
	return s[k] + (h-math.Floor(h))*(slices.Min(above)-s[k])
}

// selectK reorders s so that s[k] is the value a sort would put there, the values before it no
// larger and those after it no smaller: quickselect with a median-of-three pivot and a three-way
// partition, so runs of equal values (many zero draws) cost no more than distinct ones.
func selectK(s []float64, k int) {
	lo, hi := 0, len(s)-1
	for lo < hi {
		a, b, c := s[lo], s[lo+(hi-lo)/2], s[hi]
		pivot := max(min(a, b), min(max(a, b), c))
		lt, i, gt := lo, lo, hi
		for i <= gt {
			switch v := s[i]; {
			case v < pivot:
				s[lt], s[i] = s[i], s[lt]
				lt++
				i++
			case v > pivot:
				s[gt], s[i] = s[i], s[gt]
				gt--
			default:
				i++
			}
		}
		switch {
		case k < lt:
			hi = lt - 1
		case k > gt:
			lo = gt + 1
		default:
			return
		}
	}
}

// AmountOf summarises masses kg and their share of total, sample by sample.
func AmountOf(kg, total []float64) Amount {
	pct := make([]float64, len(kg))
	for i := range kg {
		if total[i] > 0 {
			pct[i] = 100 * kg[i] / total[i]
		}
	}
	return Amount{Kg: Summarise(kg), WtPct: Summarise(pct)}
}

// Quantile returns the p-quantile of sorted x, interpolating linearly at h = p·(n−1).
func Quantile(x []float64, p float64) float64 {
	h := p * float64(len(x)-1)
	lo := math.Floor(h)
	i := int(lo)
	if i+1 >= len(x) {
		return x[len(x)-1]
	}
	return x[i] + (h-lo)*(x[i+1]-x[i])
}

// Sig rounds v to 9 significant digits. Far from 1 (a scale factor 10^d beyond about 10^±290,
// which overflows or underflows when v is multiplied by it) it rounds through the decimal text.
func Sig(v float64) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	d := 9 - int(math.Ceil(math.Log10(math.Abs(v))))
	if d > maxScaleDigits || d < -maxScaleDigits {
		r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 9, 64), 64)
		return r
	}
	return Round(v, d)
}

// maxScaleDigits bounds the decimal places Sig rounds by scaling: 10^290 times a number below
// 10^18 stays far from the float64 limit of 1.8·10^308.
const maxScaleDigits = 290

// Round rounds v to digits decimal places.
func Round(v float64, digits int) float64 {
	p := 1.0
	if digits >= 0 && digits <= 22 {
		for range digits {
			p *= 10 // exact: every power of ten to 1e22 is a float64, as math.Pow gives it
		}
	} else {
		p = math.Pow(10, float64(digits))
	}
	return math.Round(v*p) / p
}

// Drawer produces, for each named parameter, a reproducible stream of samples drawn from a
// triangular distribution over its range: its own PCG source seeded from (seed, hash of the
// name). The draws are kept, so a parameter asked for twice gives the same draws.
type Drawer struct {
	seed    uint64
	samples int
	cache   map[string][]float64
}

// NewDrawer returns a drawer of samples draws per parameter; with samples 0 every parameter is
// its most likely value (a one-element slice).
func NewDrawer(seed uint64, samples int) *Drawer {
	return &Drawer{seed: seed, samples: samples, cache: map[string][]float64{}}
}

// Samples returns the number of draws per parameter (0: most likely values only).
func (d *Drawer) Samples() int { return d.samples }

// Seed returns the run's seed.
func (d *Drawer) Seed() uint64 { return d.seed }

// Draws returns the draws of the parameter named key, between lo and hi with mode most likely.
func (d *Drawer) Draws(key string, lo, mode, hi float64) []float64 {
	if d.samples == 0 {
		return []float64{mode}
	}
	if v, ok := d.cache[key]; ok {
		return v
	}
	out := make([]float64, d.samples)
	if hi == lo {
		for i := range out {
			out[i] = mode
		}
	} else {
		tri := distuv.NewTriangle(lo, hi, mode, d.Source(key))
		for i := range out {
			out[i] = tri.Rand()
		}
	}
	d.cache[key] = out
	return out
}

// Source returns the random source of the stream named key.
func (d *Drawer) Source(key string) *rand.PCG {
	h := fnv.New64a()
	h.Write([]byte(key))
	return rand.NewPCG(d.seed, h.Sum64())
}

// Param is one model parameter as used: its scope, name, range (minimum, most likely, maximum),
// unit and source.
type Param struct {
	Scope  string  `json:"scope"`
	Name   string  `json:"name"`
	Min    float64 `json:"min"`
	Mode   float64 `json:"mode"`
	Max    float64 `json:"max"`
	Unit   string  `json:"unit"`
	Source string  `json:"source"`
}
