package calibrate

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// LeftOut is a lot the fit left out, and why.
type LeftOut struct {
	Lot      string  `json:"lot_id"`
	Element  string  `json:"element,omitempty"` // the element that failed the check
	Reason   string  `json:"reason"`
	Z        float64 `json:"z,omitempty"`     // leave-one-out z, for the z rule
	Ratio    float64 `json:"ratio,omitempty"` // measured/estimate, for the ratio rule
	Excluded bool    `json:"excluded,omitempty"`
}

// fits is one element's fits: by cell, and by family alone.
// fitState is the work of one Fit: the lots, their observations by element, what is left out.
type fitState struct {
	lots     []Lot
	opt      Options
	keep     map[string]bool
	elements []string
	byEl     map[string][]obs // lots with an estimate above 0
	none     map[string][]obs // lots where the model expects none of the element
	leftOut  map[int]LeftOut
	assayed  int
	family   map[string]*elementFit // the fits by family alone, of the last fitAll
}

// Fit calibrates the model on the assayed lots: per element, the posterior of the factors, and
// the report of how the estimate did before and after. Lots that fail the outlier rules are
// named and left out, unless kept; with fewer than opt.MinLots usable lots it returns an error
// wrapping ErrTooFewLots.
func Fit(lots []Lot, opt Options) (*Calibration, *Report, error) {
	if err := checkLots(lots); err != nil {
		return nil, nil, err
	}
	if err := opt.check(lots); err != nil {
		return nil, nil, err
	}
	s := newFitState(lots, opt)
	if s.assayed < opt.MinLots {
		return nil, nil, fmt.Errorf("%w: calibration needs at least %d assayed lots, have %d%s",
			ErrTooFewLots, opt.MinLots, s.assayed, s.leftOutText())
	}
	s.ratioRule()
	if err := s.tooManyOut(); err != nil {
		return nil, nil, err
	}
	fits, err := s.fitWithOutliers()
	if err != nil {
		return nil, nil, err
	}
	if used := s.used(); len(used) < opt.MinLots {
		return nil, nil, fmt.Errorf("%w: calibration needs at least %d usable assayed lots, have %d%s",
			ErrTooFewLots, opt.MinLots, len(used), s.leftOutText())
	}
	c := s.calibration(fits)
	if err := c.Check(); err != nil {
		return nil, nil, fmt.Errorf("%w: the fit is not usable; check the kept lots%s", err, s.leftOutText())
	}
	return c, s.report(fits), nil
}

func newFitState(lots []Lot, opt Options) *fitState {
	s := &fitState{lots: lots, opt: opt, keep: map[string]bool{}, byEl: map[string][]obs{}, none: map[string][]obs{},
		leftOut: map[int]LeftOut{}, family: map[string]*elementFit{}}
	for _, id := range opt.Keep {
		s.keep[id] = true
	}
	for i, l := range lots {
		if slices.Contains(opt.Exclude, l.ID) {
			s.leftOut[i] = LeftOut{Lot: l.ID, Reason: "excluded", Excluded: true}
			continue
		}
		if len(l.Measures) > 0 {
			s.assayed++
		}
		for _, m := range l.Measures {
			o := newObs(i, m)
			if !slices.Contains(s.elements, m.Element) {
				s.elements = append(s.elements, m.Element)
			}
			if o.est > 0 {
				s.byEl[m.Element] = append(s.byEl[m.Element], o)
			} else {
				s.none[m.Element] = append(s.none[m.Element], o)
			}
		}
	}
	slices.Sort(s.elements)
	return s
}

// ratioRule leaves out every lot, not kept, whose measured/estimate ratio of some element falls
// outside [1/MaxRatio, MaxRatio]; a censored value fails when the estimate exceeds MaxRatio
// times its limit.
func (s *fitState) ratioRule() {
	for _, el := range s.elements {
		for _, o := range s.byEl[el] {
			if s.keep[s.lots[o.lot].ID] {
				continue
			}
			if _, out := s.leftOut[o.lot]; out {
				continue
			}
			if o.censored && o.est > s.opt.MaxRatio*o.limit {
				s.leftOut[o.lot] = LeftOut{Lot: s.lots[o.lot].ID, Element: el, Ratio: o.limit / o.est,
					Reason: fmt.Sprintf("%s below %.4g kg where the estimate is %.4g kg", el, o.limit, o.est)}
			}
			if r := o.y / o.est; !o.censored && (r > s.opt.MaxRatio || r < 1/s.opt.MaxRatio) {
				s.leftOut[o.lot] = LeftOut{Lot: s.lots[o.lot].ID, Element: el, Ratio: r,
					Reason: fmt.Sprintf("%s measured %.4g times the estimate (outside 1/%g to %g)", el, r, s.opt.MaxRatio, s.opt.MaxRatio)}
			}
		}
	}
}

