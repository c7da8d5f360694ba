package register

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"slices"

	"blackmass/feed/calibrate"
	"blackmass/feed/dist"
	"blackmass/feed/lot"
	"blackmass/feed/report"
)

// WeighRelSD is the relative standard uncertainty taken for a weighing of black mass: a floor
// scale reads to a fraction of a per cent, and what the bag holds beside the fines (dust lost,
// a wet lump) adds about as much again (1 %, common practice).
const WeighRelSD = 0.01

// CalibrationLots reads, for every current lot with an assay and a weighing, what a calibration
// fits: per assayed element, the measured kg (the latest assay's wt% times the latest weighing,
// taken as the dry black mass, with both uncertainties) against the estimate's kg from each
// (chemistry, format) group of the lot (P50, and the sd its P10-P90 implies). Lots recorded
// before the estimate gave each group's elements are skipped unless they hold a single group.
func (r *Register) CalibrationLots(ctx context.Context) (_ []calibrate.Lot, _ []calibrate.Skipped, err error) {
	defer func() { err = r.wrap(err) }()
	type row struct {
		id, report string
		kg         float64
		assay      int64
	}
	var rows []row
	err = collect(ctx, r.db, `SELECT l.lot_id, l.report_json,
		(SELECT w.kg FROM weighings w WHERE w.lot_id = l.lot_id ORDER BY w.weighed_on DESC, w.weighing_id DESC LIMIT 1),
		(SELECT a.assay_id FROM assays a WHERE a.lot_id = l.lot_id ORDER BY a.assayed_on DESC, a.assay_id DESC LIMIT 1)
		FROM lots l WHERE l.current = 1
		AND EXISTS (SELECT 1 FROM weighings w WHERE w.lot_id = l.lot_id)
		AND EXISTS (SELECT 1 FROM assays a WHERE a.lot_id = l.lot_id)
		ORDER BY l.received, l.lot_id`, nil, func(rs *sql.Rows) error {
		var x row
		err := rs.Scan(&x.id, &x.report, &x.kg, &x.assay)
		rows = append(rows, x)
		return err
	})
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
		type value struct{ wt, sigma float64 }
		values := map[string]value{}
		err := collect(ctx, r.db, "SELECT element, wt_pct, sigma_wt_pct FROM assay_values WHERE assay_id = ? ORDER BY element",
			[]any{x.assay}, func(rs *sql.Rows) error {
				var el string
				var v value
				err := rs.Scan(&el, &v.wt, &v.sigma)
				values[el] = v
				return err
			})
		if err != nil {
			return nil, nil, err
		}
		l := calibrate.Lot{ID: x.id}
		reason := ""
		for _, el := range slices.Sorted(maps.Keys(values)) {
			v := values[el]
			if _, ok := rep.Elements[el]; !ok {
				continue // an element the model does not track (Na, moisture ...)
			}
			parts, why := groupParts(&rep, el)
			if why != "" {
				reason = why
				break
			}
			kg := v.wt / 100 * x.kg
			sd := math.Hypot(v.sigma/100*x.kg, WeighRelSD*kg)
			m := calibrate.Measure{Element: el, MeasuredKg: kg, MeasuredSDKg: sd, Parts: parts}
			if rep.Calibration == nil { // a calibrated report's spread is not the model's
				e := rep.Elements[el].Kg
				m.EstimateSDKg = calibrate.SDFromP10P90(e.P10, e.P90)
			}
			if kg == 0 {
				continue // a zero reading with no limit says nothing a factor can use
			}
			l.Measures = append(l.Measures, m)
		}
		switch {
		case reason != "":
			skipped = append(skipped, calibrate.Skipped{Lot: x.id, Reason: reason})
		case len(l.Measures) == 0:
			skipped = append(skipped, calibrate.Skipped{Lot: x.id, Reason: "its assay holds no element the estimate tracks"})
		default:
			lots = append(lots, l)
		}
	}
	return lots, skipped, nil
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
