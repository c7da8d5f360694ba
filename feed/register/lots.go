package register

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"slices"
	"strings"
	"time"

	"blackmass/feed/assay"
	"blackmass/feed/intake"
	"blackmass/feed/report"
)

// MaxIDLen bounds a lot id.
const MaxIDLen = 64

// Lot is what is recorded when a lot is added.
type Lot struct {
	ID             string
	Supplier       string
	Received       string // YYYY-MM-DD
	ToolVersion    string
	ManifestName   string
	ManifestSHA256 string
	Manifest       []byte
	Settings       any // recorded as JSON
	Report         *report.Report
}

// ErrExists is returned when a lot id is already in the register and replace was not asked.
var ErrExists = errors.New("already in the register")

// ErrNoLot is returned for a lot id the register does not hold.
var ErrNoLot = errors.New("no such lot in the register")

// Add records a lot in one transaction. A lot id already present is refused unless replace,
// which records a new version and keeps the old one (no longer current). It returns the
// version recorded.
func (r *Register) Add(ctx context.Context, l Lot, replace bool) (int, error) {
	if err := l.Validate(); err != nil {
		return 0, r.wrap(err)
	}
	received, _ := date(l.Received)
	rep, err := json.Marshal(l.Report)
	if err != nil {
		return 0, r.wrap(err)
	}
	settings, err := json.Marshal(l.Settings)
	if err != nil {
		return 0, r.wrap(err)
	}
	version := 0
	err = r.tx(ctx, func(tx *sql.Tx) error {
		var last sql.NullInt64
		var current sql.NullInt64
		if err := tx.QueryRow("SELECT max(version), max(current) FROM lots WHERE lot_id = ?", l.ID).Scan(&last, &current); err != nil {
			return err
		}
		if last.Valid && current.Int64 == 1 && !replace {
			return fmt.Errorf("lot %s: %w; pass --replace to record a new version (the old one is kept)", l.ID, ErrExists)
		}
		version = int(last.Int64) + 1
		if _, err := tx.Exec("UPDATE lots SET current = 0 WHERE lot_id = ?", l.ID); err != nil {
			return err
		}
		rp := l.Report
		var currency string
		var payable, reagents sql.NullFloat64
		if v := rp.Value; v != nil {
			currency, payable = v.Currency, sql.NullFloat64{Float64: v.Payable.P50, Valid: true}
			if v.ReagentCost != nil {
				reagents = sql.NullFloat64{Float64: v.ReagentCost.P50, Valid: true}
			}
		}
		// The report and settings go in as the bytes json.Marshal made, cast to TEXT by SQLite:
		// a string conversion would copy a report of a large manifest (tens of MB) once more.
		_, err := tx.Exec(`INSERT INTO lots (lot_id, version, current, supplier, received, added_at, tool_version, manifest_name,
			manifest_sha256, manifest, settings_json, report_json, items, nameplate_kwh, black_mass_kg, currency, payable_value, reagent_cost)
			VALUES (?, ?, 1, ?, ?, ?, ?, ?, ?, ?, CAST(? AS TEXT), CAST(? AS TEXT), ?, ?, ?, ?, ?, ?)`,
			l.ID, version, l.Supplier, received, r.now().Format(time.RFC3339), l.ToolVersion, l.ManifestName, l.ManifestSHA256, l.Manifest,
			settings, rep, rp.Lot.Items, rp.Lot.NameplateKWh, rp.BlackMassKg.P50, currency, payable, reagents)
		if err != nil {
			return err
		}
		if err := insertDetail(tx, l.ID, version, rp); err != nil {
			return err
		}
		action := "add"
		if version > 1 {
			action = "replace"
		}
		return audit(tx, r.now(), action, l.ID, fmt.Sprintf("version %d from %s (sha256 %s)", version, l.ManifestName, l.ManifestSHA256))
	})
	return version, r.wrap(err)
}

