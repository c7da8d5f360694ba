package register

import (
	"bytes"
	"context"
	"database/sql"

	"blackmass/feed/assay"
	"blackmass/feed/intake"
)

// readEvidence reads what RankEvidence takes for one version of a lot: its estimate (payable is
// the lot's payable value, nil without prices), every assay and every weighing of the lot.
func (r *Register) readEvidence(ctx context.Context, id string, version int, payable *float64) (
	Estimate, []AssayEvidence, []WeighingEvidence, error) {
	est := Estimate{Elements: map[string]EstimateElement{}, Payable: payable}
	q := "SELECT black_mass_kg FROM lots WHERE lot_id = ? AND version = ?"
	if err := r.db.QueryRowContext(ctx, q, id, version).Scan(&est.BlackMassKg); err != nil {
		return est, nil, nil, err
	}
	err := collect(ctx, r.db, `SELECT element, kg_p10, kg_p50, kg_p90, wt_pct_p50, payable_value FROM lot_metals
		WHERE lot_id = ? AND version = ?`, []any{id, version}, func(rows *sql.Rows) error {
		var el string
		var e EstimateElement
		var pay sql.NullFloat64
		if err := rows.Scan(&el, &e.Kg.P10, &e.Kg.P50, &e.Kg.P90, &e.WtPctP50, &pay); err != nil {
			return err
		}
		if pay.Valid {
			e.PayableValue = &pay.Float64
		}
		est.Elements[el] = e
		return nil
	})
	if err != nil {
		return est, nil, nil, err
	}
	var assays []AssayEvidence
	err = collect(ctx, r.db, `SELECT assay_id, lab, assayed_on, moisture_wt_pct, moisture_sigma_wt_pct FROM assays
		WHERE lot_id = ? ORDER BY assayed_on, assay_id`, []any{id}, func(rows *sql.Rows) error {
		var a AssayEvidence
		var m, ms sql.NullFloat64
		if err := rows.Scan(&a.ID, &a.Lab, &a.On, &m, &ms); err != nil {
			return err
		}
		if m.Valid {
			a.MoistureWtPct, a.MoistureSigmaWtPct = &m.Float64, ms.Float64
		}
		assays = append(assays, a)
		return nil
	})
	if err != nil {
		return est, nil, nil, err
	}
	for i := range assays {
		err := collect(ctx, r.db, `SELECT element, wt_pct, sigma_wt_pct, censored, limit_wt_pct FROM assay_values
			WHERE assay_id = ? ORDER BY element`, []any{assays[i].ID}, func(rows *sql.Rows) error {
			var v assay.Value
			var limit sql.NullFloat64
			if err := rows.Scan(&v.Element, &v.WtPct, &v.SigmaWtPct, &v.Censored, &limit); err != nil {
				return err
			}
			assays[i].Values = append(assays[i].Values, storedValue(v, limit))
			return nil
		})
		if err != nil {
			return est, nil, nil, err
		}
	}
	var weighings []WeighingEvidence
	err = collect(ctx, r.db, `SELECT weighing_id, weighed_on, kg, coalesce(sigma_kg, 0), state, moisture_wt_pct, note FROM weighings
		WHERE lot_id = ? ORDER BY weighed_on, weighing_id`, []any{id}, func(rows *sql.Rows) error {
		var w WeighingEvidence
		var m sql.NullFloat64
		if err := rows.Scan(&w.ID, &w.On, &w.Kg, &w.SigmaKg, &w.State, &m, &w.Note); err != nil {
			return err
		}
		if m.Valid {
			w.MoistureWtPct = &m.Float64
		}
		weighings = append(weighings, w)
		return nil
	})
	return est, assays, weighings, err
}

// afterMigration holds, by schema version, what a migration does that SQL alone cannot; it runs
// in the migration's transaction.
var afterMigration = map[int]func(*sql.Tx) error{4: censorStoredAssays}

