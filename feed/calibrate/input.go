package calibrate

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"
)

// Part is what one (chemistry family, format) part of a lot contributes to the lot's estimate of
// one element: the kg of the element that the model sends to the black mass from that part.
type Part struct {
	Family string  `json:"family"` // the chemistry family (or chemistry key) the caller calibrates by
	Format string  `json:"format"` // the format of the items (pouch, cylindrical, pack...)
	Kg     float64 `json:"kg"`     // the estimate's mean (or P50) kg of the element from this part
	// SDKg is the estimate's standard deviation of that kg (SDFromP10P90 converts a P10-P90
	// range); 0 takes the lot's relative spread for the element.
	SDKg float64 `json:"sd_kg"`
}

// Measure is one element of one assayed lot: the measured kg (assay wt% × dry weighed mass), its
// standard uncertainty, and the estimate broken down by part.
type Measure struct {
	Element string `json:"element"`
	// MeasuredKg is the assay's mass fraction times the lot's dry black mass; for a censored
	// value (below the limit of detection) it is the upper limit.
	MeasuredKg float64 `json:"measured_kg"`
	// MeasuredSDKg is the standard uncertainty of MeasuredKg (the assay's own, with the
	// weighing's if known); not used for a censored value.
	MeasuredSDKg float64 `json:"measured_sd_kg"`
	Censored     bool    `json:"censored,omitempty"`
	// EstimateSDKg is the standard deviation of the lot's estimate of the element (all parts
	// together, as the Monte Carlo gives it); 0 sums the parts' SDs (parts of one lot share
	// the model's parameters, so they vary together).
	EstimateSDKg float64 `json:"estimate_sd_kg"`
	Parts        []Part  `json:"parts"`
}

// Lot is one assayed lot.
type Lot struct {
	ID       string    `json:"lot_id"`
	Measures []Measure `json:"measures"`
}

// Skipped is an assayed, weighed lot that could not be made into a Lot, and why; a caller
// reading lots reports it beside the fit.
type Skipped struct {
	Lot    string `json:"lot_id"`
	Reason string `json:"reason"`
}

// Options controls a fit. Start from DefaultOptions.
type Options struct {
	// MinLots is the number of usable assayed lots below which no calibration is fitted (and
	// below which an element gets no factors).
	MinLots int
	// MinCellLots is the share-weighted number of lots a (family, format) cell needs for a
	// factor of its own; below it the cell shares its family's factor.
	MinCellLots float64
	// PriorRelSD sets, for the elements it names, the prior standard deviation of every
	// factor of the element; elements it does not name take the estimate's own relative
	// spread (the median over the cell's parts of SD/kg).
	PriorRelSD map[string]float64
	// OutlierZ is the leave-one-out |z| beyond which a lot is left out of the fit.
	OutlierZ float64
	// MaxRatio bounds measured/estimate: a lot outside [1/MaxRatio, MaxRatio] is left out.
	MaxRatio float64
	// DisagreeZ is the leave-one-out |z| beyond which a kept lot is named in the report.
	DisagreeZ float64
	Keep      []string // lots never left out by the outlier rules
	Exclude   []string // lots left out whatever they show
	CreatedAt time.Time
}

// DefaultOptions returns the options the package doc argues for, created at the time given.
func DefaultOptions(createdAt time.Time) Options {
	return Options{MinLots: 3, MinCellLots: 3, OutlierZ: 4, MaxRatio: 4, DisagreeZ: 2, CreatedAt: createdAt}
}

// z90 is the standard normal's 0.9 quantile: P10-P90 = mean ± z90·sd for a Gaussian.
const z90 = 1.2815515655446004

// SDFromP10P90 returns the standard deviation of a Gaussian whose P10 and P90 are p10 and p90.
func SDFromP10P90(p10, p90 float64) float64 { return (p90 - p10) / (2 * z90) }

// ErrTooFewLots is returned (wrapped, with the counts) when there are too few assayed lots.
var ErrTooFewLots = errors.New("too few assayed lots to calibrate")

func finiteNonNeg(v float64) bool { return v >= 0 && !math.IsInf(v, 1) }

