package calibrate

import (
	"fmt"
	"math"
	"slices"
)

// Report says how the estimate did against the assays before and after calibration. The
// "after" figures predict each lot from the other lots (leave-one-out), so that no lot grades a
// fit it took part in.
type Report struct {
	Lots     int             `json:"lots"` // assayed lots given
	Used     []string        `json:"used"`
	LeftOut  []LeftOut       `json:"left_out,omitempty"`
	Elements []ElementReport `json:"elements"`
}

// ElementReport is one element's figures.
type ElementReport struct {
	Element string `json:"element"`
	Lots    int    `json:"lots"` // lots in the fit
	// Skipped says why the element has no factors (too few lots); empty when fitted.
	Skipped  string `json:"skipped,omitempty"`
	Censored int    `json:"censored"` // lots whose value is below the limit of detection
	// Compared is the number of lots behind the bias and coverage figures: detected values.
	Compared int `json:"compared"`
	// BiasBefore and BiasAfter are the mean of ln(measured/estimate), with the model's estimate
	// and with each lot's leave-one-out prediction (0: no bias; −0.22: the estimate 25 % high).
	BiasBefore float64 `json:"bias_before"`
	BiasAfter  float64 `json:"bias_after"`
	// CoverageBefore and CoverageAfter are the shares of lots whose measured value fell within
	// the P10-P90 of the value the assay would read (the estimate's spread and the assay's
	// uncertainty together), before and after (leave-one-out); 0.8 is what the range claims.
	CoverageBefore float64 `json:"coverage_before"`
	CoverageAfter  float64 `json:"coverage_after"`
	// Disagree names the lots kept in the fit whose leave-one-out |z| exceeds DisagreeZ.
	Disagree []Residual `json:"disagree,omitempty"`
	// Points are every lot in the fit: measured against the model's estimate and against the
	// prediction from the other lots, for a chart of estimate against assay.
	Points []Residual `json:"points,omitempty"`
	// Unexpected names lots where the model expects none of the element and the assay found
	// some (z against the assay's uncertainty); they carry no information on the factors.
	Unexpected []Residual `json:"unexpected,omitempty"`
}

// Residual is one lot's measured value against its prediction.
type Residual struct {
	Lot         string  `json:"lot_id"`
	MeasuredKg  float64 `json:"measured_kg"`
	EstimateKg  float64 `json:"estimate_kg"`
	PredictedKg float64 `json:"predicted_kg"` // from the other lots
	SDKg        float64 `json:"sd_kg"`        // predictive sd of the measured value
	Z           float64 `json:"z"`
	Censored    bool    `json:"censored,omitempty"` // measured is half the limit of detection
}

func (s *fitState) report(fits map[string]*elementFit) *Report {
	r := &Report{Lots: s.assayed, Used: s.used(), LeftOut: s.leftOutList()}
	for _, lo := range r.LeftOut {
		if lo.Excluded {
			r.Lots++ // given, though not counted among the lots the rules judge
		}
	}
	for _, el := range s.elements {
		er := ElementReport{Element: el}
		f := fits[el]
		if f == nil {
			er.Skipped = fmt.Sprintf("needs at least %d lots with an estimate and an assay of the element", s.opt.MinLots)
			for _, o := range s.byEl[el] {
				if _, out := s.leftOut[o.lot]; !out {
					er.Lots++
				}
			}
		} else {
			s.grade(f, &er)
		}
		for _, o := range s.none[el] {
			if _, out := s.leftOut[o.lot]; out || o.censored {
				continue
			}
			if z := o.y / math.Sqrt(o.vy); z > s.opt.DisagreeZ {
				er.Unexpected = append(er.Unexpected, Residual{Lot: s.lots[o.lot].ID, MeasuredKg: o.y, SDKg: math.Sqrt(o.vy), Z: z})
			}
		}
		r.Elements = append(r.Elements, er)
	}
	return r
}

// grade fills the before and after figures of a fitted element.
func (s *fitState) grade(f *elementFit, er *ElementReport) {
	er.Lots = len(f.obs)
	var logB, logA []float64
	inB, inA := 0, 0
	for i, o := range f.obs {
		p := f.loo[i]
		res := Residual{Lot: s.lots[o.lot].ID, MeasuredKg: o.y, EstimateKg: o.est, PredictedKg: p.mean, SDKg: p.sd, Z: p.z,
			Censored: o.censored}
		er.Points = append(er.Points, res)
		if !o.censored && math.Abs(p.z) > s.opt.DisagreeZ {
			er.Disagree = append(er.Disagree, res)
		}
		if o.censored {
			er.Censored++
			continue
		}
		er.Compared++
		if math.Abs(o.y-o.est) <= z90*math.Sqrt(o.vy+o.estSD*o.estSD) {
			inB++
		}
		if p.inRange {
			inA++
		}
		if o.y > 0 && p.mean > 0 {
			logB = append(logB, math.Log(o.y/o.est))
			logA = append(logA, math.Log(o.y/p.mean))
		}
	}
	slices.SortFunc(er.Disagree, func(a, b Residual) int { return compareAbs(b.Z, a.Z) })
	if er.Compared > 0 {
		er.CoverageBefore = float64(inB) / float64(er.Compared)
		er.CoverageAfter = float64(inA) / float64(er.Compared)
	}
	er.BiasBefore, er.BiasAfter = mean(logB), mean(logA)
}

func compareAbs(a, b float64) int {
	switch a, b = math.Abs(a), math.Abs(b); {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

func mean(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// Outcome is one calibration as a command shows it: where its lots came from, the calibration
// (with the version it was saved as), its report, and the lots that could not take part.
type Outcome struct {
	Register    string       `json:"register"`
	Calibration *Calibration `json:"calibration"`
	Report      *Report      `json:"report"`
	Skipped     []Skipped    `json:"skipped,omitempty"`
}