// censorStoredAssays brings the assays of a register made before schema 4 up to it: each stored
// assay file is read again, and its values below a detection limit are marked censored with
// their limit, its moisture row kept. A file that no longer reads (a program since made
// stricter) is left as it was stored.
func censorStoredAssays(tx *sql.Tx) error {
	type stored struct {
		id      int64
		name    string
		content []byte
	}
	var all []stored
	rows, err := tx.Query("SELECT assay_id, file_name, content FROM assays")
	if err != nil {
		return err
	}
	for rows.Next() {
		var s stored
		if err := rows.Scan(&s.id, &s.name, &s.content); err != nil {
			rows.Close()
			return err
		}
		all = append(all, s)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	for _, s := range all {
		a, err := intake.ReadAssay(bytes.NewReader(s.content), s.name)
		if err != nil {
			continue
		}
		for _, v := range a.Values {
			if !v.Censored {
				continue
			}
			if _, err := tx.Exec(`UPDATE assay_values SET censored = 1, limit_wt_pct = ?, wt_pct = ?, sigma_wt_pct = ?
				WHERE assay_id = ? AND element = ?`, v.LimitWtPct, v.WtPct, v.SigmaWtPct, s.id, v.Element); err != nil {
				return err
			}
		}
		if m := a.Moisture; m != nil {
			if _, err := tx.Exec("UPDATE assays SET moisture_wt_pct = ?, moisture_sigma_wt_pct = ? WHERE assay_id = ?",
				m.WtPct, m.SigmaWtPct, s.id); err != nil {
				return err
			}
		}
	}
	return nil
}

// lotEvidence is what readEvidence reads for one lot.
type lotEvidence struct {
	est         Estimate
	assays      []AssayEvidence
	weighings   []WeighingEvidence
	chemistries []string
}

// readCurrentEvidence reads, in a few queries, what the ranking takes for every current lot,
// and each lot's chemistries: a listing of many lots asks once, not once per lot.
func (r *Register) readCurrentEvidence(ctx context.Context) (map[string]*lotEvidence, error) {
	out := map[string]*lotEvidence{}
	get := func(id string) *lotEvidence {
		if out[id] == nil {
			out[id] = &lotEvidence{est: Estimate{Elements: map[string]EstimateElement{}}}
		}
		return out[id]
	}
	err := collect(ctx, r.db, `SELECT m.lot_id, m.element, m.kg_p10, m.kg_p50, m.kg_p90, m.wt_pct_p50, m.payable_value
		FROM lots l JOIN lot_metals m ON m.lot_id = l.lot_id AND m.version = l.version WHERE l.current = 1`, nil, func(rows *sql.Rows) error {
		var id, el string
		var e EstimateElement
		var pay sql.NullFloat64
		if err := rows.Scan(&id, &el, &e.Kg.P10, &e.Kg.P50, &e.Kg.P90, &e.WtPctP50, &pay); err != nil {
			return err
		}
		if pay.Valid {
			e.PayableValue = &pay.Float64
		}
		get(id).est.Elements[el] = e
		return nil
	})
	if err != nil {
		return nil, err
	}
	err = collect(ctx, r.db, `SELECT DISTINCT g.lot_id, g.chemistry FROM lots l JOIN lot_groups g ON g.lot_id = l.lot_id AND g.version = l.version
		WHERE l.current = 1 ORDER BY g.lot_id, g.chemistry`, nil, func(rows *sql.Rows) error {
		var id, c string
		err := rows.Scan(&id, &c)
		le := get(id)
		le.chemistries = append(le.chemistries, c)
		return err
	})
	if err != nil {
		return nil, err
	}
	index := map[int64]*AssayEvidence{}
	err = collect(ctx, r.db, `SELECT assay_id, lot_id, lab, assayed_on, moisture_wt_pct, moisture_sigma_wt_pct FROM assays
		ORDER BY assayed_on, assay_id`, nil, func(rows *sql.Rows) error {
		var a AssayEvidence
		var id string
		var m, ms sql.NullFloat64
		if err := rows.Scan(&a.ID, &id, &a.Lab, &a.On, &m, &ms); err != nil {
			return err
		}
		if m.Valid {
			a.MoistureWtPct, a.MoistureSigmaWtPct = &m.Float64, ms.Float64
		}
		le := get(id)
		le.assays = append(le.assays, a)
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, le := range out {
		for i := range le.assays {
			index[le.assays[i].ID] = &le.assays[i]
		}
	}
	err = collect(ctx, r.db, `SELECT assay_id, element, wt_pct, sigma_wt_pct, censored, limit_wt_pct FROM assay_values
		ORDER BY assay_id, element`, nil, func(rows *sql.Rows) error {
		var aid int64
		var v assay.Value
		var limit sql.NullFloat64
		if err := rows.Scan(&aid, &v.Element, &v.WtPct, &v.SigmaWtPct, &v.Censored, &limit); err != nil {
			return err
		}
		if a := index[aid]; a != nil {
			a.Values = append(a.Values, storedValue(v, limit))
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	err = collect(ctx, r.db, `SELECT weighing_id, lot_id, weighed_on, kg, coalesce(sigma_kg, 0), state, moisture_wt_pct, note FROM weighings
		ORDER BY weighed_on, weighing_id`, nil, func(rows *sql.Rows) error {
		var w WeighingEvidence
		var id string
		var m sql.NullFloat64
		if err := rows.Scan(&w.ID, &id, &w.On, &w.Kg, &w.SigmaKg, &w.State, &m, &w.Note); err != nil {
			return err
		}
		if m.Valid {
			w.MoistureWtPct = &m.Float64
		}
		le := get(id)
		le.weighings = append(le.weighings, w)
		return nil
	})
	return out, err
}

// storedValue is an assay value as stored: a censored one is made again from its limit.
func storedValue(v assay.Value, limit sql.NullFloat64) assay.Value {
	v.Basis = assay.BasisAssay
	if v.Censored && limit.Valid {
		v.Censor(limit.Float64)
	} else {
		v.Censored = false
	}
	return v
}
