package register

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
)

// What a lot's figure rests on, as the register's outputs say it.
const (
	// BasisEstimate: the manifest and the cell model only.
	BasisEstimate = assay.BasisEstimate
	// BasisMeasured: a lab assay (dry basis) times the dry weighed black mass.
	BasisMeasured = assay.BasisAssay + "+" + assay.BasisWeighing
)

// Weighing states: whether the mass on the scale was wet (as received) or dried.
const (
	StateUnknown = ""
	StateWet     = "wet"
	StateDry     = "dry"
)

// DefaultWeighSigmaRel is the relative standard uncertainty of a weighing that gives none: 1 %
// of the mass, a platform scale with the tare of bags and drums (common practice).
const DefaultWeighSigmaRel = 0.01

// disagreeLevel is the chi-square quantile beyond which assays of one lot disagree: their
// spread would be reached by chance less than once in twenty.
const disagreeLevel = 0.95

// Estimate is a lot's estimate as the register keeps it: the black mass, and per element the
// metal's P10/P50/P90 kg, its wt% (P50) and its payable value (P50, nil when unpriced).
type Estimate struct {
	BlackMassKg float64
	Elements    map[string]EstimateElement
	// Payable is the lot's payable value (P50) at the prices it was added with; nil without.
	Payable *float64
}

// EstimateElement is one element of a lot's estimate.
type EstimateElement struct {
	Kg           dist.Stat // P10, P50, P90 (the mean is not kept)
	WtPctP50     float64
	PayableValue *float64
}

// AssayEvidence is one assay of a lot: its values (dry basis, censored ones keeping their
// limit) and the moisture of its sample, when the lab gave one.
type AssayEvidence struct {
	ID                 int64         `json:"assay_id"`
	Lab                string        `json:"lab"`
	On                 string        `json:"assayed_on"`
	Values             []assay.Value `json:"values"`
	MoistureWtPct      *float64      `json:"moisture_wt_pct,omitempty"` // of the wet sample
	MoistureSigmaWtPct float64       `json:"moisture_sigma_wt_pct,omitempty"`
}

// WeighingEvidence is one weighing of a lot's black mass.
type WeighingEvidence struct {
	ID            int64    `json:"weighing_id"`
	On            string   `json:"weighed_on"`
	Kg            float64  `json:"kg"`
	SigmaKg       float64  `json:"sigma_kg,omitempty"` // 0: DefaultWeighSigmaRel of the mass
	State         string   `json:"state,omitempty"`    // StateWet, StateDry or StateUnknown
	MoistureWtPct *float64 `json:"moisture_wt_pct,omitempty"`
	Note          string   `json:"note,omitempty"`
}

// Evidence is a lot's figures on the best evidence it holds, each element with its basis, the
// measurement and the estimate side by side.
type Evidence struct {
	Basis    string            `json:"basis"` // BasisMeasured when any element is measured
	DryMass  *DryMass          `json:"dry_mass,omitempty"`
	Elements []ElementEvidence `json:"elements"`
	// Payable is the lot's payable value with each measured element's share scaled to what
	// was measured; PayableBasis says what it rests on. Nil when the lot has no prices.
	Payable      *float64 `json:"payable_value,omitempty"`
	PayableBasis string   `json:"payable_basis,omitempty"`
	Notes        []string `json:"notes,omitempty"`
}

// DryMass is the dry black mass taken from the latest weighing.
type DryMass struct {
	Kg            float64 `json:"kg"`
	SigmaKg       float64 `json:"sigma_kg"`
	WeighedKg     float64 `json:"weighed_kg"`
	WeighedOn     string  `json:"weighed_on"`
	State         string  `json:"state"` // as weighed: wet or dry
	MoistureWtPct float64 `json:"moisture_wt_pct"`
	MoistureFrom  string  `json:"moisture_from"`
}

