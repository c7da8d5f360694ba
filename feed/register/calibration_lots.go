package register

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"

	"blackmass/feed/calibrate"
	"blackmass/feed/dist"
	"blackmass/feed/lot"
	"blackmass/feed/report"
)

// CalibrationLots reads, for every current lot with an assay and a weighing, what a calibration
// fits: per element measured on the lot's best evidence (RankEvidence: its assays combined,
// times the dry black mass of its latest weighing, with both uncertainties), the measured kg
// against the estimate's kg from each (chemistry, format) group of the lot (P50, and the sd its
// P10-P90 implies). Below-limit results, and lots whose dry mass is not known (a wet weighing
// with no moisture), say too little for a factor and are left out, the lots named. Lots recorded
// before the estimate gave each group's elements are skipped unless they hold a single group.
func (r *Register) CalibrationLots(ctx context.Context) (_ []calibrate.Lot, _ []calibrate.Skipped, err error) {
	defer func() { err = r.wrap(err) }()
	type row struct{ id, report string }
	var rows []row
	err = collect(ctx, r.db, `SELECT l.lot_id, l.report_json FROM lots l WHERE l.current = 1
		AND EXISTS (SELECT 1 FROM weighings w WHERE w.lot_id = l.lot_id)
		AND EXISTS (SELECT 1 FROM assays a WHERE a.lot_id = l.lot_id)
		ORDER BY l.received, l.lot_id`, nil, func(rs *sql.Rows) error {
		var x row
		err := rs.Scan(&x.id, &x.report)
		rows = append(rows, x)
		return err
	})
	if err != nil || len(rows) == 0 {
		return nil, nil, err
	}
	evidence, err := r.readCurrentEvidence(ctx)
	if err != nil {
		return nil, nil, err
	}
	var lots []calibrate.Lot
	var skipped []calibrate.Skipped
	for _, x := range rows {
		var rep recorded
		if err := json.Unmarshal([]byte(x.report), &rep); err != nil {
			return nil, nil, fmt.Errorf("lot %s: its recorded report: %w", x.id, err)
		}
		le := evidence[x.id]
		if le == nil {
			continue
		}
		l, reason := calibrationLot(x.id, &rep, RankEvidence(le.est, le.assays, le.weighings))
		switch {
		case reason != "":
			skipped = append(skipped, calibrate.Skipped{Lot: x.id, Reason: reason})
		case len(l.Measures) == 0:
			skipped = append(skipped, calibrate.Skipped{Lot: x.id, Reason: "its assay holds no element the estimate tracks above its detection limit"})
		default:
			lots = append(lots, l)
		}
	}
	return lots, skipped, nil
}

// calibrationLot turns one lot's ranked evidence into what a fit takes, or says why it cannot.
func calibrationLot(id string, rep *recorded, ev Evidence) (calibrate.Lot, string) {
	l := calibrate.Lot{ID: id}
	if ev.DryMass == nil {
		return l, "its dry black mass is not known (a wet weighing without a moisture): give one with lot weigh --moisture"
	}
	for _, e := range ev.Elements {
		if _, ok := rep.Elements[e.Element]; !ok || e.Measured == nil || e.Measured.Censored || e.Measured.Kg == 0 {
			continue // not tracked by the model (Na, moisture ...), or a reading a factor cannot use
		}
		if e.Measured.Disagree {
			return l, fmt.Sprintf("its assays of %s disagree beyond their uncertainties: settle which holds before it calibrates", e.Element)
		}
		parts, why := groupParts(rep, e.Element)
		if why != "" {
			return l, why
		}
		m := calibrate.Measure{Element: e.Element, MeasuredKg: e.Measured.Kg, MeasuredSDKg: e.Measured.SigmaKg, Parts: parts}
		if rep.Calibration == nil { // a calibrated report's spread is not the model's
			st := rep.Elements[e.Element].Kg
			m.EstimateSDKg = calibrate.SDFromP10P90(st.P10, st.P90)
		}
		l.Measures = append(l.Measures, m)
	}
	slices.SortFunc(l.Measures, func(a, b calibrate.Measure) int { return strings.Compare(a.Element, b.Element) })
	return l, ""
}

// recorded is the part of a recorded report a calibration reads.
type recorded struct {
	Elements    map[string]dist.Amount `json:"elements"`
	Groups      []lot.GroupResult      `json:"groups"`
	Calibration *report.CalibrationUse `json:"calibration"`
}

// groupParts returns the estimate's kg of element el from each group of the report, or why the
// report cannot give them.
func groupParts(rep *recorded, el string) ([]calibrate.Part, string) {
	var parts []calibrate.Part
	for _, g := range rep.Groups {
		st, ok := g.ElementsKg[el]
		switch {
		case g.ElementsKg == nil && len(rep.Groups) == 1:
			st = rep.Elements[el].Kg
		case g.ElementsKg == nil:
			return nil, "recorded before the estimate gave each group's elements: record it again (lot add --replace)"
		case !ok:
			continue
		}
		parts = append(parts, calibrate.Part{Family: g.Chemistry, Format: g.Format, Kg: math.Max(st.P50, 0),
			SDKg: math.Max(calibrate.SDFromP10P90(st.P10, st.P90), 0)})
	}
	if len(parts) == 0 && len(rep.Groups) > 0 { // the model expects none of it: the lot says how much is unexplained
		g := rep.Groups[0]
		parts = append(parts, calibrate.Part{Family: g.Chemistry, Format: g.Format})
	}
	return parts, ""
}