// insertDetail records the lines as parsed, the (chemistry, format) groups and the metals.
func insertDetail(tx *sql.Tx, id string, version int, rp *report.Report) error {
	line, err := tx.Prepare(`INSERT INTO lot_lines (lot_id, version, line, item_id, chemistry_label, chemistry, format, count, energy_wh, mass_kg)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`)
	if err != nil {
		return err
	}
	defer line.Close()
	for _, ln := range rp.Lines {
		if _, err := line.Exec(id, version, ln.Line, ln.ID, ln.ChemistryLabel, ln.Chemistry, ln.Format, ln.Count, ln.EnergyWhPerItem, ln.MeasuredMassKg); err != nil {
			return err
		}
	}
	for _, g := range rp.Groups {
		if _, err := tx.Exec(`INSERT INTO lot_groups (lot_id, version, chemistry, format, items, nameplate_kwh, black_mass_kg) VALUES (?, ?, ?, ?, ?, ?, ?)`,
			id, version, g.Chemistry, g.Format, g.Items, g.NameplateKWh, g.BlackMassKg.P50); err != nil {
			return err
		}
	}
	for el, a := range rp.Elements {
		if _, err := tx.Exec(`INSERT INTO lot_metals (lot_id, version, element, kg_p10, kg_p50, kg_p90, wt_pct_p50) VALUES (?, ?, ?, ?, ?, ?, ?)`,
			id, version, el, a.Kg.P10, a.Kg.P50, a.Kg.P90, a.WtPct.P50); err != nil {
			return err
		}
	}
	return nil
}

func audit(tx *sql.Tx, at time.Time, action, id, detail string) error {
	_, err := tx.Exec("INSERT INTO audit (at, action, lot_id, detail) VALUES (?, ?, ?, ?)", at.Format(time.RFC3339), action, id, detail)
	return err
}

// exists reports whether the lot is current in the register.
func exists(tx *sql.Tx, id string) error {
	var n int
	if err := tx.QueryRow("SELECT count(*) FROM lots WHERE lot_id = ? AND current = 1", id).Scan(&n); err != nil {
		return err
	}
	if n == 0 {
		return fmt.Errorf("lot %s: %w", intake.Printable(id, 40), ErrNoLot)
	}
	return nil
}

// AddAssay attaches a lab assay to a lot (every assay is kept) and returns its id.
func (r *Register) AddAssay(ctx context.Context, id, lab, assayedOn, fileName, sha string, content []byte, a *assay.Assay) (int64, error) {
	on, err := date(assayedOn)
	if err != nil {
		return 0, r.wrap(err)
	}
	if strings.TrimSpace(lab) == "" {
		return 0, r.wrap(errors.New("name the lab (--lab)"))
	}
	var aid int64
	err = r.tx(ctx, func(tx *sql.Tx) error {
		if err := exists(tx, id); err != nil {
			return err
		}
		res, err := tx.Exec("INSERT INTO assays (lot_id, lab, assayed_on, added_at, file_name, file_sha256, content) VALUES (?, ?, ?, ?, ?, ?, ?)",
			id, lab, on, r.now().Format(time.RFC3339), fileName, sha, content)
		if err != nil {
			return err
		}
		if aid, err = res.LastInsertId(); err != nil {
			return err
		}
		for _, v := range a.Values {
			if _, err := tx.Exec("INSERT INTO assay_values (assay_id, element, wt_pct, sigma_wt_pct) VALUES (?, ?, ?, ?)", aid, v.Element, v.WtPct, v.SigmaWtPct); err != nil {
				return err
			}
		}
		return audit(tx, r.now(), "assay", id, fmt.Sprintf("assay %d by %s on %s from %s", aid, lab, on, fileName))
	})
	return aid, r.wrap(err)
}

// MaxWeighKg bounds a weighing: above any lot a bench takes in at once (common practice).
const MaxWeighKg = 1e7