// ElementEvidence is one element of a lot: the kg its figures use, and what that rests on.
type ElementEvidence struct {
	Element string  `json:"element"`
	Basis   string  `json:"basis"`
	Kg      float64 `json:"kg"` // the measured kg when measured, else the estimate's P50
	// Assay is the lot's assays of the element combined (nil: not assayed); Measured is it
	// times the dry mass (nil without a dry mass).
	Assay    *Combined `json:"assay,omitempty"`
	Measured *Measured `json:"measured,omitempty"`
	// The estimate, kept beside the measurement.
	EstimateKgP10    float64 `json:"estimate_kg_p10"`
	EstimateKgP50    float64 `json:"estimate_kg_p50"`
	EstimateKgP90    float64 `json:"estimate_kg_p90"`
	EstimateWtPctP50 float64 `json:"estimate_wt_pct_p50"`
	// Ratio is measured kg over the estimate's P50 kg; nil unless both are there, and nil for a
	// measurement below the detection limit, whose ratio is only bounded: RatioAtMost is then
	// its upper end, limit × dry mass over the estimate's P50.
	Ratio       *float64 `json:"measured_over_estimate,omitempty"`
	RatioAtMost *float64 `json:"measured_over_estimate_at_most,omitempty"`
	// PayableValue is the element's payable value on its basis; nil when unpriced.
	PayableValue *float64 `json:"payable_value,omitempty"`
}

// Combined is an element's assays combined (dry basis). A censored result (every assay below
// its limit) is the range 0..limit: WtPct is then its middle and SigmaWtPct that of a uniform
// distribution over it.
type Combined struct {
	WtPct      float64 `json:"wt_pct"`
	SigmaWtPct float64 `json:"sigma_wt_pct"`
	Censored   bool    `json:"below_detection_limit,omitempty"`
	LimitWtPct float64 `json:"detection_limit_wt_pct,omitempty"`
	Assays     int     `json:"assays"`
	// ChiSquare of the detected values about their weighted mean, on DoF degrees of freedom;
	// Disagree when it lies beyond the 95 % quantile, or a detected mean lies more than two
	// standard uncertainties above another assay's detection limit.
	ChiSquare float64 `json:"chi_square,omitempty"`
	DoF       int     `json:"degrees_of_freedom,omitempty"`
	Disagree  bool    `json:"assays_disagree,omitempty"`
}

// Measured is the metal in the dry black mass: the assays combined (Combined, shown in JSON
// beside it as the element's assay) times the dry mass, with its standard uncertainty from both.
type Measured struct {
	Combined `json:"-"`
	Censored bool    `json:"below_detection_limit,omitempty"`
	Kg       float64 `json:"kg"`
	SigmaKg  float64 `json:"sigma_kg"`
	MinKg    float64 `json:"min_kg"` // 0 when censored, else Kg − 2 sigma (not below 0)
	MaxKg    float64 `json:"max_kg"` // limit × dry mass when censored, else Kg + 2 sigma
}

