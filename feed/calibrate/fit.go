package calibrate

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// obs is one lot's measure of one element, ready for the fit.
type obs struct {
	lot      int     // index into the lots
	y, vy    float64 // measured kg (censored: half the limit) and its variance
	est      float64 // the estimate: Σ parts' kg
	estSD    float64 // the estimate's standard deviation
	parts    []Part
	censored bool
	limit    float64 // the limit of a censored value
}

func newObs(lot int, m Measure) obs {
	o := obs{lot: lot, parts: m.Parts, censored: m.Censored, estSD: m.EstimateSDKg}
	for _, p := range m.Parts {
		o.est += p.Kg
	}
	if o.estSD == 0 {
		for _, p := range m.Parts {
			o.estSD += p.SDKg
		}
	}
	if m.Censored {
		// Below the limit L, every value in [0, L] taken as equally likely: mean L/2,
		// variance L²/12 (the moments of the uniform distribution).
		o.limit = m.MeasuredKg
		o.y, o.vy = m.MeasuredKg/2, m.MeasuredKg*m.MeasuredKg/12
	} else {
		o.y, o.vy = m.MeasuredKg, m.MeasuredSDKg*m.MeasuredSDKg
	}
	return o
}

// relSD is a part's relative spread: its own SD over kg, or the lot's when it has none.
func (o obs) relSD(p Part) float64 {
	if p.SDKg > 0 {
		return p.SDKg / p.Kg
	}
	return o.estSD / o.est
}

// cell is one factor's scope: a family and format, or a family with Format "" for the family's
// formats that have too few lots for a factor of their own.
type cell struct{ family, format string }

// entry is one non-zero of a design row: the estimate's kg in cell c.
type entry struct {
	c  int
	kg float64
}

// looPoint is one lot's prediction: in-sample, and from the other lots (leave-one-out).
type looPoint struct {
	fitted  float64 // posterior mean prediction with every lot
	mean    float64 // predicted from the other lots
	sd      float64 // predictive sd of the measured value from the other lots
	z       float64 // (measured − mean)/sd
	inRange bool    // measured within the leave-one-out P10-P90
}

// elementFit is the posterior of one element's factors.
type elementFit struct {
	element string
	cells   []cell
	nEff    []float64 // share-weighted lots per cell
	priorSD []float64
	mean    []float64
	cov     *mat.SymDense
	obs     []obs
	rows    [][]entry
	v       []float64 // noise variance per lot
	loo     []looPoint
}

// assignCells gives each (family, format) with at least minCell share-weighted lots a cell of its
// own and pools the others by family.
func assignCells(obs []obs, minCell float64) ([]cell, map[cell]int, []float64) {
	own := map[cell]float64{}
	for _, o := range obs {
		for _, p := range o.parts {
			own[cell{p.Family, p.Format}] += p.Kg / o.est
		}
	}
	byPart := map[cell]cell{}
	for c, n := range own {
		if n >= minCell {
			byPart[c] = c
		} else {
			byPart[c] = cell{c.family, ""}
		}
	}
	var cells []cell
	for _, c := range byPart {
		if !slices.Contains(cells, c) {
			cells = append(cells, c)
		}
	}
	slices.SortFunc(cells, func(a, b cell) int {
		if a.family != b.family {
			return compare(a.family, b.family)
		}
		return compare(a.format, b.format)
	})
	idx := map[cell]int{}
	for i, c := range cells {
		idx[c] = i
	}
	partIdx := map[cell]int{}
	nEff := make([]float64, len(cells))
	for pc, c := range byPart {
		partIdx[pc] = idx[c]
		nEff[idx[c]] += own[pc]
	}
	return cells, partIdx, nEff
}

func compare(a, b string) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// priorSDs returns each cell's prior sd: the element's given one, or the median relative spread
// of the estimate over the cell's parts.
func priorSDs(element string, obs []obs, cells []cell, partIdx map[cell]int, opt Options) ([]float64, error) {
	out := make([]float64, len(cells))
	if s, ok := opt.PriorRelSD[element]; ok {
		for i := range out {
			out[i] = s
		}
		return out, nil
	}
	spreads := make([][]float64, len(cells))
	for _, o := range obs {
		for _, p := range o.parts {
			if p.Kg > 0 {
				c := partIdx[cell{p.Family, p.Format}]
				spreads[c] = append(spreads[c], o.relSD(p))
			}
		}
	}
	for i, s := range spreads {
		slices.Sort(s)
		if len(s) > 0 {
			out[i] = (s[(len(s)-1)/2] + s[len(s)/2]) / 2
		}
		if !(out[i] > 0) || math.IsInf(out[i], 0) {
			return nil, fmt.Errorf("calibration: %s, %s: the estimate gives no spread to set the prior from; set PriorRelSD[%s]",
				element, cellName(cells[i]), element)
		}
	}
	return out, nil
}

