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
// reports are stable text. The quantiles are the order statistics a sort would give,
// interpolated (Quantile), found without sorting: for a large sample, in the pass that sums x,
// by counting the values below a bracket around each quantile and keeping those inside it
// (bracketStats); for a smaller one by selection on one copy of x (the median first, then P10
// among the values below it and P90 among those above).
func Summarise(x []float64) Stat {
	n := len(x)
	if n == 0 {
		return Stat{}
	}
	ks := [3]int{order(n, 0.1), order(n, 0.5), order(n, 0.9)}
	var st [3][2]float64 // the order statistics k and k+1 of each quantile
	mean, bracketed := bracketStats(x, ks, &st)
	mean /= float64(n)
	if n < minSelect || math.IsNaN(mean) || math.IsInf(mean, 0) {
		s := slices.Clone(x)
		slices.Sort(s)
		return Stat{P10: Sig(Quantile(s, 0.1)), P50: Sig(Quantile(s, 0.5)), P90: Sig(Quantile(s, 0.9)), Mean: Sig(mean)}
	}
	if !bracketed {
		s := slices.Clone(x)
		k10, k50, k90 := ks[0], ks[1], ks[2]
		selectK(s, k50)
		st[1] = [2]float64{s[k50], slices.Min(s[k50+1:])}
		selectK(s[:k50], k10)
		st[0] = [2]float64{s[k10], slices.Min(s[k10+1 : k50+1])}
		selectK(s[k50+1:], k90-k50-1)
		st[2] = [2]float64{s[k90], slices.Min(s[k90+1:])}
	}
	return Stat{P10: Sig(lerp(st[0], n, 0.1)), P50: Sig(lerp(st[1], n, 0.5)), P90: Sig(lerp(st[2], n, 0.9)),
		Mean: Sig(mean)}
}

// lerp is Quantile's linear step from the order statistic k = ⌊h⌋ towards k+1, at h = p·(n−1).
func lerp(st [2]float64, n int, p float64) float64 {
	h := p * float64(n-1)
	return st[0] + (h-math.Floor(h))*(st[1]-st[0])
}

// bracketMin is the smallest sample bracketStats brackets; below it selection costs little.
const bracketMin = 8192

// bracketSample is the number of values bracketStats sorts to place its brackets, and
// bracketSigmas their half-width in standard deviations of a sample quantile's rank.
const (
	bracketSample = 4096
	bracketSigmas = 6
)

// bracketStats returns the sum of x, in order, and finds the order statistics ks[j] and ks[j]+1
// of x (ks ascending, each below len(x)−1) without reordering x. From an evenly spaced
// subsample, sorted, it takes a bracket of values around each quantile; the pass that sums x
// counts the values below each bracket and keeps those inside it, and selection among the kept
// values gives the order statistics, exactly those of a sort. It reports false, leaving st
// undefined, when x is small or a bracket missed its order statistics (the caller then selects
// on all of x).
func bracketStats(x []float64, ks [3]int, st *[3][2]float64) (float64, bool) {
	n := len(x)
	sum := 0.0
	if n < bracketMin {
		for _, v := range x {
			sum += v
		}
		return sum, false
	}
	m := bracketSample
	sub := make([]float64, m)
	for i := range sub {
		sub[i] = x[int(int64(i)*int64(n)/int64(m))]
	}
	slices.Sort(sub)
	var lo, hi [3]float64
	var kept [3][]float64
	for j, k := range ks {
		p := (float64(k) + 0.5) / float64(n)
		r := p * float64(m-1)
		d := bracketSigmas*math.Sqrt(float64(m)*p*(1-p)) + 2
		lo[j] = sub[max(int(math.Floor(r-d)), 0)]
		hi[j] = sub[min(int(math.Ceil(r+d)), m-1)]
		kept[j] = make([]float64, 0, int(float64(n)*(2*d+4)/float64(m)))
	}
	lo0, lo1, lo2, hi0, hi1, hi2 := lo[0], lo[1], lo[2], hi[0], hi[1], hi[2]
	k0, k1, k2 := kept[0][:0], kept[1][:0], kept[2][:0]
	b0, b1, b2 := 0, 0, 0
	for _, v := range x {
		sum += v
		if v < lo0 {
			b0++
		} else if v <= hi0 {
			k0 = append(k0, v)
		}
		if v < lo1 {
			b1++
		} else if v <= hi1 {
			k1 = append(k1, v)
		}
		if v < lo2 {
			b2++
		} else if v <= hi2 {
			k2 = append(k2, v)
		}
	}
	below, kept := [3]int{b0, b1, b2}, [3][]float64{k0, k1, k2}
	for j, k := range ks {
		i := k - below[j]
		if i < 0 || i+1 >= len(kept[j]) {
			return sum, false
		}
		kj := kept[j]
		selectK(kj, i)
		st[j] = [2]float64{kj[i], slices.Min(kj[i+1:])}
	}
	return sum, true
}

// minSelect is the smallest sample Summarise quantiles by selection; below it k10 < k50 < k90
// need not hold and a sort costs nothing.
const minSelect = 64

// order is the index of the lower order statistic of the p-quantile of n values, ⌊p·(n−1)⌋.
func order(n int, p float64) int { return int(math.Floor(p * float64(n-1))) }

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
		// Triangle.Rand is Quantile of one uniform from the source; one rand.Rand over the
		// source gives the same uniforms without a wrapper per draw.
		tri := distuv.NewTriangle(lo, hi, mode, nil)
		u := rand.New(d.Source(key))
		for i := range out {
			out[i] = tri.Quantile(u.Float64())
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