// check validates the options against the lots.
func (o Options) check(lots []Lot) error {
	switch {
	case o.MinLots < 2:
		return fmt.Errorf("calibration: MinLots %d: want at least 2", o.MinLots)
	case !(o.MinCellLots >= 1) || math.IsInf(o.MinCellLots, 0):
		return fmt.Errorf("calibration: MinCellLots %v: want at least 1", o.MinCellLots)
	case !(o.OutlierZ > 0) || !(o.DisagreeZ > 0) || o.DisagreeZ > o.OutlierZ || math.IsInf(o.OutlierZ, 0):
		return fmt.Errorf("calibration: OutlierZ %v, DisagreeZ %v: want 0 < DisagreeZ <= OutlierZ", o.OutlierZ, o.DisagreeZ)
	case !(o.MaxRatio > 1) || math.IsInf(o.MaxRatio, 0):
		return fmt.Errorf("calibration: MaxRatio %v: want more than 1", o.MaxRatio)
	case o.CreatedAt.IsZero():
		return errors.New("calibration: CreatedAt not set")
	}
	for el, s := range o.PriorRelSD {
		if !(s > 0) || math.IsInf(s, 0) {
			return fmt.Errorf("calibration: PriorRelSD[%s] %v: want more than 0", el, s)
		}
	}
	ids := map[string]bool{}
	for _, l := range lots {
		ids[l.ID] = true
	}
	for _, list := range []struct {
		name string
		ids  []string
	}{{"Keep", o.Keep}, {"Exclude", o.Exclude}} {
		for _, id := range list.ids {
			if !ids[id] {
				return fmt.Errorf("calibration: %s names lot %q, which is not among the assayed lots", list.name, id)
			}
		}
	}
	for _, id := range o.Keep {
		if slices.Contains(o.Exclude, id) {
			return fmt.Errorf("calibration: lot %q is both kept and excluded", id)
		}
	}
	return nil
}

// checkLots validates the lots: ids present and distinct, each element once per lot, masses
// finite and not negative, every measured element with an estimate broken down by part.
func checkLots(lots []Lot) error {
	seen := map[string]bool{}
	for i, l := range lots {
		if strings.TrimSpace(l.ID) == "" {
			return fmt.Errorf("calibration: lot %d has no id", i+1)
		}
		if seen[l.ID] {
			return fmt.Errorf("calibration: lot %s given twice", l.ID)
		}
		seen[l.ID] = true
		els := map[string]bool{}
		for _, m := range l.Measures {
			if err := checkMeasure(m); err != nil {
				return fmt.Errorf("calibration: lot %s: %w", l.ID, err)
			}
			if els[m.Element] {
				return fmt.Errorf("calibration: lot %s: element %s given twice", l.ID, m.Element)
			}
			els[m.Element] = true
		}
	}
	return nil
}

func checkMeasure(m Measure) error {
	if strings.TrimSpace(m.Element) == "" {
		return errors.New("a measure has no element")
	}
	if !finiteNonNeg(m.MeasuredKg) || !finiteNonNeg(m.MeasuredSDKg) || !finiteNonNeg(m.EstimateSDKg) {
		return fmt.Errorf("%s: measured %v ± %v kg, estimate sd %v kg: want finite values, not negative",
			m.Element, m.MeasuredKg, m.MeasuredSDKg, m.EstimateSDKg)
	}
	if !m.Censored && m.MeasuredSDKg == 0 {
		return fmt.Errorf("%s: measured %v kg with no uncertainty: give the assay's standard uncertainty", m.Element, m.MeasuredKg)
	}
	if m.Censored && m.MeasuredKg == 0 {
		return fmt.Errorf("%s: censored with a limit of 0 kg: give the limit of detection as kg", m.Element)
	}
	if len(m.Parts) == 0 {
		return fmt.Errorf("%s: no estimate parts", m.Element)
	}
	for _, p := range m.Parts {
		if strings.TrimSpace(p.Family) == "" {
			return fmt.Errorf("%s: a part has no family", m.Element)
		}
		if !finiteNonNeg(p.Kg) || !finiteNonNeg(p.SDKg) {
			return fmt.Errorf("%s: part %s/%s: %v ± %v kg: want finite values, not negative",
				m.Element, p.Family, p.Format, p.Kg, p.SDKg)
		}
	}
	return nil
}