func cellName(c cell) string {
	if c.format == "" {
		return c.family + " (all formats)"
	}
	return c.family + " " + c.format
}

// fitElement fits one element's factors: cells, prior, then the posterior twice, the second time
// with each lot's estimate spread scaled by its fitted ratio (the spread of a calibrated
// estimate scales with it); then the leave-one-out predictions.
func fitElement(element string, obs []obs, opt Options) (*elementFit, error) {
	f := &elementFit{element: element, obs: obs}
	var partIdx map[cell]int
	f.cells, partIdx, f.nEff = assignCells(obs, opt.MinCellLots)
	var err error
	if f.priorSD, err = priorSDs(element, obs, f.cells, partIdx, opt); err != nil {
		return nil, err
	}
	f.rows = make([][]entry, len(obs))
	for i, o := range obs {
		for _, p := range o.parts {
			c := partIdx[cell{p.Family, p.Format}]
			if j := slices.IndexFunc(f.rows[i], func(e entry) bool { return e.c == c }); j >= 0 {
				f.rows[i][j].kg += p.Kg
			} else {
				f.rows[i] = append(f.rows[i], entry{c, p.Kg})
			}
		}
	}
	f.v = make([]float64, len(obs))
	for i, o := range obs {
		f.v[i] = o.vy + o.estSD*o.estSD
	}
	if err := f.posterior(); err != nil {
		return nil, err
	}
	for i, o := range obs {
		r := dot(f.rows[i], f.mean) / o.est
		if !(r > 0) {
			r = 1
		}
		f.v[i] = o.vy + r*r*o.estSD*o.estSD
	}
	if err := f.posterior(); err != nil {
		return nil, err
	}
	f.leaveOneOut()
	return f, nil
}

func dot(row []entry, v []float64) float64 {
	s := 0.0
	for _, e := range row {
		s += e.kg * v[e.c]
	}
	return s
}

// quad returns rowᵀ·S·row.
func quad(row []entry, s *mat.SymDense) float64 {
	q := 0.0
	for _, a := range row {
		for _, b := range row {
			q += a.kg * b.kg * s.At(a.c, b.c)
		}
	}
	return q
}

// posterior computes the Gaussian posterior of the factors: precision A = Λ₀ + Σ xxᵀ/v, mean
// A⁻¹(Λ₀·1 + Σ x·y/v), with Λ₀ the prior precision (diagonal, 1/sd²) and 1 the prior mean.
func (f *elementFit) posterior() error {
	k := len(f.cells)
	a := mat.NewSymDense(k, nil)
	b := mat.NewVecDense(k, nil)
	for c, s := range f.priorSD {
		a.SetSym(c, c, 1/(s*s))
		b.SetVec(c, 1/(s*s))
	}
	for i, row := range f.rows {
		w := 1 / f.v[i]
		for _, e := range row {
			b.SetVec(e.c, b.AtVec(e.c)+w*e.kg*f.obs[i].y)
			for _, g := range row {
				if g.c >= e.c {
					a.SetSym(e.c, g.c, a.At(e.c, g.c)+w*e.kg*g.kg)
				}
			}
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(a) {
		return fmt.Errorf("calibration: %s: the posterior precision is not positive definite", f.element)
	}
	f.cov = mat.NewSymDense(k, nil)
	if err := ch.InverseTo(f.cov); err != nil {
		return fmt.Errorf("calibration: %s: %w", f.element, err)
	}
	m := mat.NewVecDense(k, nil)
	m.MulVec(f.cov, b)
	f.mean = make([]float64, k)
	for c := range f.mean {
		f.mean[c] = m.AtVec(c)
	}
	return nil
}

// leaveOneOut predicts each lot from the others in closed form. Taking lot i out of the
// posterior precision and right-hand side is a rank-one downdate (Sherman-Morrison): with
// h = xᵀA⁻¹x, w = 1/v and ŷ = xᵀm, the other lots predict mean (ŷ − w·h·y)/(1 − w·h) with
// variance h/(1 − w·h) for the calibrated estimate, plus v for the measured value.
func (f *elementFit) leaveOneOut() {
	f.loo = make([]looPoint, len(f.obs))
	for i, o := range f.obs {
		h := quad(f.rows[i], f.cov)
		yHat := dot(f.rows[i], f.mean)
		w := 1 / f.v[i]
		d := 1 - w*h
		mean := (yHat - w*h*o.y) / d
		sd := math.Sqrt(h/d + f.v[i])
		f.loo[i] = looPoint{fitted: yHat, mean: mean, sd: sd, z: (o.y - mean) / sd, inRange: math.Abs(o.y-mean) <= z90*sd}
	}
}