// fitWithOutliers fits every element, then leaves out the lot (not kept) with the largest
// leave-one-out |z| beyond OutlierZ and fits again, until none is beyond it. One lot at a time:
// a gross outlier shifts its neighbours' predictions, which recover once it is out.
func (s *fitState) fitWithOutliers() (map[string]*elementFit, error) {
	for {
		fits, err := s.fitAll()
		if err != nil {
			return nil, err
		}
		worst, wEl, wZ := -1, "", 0.0
		for _, el := range s.elements {
			f := fits[el]
			if f == nil {
				continue
			}
			for i, o := range f.obs {
				if z := f.loo[i].z; math.Abs(z) > s.opt.OutlierZ && math.Abs(z) > math.Abs(wZ) && !s.keep[s.lots[o.lot].ID] {
					worst, wEl, wZ = o.lot, el, z
				}
			}
		}
		if worst < 0 {
			return fits, nil
		}
		s.leftOut[worst] = LeftOut{Lot: s.lots[worst].ID, Element: wEl, Z: wZ,
			Reason: fmt.Sprintf("%s %.1f standard deviations from what the other lots predict", wEl, wZ)}
		if err := s.tooManyOut(); err != nil {
			return nil, err
		}
	}
}

// tooManyOut refuses a fit that would leave out more than half the assayed lots (not counting
// those excluded by name): the model and the assays then disagree as a whole, which no factor
// fitted to the rest should hide.
func (s *fitState) tooManyOut() error {
	n := 0
	for _, lo := range s.leftOut {
		if !lo.Excluded {
			n++
		}
	}
	if 2*n <= s.assayed {
		return nil
	}
	return fmt.Errorf("calibration: %d of %d assayed lots disagree with the model beyond what it explains%s; "+
		"check the assays' units and lot ids, or widen the prior", n, s.assayed, s.leftOutText())
}

// fitAll fits every element with at least MinLots lots in the fit.
func (s *fitState) fitAll() (map[string]*elementFit, error) {
	fits := map[string]*elementFit{}
	clear(s.family)
	for _, el := range s.elements {
		var in []obs
		for _, o := range s.byEl[el] {
			if _, out := s.leftOut[o.lot]; !out {
				in = append(in, o)
			}
		}
		if len(in) < s.opt.MinLots {
			continue
		}
		f, err := fitElement(el, in, s.opt)
		if err != nil {
			return nil, err
		}
		fits[el] = f
		byFamily := s.opt
		byFamily.MinCellLots = math.Inf(1)
		if s.family[el], err = fitElement(el, in, byFamily); err != nil {
			return nil, err
		}
	}
	return fits, nil
}

// used lists the lots in the fit, in the order given.
func (s *fitState) used() []string {
	var ids []string
	for i, l := range s.lots {
		if _, out := s.leftOut[i]; !out && len(l.Measures) > 0 {
			ids = append(ids, l.ID)
		}
	}
	return ids
}

// leftOutList returns the lots left out, in the order given.
func (s *fitState) leftOutList() []LeftOut {
	var out []LeftOut
	for i := range s.lots {
		if lo, ok := s.leftOut[i]; ok {
			out = append(out, lo)
		}
	}
	return out
}

func (s *fitState) leftOutText() string {
	lo := s.leftOutList()
	if len(lo) == 0 {
		return ""
	}
	var parts []string
	for _, l := range lo {
		parts = append(parts, l.Lot+": "+l.Reason)
	}
	return fmt.Sprintf(" (%d left out: %s)", len(lo), strings.Join(parts, "; "))
}

// calibration turns the fits into the stored calibration.
func (s *fitState) calibration(fits map[string]*elementFit) *Calibration {
	o := s.opt
	c := &Calibration{Format: FormatVersion, CreatedAt: o.CreatedAt.UTC(), Method: Method, Lots: s.used(),
		Settings: Settings{MinLots: o.MinLots, MinCellLots: o.MinCellLots, PriorRelSD: o.PriorRelSD, OutlierZ: o.OutlierZ,
			MaxRatio: o.MaxRatio, Keep: o.Keep, Exclude: o.Exclude}}
	for _, l := range s.leftOutList() {
		c.LeftOut = append(c.LeftOut, l.Lot)
	}
	for _, el := range s.elements {
		f := fits[el]
		if f == nil {
			continue
		}
		e := Element{Element: el, Lots: len(f.obs)}
		e.Factors, e.Covariance = f.factors()
		e.FamilyFactors, e.FamilyCovariance = s.family[el].factors()
		c.Elements = append(c.Elements, e)
	}
	return c
}

// factors returns the fit's factors and covariance as stored.
func (f *elementFit) factors() ([]Factor, [][]float64) {
	var fs []Factor
	var cov [][]float64
	k := len(f.cells)
	for i, cl := range f.cells {
		fs = append(fs, Factor{Family: cl.family, Format: cl.format, Mean: f.mean[i],
			SD: math.Sqrt(f.cov.At(i, i)), PriorSD: f.priorSD[i], Lots: f.nEff[i]})
		row := make([]float64, k)
		for j := range k {
			row[j] = f.cov.At(i, j)
		}
		cov = append(cov, row)
	}
	return fs, cov
}