// Weigh records weighed black mass for a lot.
func (r *Register) Weigh(ctx context.Context, id, weighedOn string, kg float64, note string) error {
	on, err := date(weighedOn)
	if err != nil {
		return r.wrap(err)
	}
	if !(kg > 0) || kg > MaxWeighKg {
		return r.wrap(fmt.Errorf("weighed mass %v kg: want more than 0 and at most %g kg", kg, float64(MaxWeighKg)))
	}
	return r.wrap(r.tx(ctx, func(tx *sql.Tx) error {
		if err := exists(tx, id); err != nil {
			return err
		}
		if _, err := tx.Exec("INSERT INTO weighings (lot_id, weighed_on, kg, added_at, note) VALUES (?, ?, ?, ?, ?)", id, on, kg, r.now().Format(time.RFC3339), note); err != nil {
			return err
		}
		return audit(tx, r.now(), "weigh", id, fmt.Sprintf("%g kg on %s", kg, on))
	}))
}

// Remove deletes a lot (every version, its assays and weighings) and leaves an audit row.
func (r *Register) Remove(ctx context.Context, id, reason string) error {
	return r.wrap(r.tx(ctx, func(tx *sql.Tx) error {
		if err := exists(tx, id); err != nil {
			return err
		}
		for _, q := range []string{"DELETE FROM assays WHERE lot_id = ?", "DELETE FROM weighings WHERE lot_id = ?", "DELETE FROM lots WHERE lot_id = ?"} {
			if _, err := tx.Exec(q, id); err != nil {
				return err
			}
		}
		return audit(tx, r.now(), "remove", id, reason)
	}))
}

// Summary is one lot in a listing.
type Summary struct {
	ID           string             `json:"lot_id"`
	Version      int                `json:"version"`
	Supplier     string             `json:"supplier"`
	Received     string             `json:"received"`
	Items        int                `json:"items"`
	NameplateKWh float64            `json:"nameplate_kWh"`
	BlackMassKg  float64            `json:"black_mass_kg_p50"`
	MetalsKg     map[string]float64 `json:"metals_kg_p50"`
	Chemistries  []string           `json:"chemistries"`
	Assays       int                `json:"assays"`
	AssayWtPct   map[string]float64 `json:"latest_assay_wt_pct,omitempty"`
	AssayLab     string             `json:"latest_assay_lab,omitempty"`
	WeighedKg    float64            `json:"weighed_kg,omitempty"` // the latest weighing
	Currency     string             `json:"currency,omitempty"`
	Payable      *float64           `json:"payable_value_p50,omitempty"`
	ReagentCost  *float64           `json:"reagent_cost_p50,omitempty"`
}

// Filter narrows a listing: supplier (exact), received from/to (inclusive), a chemistry held.
type Filter struct {
	Supplier, From, To, Chemistry string
}