// RankEvidence puts a lot's figures on the best evidence it holds. An element assayed, with a
// weighing whose dry mass is known, rests on the assays × the dry mass (BasisMeasured); every
// other element rests on the estimate (BasisEstimate). The estimate's P10/P50/P90 stay beside
// each measurement with their ratio. Several assays of one lot are combined by inverse-variance
// weighting of their detected values and flagged when they disagree; an element below the
// limit in every assay is a range from 0 to the tightest limit. The latest weighing (by date,
// then id) gives the dry mass: dry as weighed, or wet less its moisture (the weighing's own,
// else the latest assay's); a weighing that says neither is taken as dry when no moisture is
// known, with a note. The function is pure: it reads only its arguments.
func RankEvidence(est Estimate, assays []AssayEvidence, weighings []WeighingEvidence) Evidence {
	ev := Evidence{Basis: BasisEstimate}
	dm, notes := dryMass(weighings, assays)
	ev.DryMass, ev.Notes = dm, notes
	byEl := map[string][]assay.Value{}
	for _, a := range assays {
		for _, v := range a.Values {
			byEl[v.Element] = append(byEl[v.Element], v)
		}
	}
	set := map[string]bool{}
	for el := range est.Elements {
		set[el] = true
	}
	for el := range byEl {
		set[el] = true
	}
	els := slices.Sorted(maps.Keys(set))
	if len(byEl) > 0 && dm == nil {
		ev.Notes = append(ev.Notes, "assayed but no dry weighed mass: the metal rests on the estimate")
	}
	var missing []string
	payShift, shifted := 0.0, false
	for _, el := range els {
		e := est.Elements[el]
		ee := ElementEvidence{Element: el, Basis: BasisEstimate, Kg: e.Kg.P50, EstimateKgP10: e.Kg.P10, EstimateKgP50: e.Kg.P50,
			EstimateKgP90: e.Kg.P90, EstimateWtPctP50: e.WtPctP50, PayableValue: e.PayableValue}
		vals := byEl[el]
		if len(vals) > 0 {
			c := combine(vals)
			ee.Assay = &c
			if c.Disagree {
				ev.Notes = append(ev.Notes, fmt.Sprintf("%s: the %d assays disagree beyond their uncertainties (chi-square %.1f on %d degrees of freedom)",
					el, c.Assays, c.ChiSquare, c.DoF))
			}
		}
		if len(vals) > 0 && dm != nil {
			m := Measured{Combined: *ee.Assay, Censored: ee.Assay.Censored}
			m.Kg, m.SigmaKg = massOf(m.WtPct, m.SigmaWtPct, dm)
			if m.Censored {
				m.MinKg, m.MaxKg = 0, m.LimitWtPct/100*dm.Kg
				ev.Notes = append(ev.Notes, fmt.Sprintf("%s: below the detection limit, 0 to %.3g kg; sums and value use the middle, %.3g kg",
					el, m.MaxKg, m.Kg))
			} else {
				m.MinKg, m.MaxKg = math.Max(0, m.Kg-2*m.SigmaKg), m.Kg+2*m.SigmaKg
			}
			ee.Measured, ee.Basis, ee.Kg, ev.Basis = &m, BasisMeasured, m.Kg, BasisMeasured
			if e.Kg.P50 > 0 {
				r := m.Kg / e.Kg.P50 // the value rests on the expected kg, the middle of a range
				if m.Censored {
					at := m.MaxKg / e.Kg.P50
					ee.RatioAtMost = &at
				} else {
					ee.Ratio = &r
				}
				if e.PayableValue != nil {
					p := *e.PayableValue * r
					payShift, shifted = payShift+p-*e.PayableValue, true
					ee.PayableValue = &p
				}
			} else if e.PayableValue != nil {
				ev.Notes = append(ev.Notes, el+": measured but not in the estimate: its value stays the estimate's")
			}
		} else if len(byEl) > 0 && len(vals) == 0 && e.Kg.P50 > 0 {
			missing = append(missing, el)
		}
		ev.Elements = append(ev.Elements, ee)
	}
	if len(missing) > 0 && ev.Basis == BasisMeasured {
		ev.Notes = append(ev.Notes, "not assayed, from the estimate: "+strings.Join(missing, ", "))
	}
	if est.Payable != nil {
		p := *est.Payable + payShift
		ev.Payable, ev.PayableBasis = &p, BasisEstimate
		if shifted {
			ev.PayableBasis = BasisMeasured
			ev.Notes = append(ev.Notes, "value: each measured metal's payable share scaled to what was measured, the rest as estimated")
		}
	}
	return ev
}

// Element returns the lot's evidence for one element (the zero value with the estimate basis
// when the lot has none).
func (ev Evidence) Element(el string) ElementEvidence {
	for _, e := range ev.Elements {
		if e.Element == el {
			return e
		}
	}
	return ElementEvidence{Element: el, Basis: BasisEstimate}
}

// PayableFirst lists the elements to show: each of the payable metals (in their order, assayed
// or not), then every other element assayed.
func (ev Evidence) PayableFirst(payable []string) []ElementEvidence {
	out := make([]ElementEvidence, 0, len(payable))
	for _, el := range payable {
		out = append(out, ev.Element(el))
	}
	for _, e := range ev.Elements {
		if e.Assay != nil && !slices.Contains(payable, e.Element) {
			out = append(out, e)
		}
	}
	return out
}

// massOf is the metal in the dry mass for a dry-basis wt% and its standard uncertainty.
func massOf(wtPct, sigmaWtPct float64, dm *DryMass) (kg, sigmaKg float64) {
	w, sw := wtPct/100, sigmaWtPct/100
	return w * dm.Kg, math.Hypot(sw*dm.Kg, w*dm.SigmaKg)
}