// List returns the current lots that match f, by date received then id.
func (r *Register) List(ctx context.Context, f Filter) (_ []Summary, err error) {
	defer func() { err = r.wrap(err) }()
	q := `SELECT lot_id, version, supplier, received, items, nameplate_kwh, black_mass_kg, currency, payable_value, reagent_cost
		FROM lots l WHERE current = 1`
	var args []any
	if f.Supplier != "" {
		q += " AND supplier = ?"
		args = append(args, f.Supplier)
	}
	for _, b := range []struct{ v, op string }{{f.From, ">="}, {f.To, "<="}} {
		if b.v != "" {
			d, err := date(b.v)
			if err != nil {
				return nil, err
			}
			q += " AND received " + b.op + " ?"
			args = append(args, d)
		}
	}
	if f.Chemistry != "" {
		// instr, not LIKE: the text given is found as text, '%' and '_' are no wildcards.
		q += " AND EXISTS (SELECT 1 FROM lot_groups g WHERE g.lot_id = l.lot_id AND g.version = l.version AND instr(upper(g.chemistry), upper(?)) > 0)"
		args = append(args, f.Chemistry)
	}
	q += " ORDER BY received, lot_id"
	rows, err := r.db.QueryContext(ctx, q, args...)
	if err != nil {
		return nil, err
	}
	var out []Summary
	for rows.Next() {
		var s Summary
		var pay, rc sql.NullFloat64
		if err := rows.Scan(&s.ID, &s.Version, &s.Supplier, &s.Received, &s.Items, &s.NameplateKWh, &s.BlackMassKg, &s.Currency, &pay, &rc); err != nil {
			rows.Close()
			return nil, err
		}
		if pay.Valid {
			s.Payable = &pay.Float64
		}
		if rc.Valid {
			s.ReagentCost = &rc.Float64
		}
		out = append(out, s)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, err
	}
	for i := range out {
		if err := r.fill(ctx, &out[i]); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// fill adds a summary's metals, chemistries, assays and weighing.
func (r *Register) fill(ctx context.Context, s *Summary) error {
	s.MetalsKg = map[string]float64{}
	rows, err := r.db.QueryContext(ctx, "SELECT element, kg_p50 FROM lot_metals WHERE lot_id = ? AND version = ?", s.ID, s.Version)
	if err != nil {
		return err
	}
	for rows.Next() {
		var el string
		var kg float64
		if err := rows.Scan(&el, &kg); err != nil {
			rows.Close()
			return err
		}
		s.MetalsKg[el] = kg
	}
	rows.Close()
	rows, err = r.db.QueryContext(ctx, "SELECT DISTINCT chemistry FROM lot_groups WHERE lot_id = ? AND version = ? ORDER BY chemistry", s.ID, s.Version)
	if err != nil {
		return err
	}
	for rows.Next() {
		var c string
		if err := rows.Scan(&c); err != nil {
			rows.Close()
			return err
		}
		s.Chemistries = append(s.Chemistries, c)
	}
	rows.Close()
	if err := r.db.QueryRowContext(ctx, "SELECT count(*) FROM assays WHERE lot_id = ?", s.ID).Scan(&s.Assays); err != nil {
		return err
	}
	if s.Assays > 0 {
		var aid int64
		if err := r.db.QueryRowContext(ctx, "SELECT assay_id, lab FROM assays WHERE lot_id = ? ORDER BY assayed_on DESC, assay_id DESC LIMIT 1", s.ID).Scan(&aid, &s.AssayLab); err != nil {
			return err
		}
		s.AssayWtPct = map[string]float64{}
		rows, err = r.db.QueryContext(ctx, "SELECT element, wt_pct FROM assay_values WHERE assay_id = ?", aid)
		if err != nil {
			return err
		}
		for rows.Next() {
			var el string
			var v float64
			if err := rows.Scan(&el, &v); err != nil {
				rows.Close()
				return err
			}
			s.AssayWtPct[el] = v
		}
		rows.Close()
	}
	err = r.db.QueryRowContext(ctx, "SELECT kg FROM weighings WHERE lot_id = ? ORDER BY weighed_on DESC, weighing_id DESC LIMIT 1", s.ID).Scan(&s.WeighedKg)
	if errors.Is(err, sql.ErrNoRows) {
		err = nil
	}
	return err
}

// Detail is everything the register holds of one lot.
type Detail struct {
	Summary
	AddedAt        string          `json:"added_at"`
	ToolVersion    string          `json:"program_version"`
	ManifestName   string          `json:"manifest_name"`
	ManifestSHA256 string          `json:"manifest_sha256"`
	Versions       []int           `json:"versions"`
	AssayList      []AssayRecord   `json:"assay_records"`
	Weighings      []Weighing      `json:"weighings"`
	Report         json.RawMessage `json:"report"`
	Settings       json.RawMessage `json:"settings"`
	Lines          int             `json:"lines"`
	Audit          []AuditRow      `json:"audit"`
}

// AssayRecord is one assay attached to a lot.
type AssayRecord struct {
	ID        int64              `json:"assay_id"`
	Lab       string             `json:"lab"`
	AssayedOn string             `json:"assayed_on"`
	FileName  string             `json:"file_name"`
	WtPct     map[string]float64 `json:"wt_pct"`
}

// Weighing is one weighing of a lot's black mass.
type Weighing struct {
	On   string  `json:"weighed_on"`
	Kg   float64 `json:"kg"`
	Note string  `json:"note,omitempty"`
}

// AuditRow is one entry of the audit trail.
type AuditRow struct {
	At, Action, Detail string
}

// Show returns a lot's detail.
func (r *Register) Show(ctx context.Context, id string) (_ *Detail, err error) {
	defer func() { err = r.wrap(err) }()
	d := &Detail{}
	var report, settings string
	err = r.db.QueryRowContext(ctx, `SELECT lot_id, version, supplier, received, items, nameplate_kwh, black_mass_kg, added_at, tool_version,
		manifest_name, manifest_sha256, report_json, settings_json, currency FROM lots WHERE lot_id = ? AND current = 1`, id).
		Scan(&d.ID, &d.Version, &d.Supplier, &d.Received, &d.Items, &d.NameplateKWh, &d.BlackMassKg, &d.AddedAt, &d.ToolVersion,
			&d.ManifestName, &d.ManifestSHA256, &report, &settings, &d.Currency)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("lot %s: %w", intake.Printable(id, 40), ErrNoLot)
	}
	if err != nil {
		return nil, err
	}
	d.Report, d.Settings = json.RawMessage(report), json.RawMessage(settings)
	if err := r.fill(ctx, &d.Summary); err != nil {
		return nil, err
	}
	if err := r.db.QueryRowContext(ctx, "SELECT count(*) FROM lot_lines WHERE lot_id = ? AND version = ?", id, d.Version).Scan(&d.Lines); err != nil {
		return nil, err
	}
	if err := collect(ctx, r.db, "SELECT version FROM lots WHERE lot_id = ? ORDER BY version", []any{id}, func(rows *sql.Rows) error {
		var v int
		err := rows.Scan(&v)
		d.Versions = append(d.Versions, v)
		return err
	}); err != nil {
		return nil, err
	}
	if err := collect(ctx, r.db, "SELECT assay_id, lab, assayed_on, file_name FROM assays WHERE lot_id = ? ORDER BY assayed_on, assay_id", []any{id}, func(rows *sql.Rows) error {
		var a AssayRecord
		err := rows.Scan(&a.ID, &a.Lab, &a.AssayedOn, &a.FileName)
		d.AssayList = append(d.AssayList, a)
		return err
	}); err != nil {
		return nil, err
	}
	for i := range d.AssayList {
		d.AssayList[i].WtPct = map[string]float64{}
		if err := collect(ctx, r.db, "SELECT element, wt_pct FROM assay_values WHERE assay_id = ?", []any{d.AssayList[i].ID}, func(rows *sql.Rows) error {
			var el string
			var v float64
			err := rows.Scan(&el, &v)
			d.AssayList[i].WtPct[el] = v
			return err
		}); err != nil {
			return nil, err
		}
	}
	if err := collect(ctx, r.db, "SELECT weighed_on, kg, note FROM weighings WHERE lot_id = ? ORDER BY weighed_on, weighing_id", []any{id}, func(rows *sql.Rows) error {
		var w Weighing
		err := rows.Scan(&w.On, &w.Kg, &w.Note)
		d.Weighings = append(d.Weighings, w)
		return err
	}); err != nil {
		return nil, err
	}
	err = collect(ctx, r.db, "SELECT at, action, detail FROM audit WHERE lot_id = ? ORDER BY audit_id", []any{id}, func(rows *sql.Rows) error {
		var a AuditRow
		err := rows.Scan(&a.At, &a.Action, &a.Detail)
		d.Audit = append(d.Audit, a)
		return err
	})
	return d, err
}

// collect runs a query and hands each row to fn.
func collect(ctx context.Context, db *sql.DB, q string, args []any, fn func(*sql.Rows) error) error {
	rows, err := db.QueryContext(ctx, q, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		if err := fn(rows); err != nil {
			return err
		}
	}
	return rows.Err()
}

// Totals answers a bench's questions for a month (YYYY-MM): what was received by chemistry,
// the metal held in the yard (every current lot), and estimate against assay per supplier.
type Totals struct {
	Month       string             `json:"month"`
	ByChemistry []ChemistryTotal   `json:"received_by_chemistry"`
	InYardKg    map[string]float64 `json:"metal_in_yard_kg_p50"`
	BySupplier  []SupplierCheck    `json:"estimate_vs_assay_by_supplier"`
}

// ChemistryTotal is the month's intake of one chemistry.
type ChemistryTotal struct {
	Chemistry    string  `json:"chemistry"`
	Lots         int     `json:"lots"`
	Items        int     `json:"items"`
	NameplateKWh float64 `json:"nameplate_kWh"`
	BlackMassKg  float64 `json:"black_mass_kg_p50"`
}

// SupplierCheck compares, for one supplier's assayed lots, the latest assay with the estimate.
type SupplierCheck struct {
	Supplier    string             `json:"supplier"`
	AssayedLots int                `json:"assayed_lots"`
	MeanDiffPct map[string]float64 `json:"mean_assay_minus_estimate_wt_pct"`
}

// MonthTotals computes the totals for month (YYYY-MM).
func (r *Register) MonthTotals(ctx context.Context, month string) (_ *Totals, err error) {
	defer func() { err = r.wrap(err) }()
	m, err := time.Parse("2006-01", month)
	if err != nil {
		return nil, fmt.Errorf("month %q: want YYYY-MM", intake.Printable(month, 20))
	}
	from, to := m.Format(time.DateOnly), m.AddDate(0, 1, -1).Format(time.DateOnly)
	t := &Totals{Month: month, InYardKg: map[string]float64{}}
	err = collect(ctx, r.db, `SELECT g.chemistry, count(DISTINCT l.lot_id), sum(g.items), sum(g.nameplate_kwh), sum(g.black_mass_kg)
		FROM lots l JOIN lot_groups g ON g.lot_id = l.lot_id AND g.version = l.version
		WHERE l.current = 1 AND l.received BETWEEN ? AND ? GROUP BY g.chemistry ORDER BY sum(g.black_mass_kg) DESC`, []any{from, to}, func(rows *sql.Rows) error {
		var c ChemistryTotal
		err := rows.Scan(&c.Chemistry, &c.Lots, &c.Items, &c.NameplateKWh, &c.BlackMassKg)
		t.ByChemistry = append(t.ByChemistry, c)
		return err
	})
	if err != nil {
		return nil, err
	}
	err = collect(ctx, r.db, `SELECT m.element, sum(m.kg_p50) FROM lots l JOIN lot_metals m ON m.lot_id = l.lot_id AND m.version = l.version
		WHERE l.current = 1 GROUP BY m.element`, nil, func(rows *sql.Rows) error {
		var el string
		var kg float64
		err := rows.Scan(&el, &kg)
		t.InYardKg[el] = kg
		return err
	})
	if err != nil {
		return nil, err
	}
	bySup := map[string]*SupplierCheck{}
	sums := map[string]map[string][2]float64{}
	err = collect(ctx, r.db, `SELECT l.supplier, l.lot_id, v.element, v.wt_pct, m.wt_pct_p50
		FROM lots l
		JOIN assays a ON a.assay_id = (SELECT a2.assay_id FROM assays a2 WHERE a2.lot_id = l.lot_id ORDER BY a2.assayed_on DESC, a2.assay_id DESC LIMIT 1)
		JOIN assay_values v ON v.assay_id = a.assay_id
		JOIN lot_metals m ON m.lot_id = l.lot_id AND m.version = l.version AND m.element = v.element
		WHERE l.current = 1 AND l.received BETWEEN ? AND ?`, []any{from, to}, func(rows *sql.Rows) error {
		var sup, id, el string
		var assayed, est float64
		if err := rows.Scan(&sup, &id, &el, &assayed, &est); err != nil {
			return err
		}
		if bySup[sup] == nil {
			bySup[sup] = &SupplierCheck{Supplier: sup, MeanDiffPct: map[string]float64{}}
			sums[sup] = map[string][2]float64{}
		}
		s := sums[sup][el]
		sums[sup][el] = [2]float64{s[0] + assayed - est, s[1] + 1}
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, sup := range slices.Sorted(maps.Keys(bySup)) {
		c := bySup[sup]
		lots := 0.0
		for el, s := range sums[sup] {
			c.MeanDiffPct[el] = s[0] / s[1]
			lots = max(lots, s[1])
		}
		c.AssayedLots = int(lots)
		t.BySupplier = append(t.BySupplier, *c)
	}
	return t, nil
}