// combine joins one element's values from several assays: the detected ones by inverse-variance
// weighting with their chi-square, or, when every one is censored, the range to the tightest
// limit. A detected mean more than two standard uncertainties above another assay's detection
// limit is a disagreement too.
func combine(vals []assay.Value) Combined {
	m := Combined{Assays: len(vals)}
	var det []assay.Value
	minLimit := math.Inf(1)
	for _, v := range vals {
		if v.Censored {
			minLimit = math.Min(minLimit, v.LimitWtPct)
		} else {
			det = append(det, v)
		}
	}
	if len(det) == 0 {
		m.Censored, m.LimitWtPct = true, minLimit
		m.WtPct, m.SigmaWtPct = minLimit/2, minLimit/math.Sqrt(12)
		return m
	}
	sumW, sumWX := 0.0, 0.0
	for _, v := range det {
		w := 1 / sq(sigmaOf(v))
		sumW += w
		sumWX += w * v.WtPct
	}
	m.WtPct, m.SigmaWtPct = sumWX/sumW, 1/math.Sqrt(sumW)
	if m.DoF = len(det) - 1; m.DoF > 0 {
		for _, v := range det {
			m.ChiSquare += sq(v.WtPct-m.WtPct) / sq(sigmaOf(v))
		}
		m.Disagree = m.ChiSquare > distuv.ChiSquared{K: float64(m.DoF)}.Quantile(disagreeLevel)
	}
	if minLimit < m.WtPct-2*m.SigmaWtPct {
		m.Disagree = true
	}
	return m
}

// sigmaOf is a value's standard uncertainty, the default relative one when the lab gave none.
func sigmaOf(v assay.Value) float64 {
	if v.SigmaWtPct > 0 {
		return v.SigmaWtPct
	}
	return math.Max(assay.DefaultSigmaRel*v.WtPct, 1e-9)
}

func sq(x float64) float64 { return x * x }

// dryMass is the dry black mass of the latest weighing, nil when there is none or its moisture
// is unknown for a wet one, with notes on what was assumed.
func dryMass(weighings []WeighingEvidence, assays []AssayEvidence) (*DryMass, []string) {
	if len(weighings) == 0 {
		return nil, nil
	}
	w := slices.MaxFunc(weighings, func(a, b WeighingEvidence) int {
		if c := strings.Compare(a.On, b.On); c != 0 {
			return c
		}
		return int(a.ID - b.ID)
	})
	sigma := w.SigmaKg
	if !(sigma > 0) {
		sigma = DefaultWeighSigmaRel * w.Kg
	}
	dm := &DryMass{WeighedKg: w.Kg, WeighedOn: w.On, State: w.State}
	moist, moistSigma := 0.0, 0.0
	var notes []string
	switch {
	case w.State == StateDry:
		dm.MoistureFrom = "dry as weighed"
	case w.MoistureWtPct != nil:
		dm.State, moist, dm.MoistureFrom = StateWet, *w.MoistureWtPct, "the weighing"
	default:
		a := latestMoisture(assays)
		switch {
		case a != nil:
			dm.State, moist, moistSigma = StateWet, *a.MoistureWtPct, a.MoistureSigmaWtPct
			dm.MoistureFrom = fmt.Sprintf("assay %d (%s)", a.ID, a.On)
		case w.State == StateWet:
			return nil, []string{fmt.Sprintf("the weighing of %s is wet with no moisture known (give lot weigh --moisture, "+
				"or an assay with a moisture row): the metal rests on the estimate", w.On)}
		default:
			dm.State, dm.MoistureFrom = StateDry, "none known: taken as dry"
			notes = append(notes, fmt.Sprintf("the weighing of %s says neither wet nor dry and no moisture is known: taken as dry", w.On))
		}
	}
	f := 1 - moist/100
	dm.MoistureWtPct = moist
	dm.Kg = w.Kg * f
	dm.SigmaKg = math.Hypot(sigma*f, w.Kg*moistSigma/100)
	return dm, notes
}

// latestMoisture is the latest assay (by date, then id) that gives a moisture, nil if none does.
func latestMoisture(assays []AssayEvidence) *AssayEvidence {
	var best *AssayEvidence
	for i := range assays {
		a := &assays[i]
		if a.MoistureWtPct == nil {
			continue
		}
		if best == nil || a.On > best.On || a.On == best.On && a.ID > best.ID {
			best = a
		}
	}
	return best
}
