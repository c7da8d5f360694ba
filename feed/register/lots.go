package register

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
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
	// The report is kept without its per-line detail: the lines are rows of lot_lines and the
	// manifest itself is kept, so a lot of a million lines does not store them twice more.
	head := *l.Report
	head.Lines, head.KeptLines = nil, nil
	rep, err := json.Marshal(&head)
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
	for _, ln := range rp.EachLine() {
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
	payable := map[string]float64{}
	if rp.Value != nil {
		for _, e := range rp.Value.Elements {
			payable[e.Element] = e.PayableVal.P50
		}
	}
	for el, a := range rp.Elements {
		var pay sql.NullFloat64
		if v, ok := payable[el]; ok {
			pay = sql.NullFloat64{Float64: v, Valid: true}
		}
		if _, err := tx.Exec(`INSERT INTO lot_metals (lot_id, version, element, kg_p10, kg_p50, kg_p90, wt_pct_p50, payable_value)
			VALUES (?, ?, ?, ?, ?, ?, ?, ?)`, id, version, el, a.Kg.P10, a.Kg.P50, a.Kg.P90, a.WtPct.P50, pay); err != nil {
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
		var moist, moistSigma sql.NullFloat64
		if m := a.Moisture; m != nil {
			moist, moistSigma = sql.NullFloat64{Float64: m.WtPct, Valid: true}, sql.NullFloat64{Float64: m.SigmaWtPct, Valid: true}
		}
		res, err := tx.Exec(`INSERT INTO assays (lot_id, lab, assayed_on, added_at, file_name, file_sha256, content, moisture_wt_pct,
			moisture_sigma_wt_pct) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`,
			id, lab, on, r.now().Format(time.RFC3339), fileName, sha, content, moist, moistSigma)
		if err != nil {
			return err
		}
		if aid, err = res.LastInsertId(); err != nil {
			return err
		}
		for _, v := range a.Values {
			var limit sql.NullFloat64
			if v.Censored {
				limit = sql.NullFloat64{Float64: v.LimitWtPct, Valid: true}
			}
			if _, err := tx.Exec("INSERT INTO assay_values (assay_id, element, wt_pct, sigma_wt_pct, censored, limit_wt_pct) VALUES (?, ?, ?, ?, ?, ?)",
				aid, v.Element, v.WtPct, v.SigmaWtPct, v.Censored, limit); err != nil {
				return err
			}
		}
		return audit(tx, r.now(), "assay", id, fmt.Sprintf("assay %d by %s on %s from %s", aid, lab, on, fileName))
	})
	return aid, r.wrap(err)
}

// MaxWeighKg bounds a weighing: above any lot a bench takes in at once (common practice).
const MaxWeighKg = 1e7

// Weigh records weighed black mass for a lot, neither said wet nor dry.
func (r *Register) Weigh(ctx context.Context, id, weighedOn string, kg float64, note string) error {
	return r.RecordWeighing(ctx, id, WeighingEvidence{On: weighedOn, Kg: kg, Note: note})
}

// CheckWeighing checks a weighing before it is recorded: its date, a mass above 0 and at most
// MaxWeighKg, its state (wet, dry or not said), a moisture from 0 to below 100 wt% of the wet
// mass given only for a mass not weighed dry, and an uncertainty that is not negative.
func CheckWeighing(w WeighingEvidence) error {
	if _, err := date(w.On); err != nil {
		return err
	}
	if !(w.Kg > 0) || w.Kg > MaxWeighKg {
		return fmt.Errorf("weighed mass %v kg: want more than 0 and at most %g kg", w.Kg, float64(MaxWeighKg))
	}
	switch w.State {
	case StateUnknown, StateWet, StateDry:
	default:
		return fmt.Errorf("weighing state %q: want wet, dry or nothing", intake.Printable(w.State, 20))
	}
	if m := w.MoistureWtPct; m != nil {
		if !(*m >= 0 && *m < 100) {
			return fmt.Errorf("moisture %v wt%%: want from 0 to below 100 wt%% of the wet mass", *m)
		}
		if w.State == StateDry {
			return errors.New("a moisture for a mass weighed dry: give one or the other")
		}
	}
	if !(w.SigmaKg >= 0) || math.IsInf(w.SigmaKg, 0) || w.SigmaKg > w.Kg {
		return fmt.Errorf("weighing uncertainty %v kg: want from 0 to the mass weighed", w.SigmaKg)
	}
	return nil
}

// RecordWeighing records a weighing of a lot's black mass: wet or dry, its moisture (wt% of the
// wet mass) and its standard uncertainty in kg when known (see CheckWeighing).
func (r *Register) RecordWeighing(ctx context.Context, id string, w WeighingEvidence) error {
	if err := CheckWeighing(w); err != nil {
		return r.wrap(err)
	}
	on, _ := date(w.On)
	var moist, sigma sql.NullFloat64
	if w.MoistureWtPct != nil {
		moist = sql.NullFloat64{Float64: *w.MoistureWtPct, Valid: true}
	}
	if w.SigmaKg > 0 {
		sigma = sql.NullFloat64{Float64: w.SigmaKg, Valid: true}
	}
	state := w.State
	if moist.Valid && state == StateUnknown {
		state = StateWet // a moisture is of a wet mass
	}
	return r.wrap(r.tx(ctx, func(tx *sql.Tx) error {
		if err := exists(tx, id); err != nil {
			return err
		}
		if _, err := tx.Exec(`INSERT INTO weighings (lot_id, weighed_on, kg, added_at, note, state, moisture_wt_pct, sigma_kg)
			VALUES (?, ?, ?, ?, ?, ?, ?, ?)`, id, on, w.Kg, r.now().Format(time.RFC3339), w.Note, state, moist, sigma); err != nil {
			return err
		}
		detail := fmt.Sprintf("%g kg on %s", w.Kg, on)
		if state != StateUnknown {
			detail += ", " + state
		}
		if moist.Valid {
			detail += fmt.Sprintf(" at %g wt%% moisture", moist.Float64)
		}
		return audit(tx, r.now(), "weigh", id, detail)
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
	BlackMassKg  float64            `json:"black_mass_kg_p50"` // the estimate's
	MetalsKg     map[string]float64 `json:"metals_kg_p50"`     // the estimate's; Evidence has the best
	Chemistries  []string           `json:"chemistries"`
	Assays       int                `json:"assays"`
	AssayWtPct   map[string]float64 `json:"latest_assay_wt_pct,omitempty"`
	// AssayBelowLimit holds the latest assay's elements below the detection limit: their limit,
	// wt% (they are not in AssayWtPct, whose numbers are measured values).
	AssayBelowLimit map[string]float64 `json:"latest_assay_below_detection_limit_wt_pct,omitempty"`
	AssayLab        string             `json:"latest_assay_lab,omitempty"`
	WeighedKg       float64            `json:"weighed_kg,omitempty"` // the latest weighing
	Currency        string             `json:"currency,omitempty"`
	Payable         *float64           `json:"payable_value_p50,omitempty"` // the estimate's
	ReagentCost     *float64           `json:"reagent_cost_p50,omitempty"`
	// Basis is what the lot's metal and value rest on (BasisMeasured or BasisEstimate), and
	// Evidence the figures on it, element by element, with the estimate beside each.
	Basis    string   `json:"basis"`
	Evidence Evidence `json:"evidence"`
}

// Filter narrows a listing: supplier (exact), received from/to (inclusive), a chemistry held.
type Filter struct {
	Supplier, From, To, Chemistry string
}

// List returns the current lots that match f, by date received then id.
func (r *Register) List(ctx context.Context, f Filter) ([]Summary, error) {
	out, err := r.list(ctx, f)
	return out, r.wrap(err)
}

func (r *Register) list(ctx context.Context, f Filter) ([]Summary, error) {
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
	if len(out) == 0 {
		return out, nil
	}
	all, err := r.readCurrentEvidence(ctx)
	if err != nil {
		return nil, err
	}
	for i := range out {
		le := all[out[i].ID]
		if le == nil {
			le = &lotEvidence{est: Estimate{Elements: map[string]EstimateElement{}}}
		}
		le.est.BlackMassKg = out[i].BlackMassKg
		out[i].apply(le)
	}
	return out, nil
}

// fill adds a summary's metals, chemistries, assays and weighing, and ranks its evidence. It
// returns the lot's assays and weighings as the ranking read them.
func (r *Register) fill(ctx context.Context, s *Summary) ([]AssayEvidence, []WeighingEvidence, error) {
	est, assays, weighings, err := r.readEvidence(ctx, s.ID, s.Version, s.Payable)
	if err != nil {
		return nil, nil, err
	}
	le := &lotEvidence{est: est, assays: assays, weighings: weighings}
	err = collect(ctx, r.db, "SELECT DISTINCT chemistry FROM lot_groups WHERE lot_id = ? AND version = ? ORDER BY chemistry",
		[]any{s.ID, s.Version}, func(rows *sql.Rows) error {
			var c string
			err := rows.Scan(&c)
			le.chemistries = append(le.chemistries, c)
			return err
		})
	if err != nil {
		return nil, nil, err
	}
	s.apply(le)
	return assays, weighings, nil
}

// apply fills a summary from what was read of its lot, and ranks its evidence.
func (s *Summary) apply(le *lotEvidence) {
	le.est.Payable = s.Payable
	s.MetalsKg = map[string]float64{}
	for el, e := range le.est.Elements {
		s.MetalsKg[el] = e.Kg.P50
	}
	s.Chemistries = le.chemistries
	s.Assays = len(le.assays)
	if latest := latestAssay(le.assays); latest != nil {
		s.AssayLab = latest.Lab
		s.AssayWtPct = map[string]float64{}
		for _, v := range latest.Values {
			if v.Censored {
				if s.AssayBelowLimit == nil {
					s.AssayBelowLimit = map[string]float64{}
				}
				s.AssayBelowLimit[v.Element] = v.LimitWtPct
				continue
			}
			s.AssayWtPct[v.Element] = v.WtPct
		}
	}
	if len(le.weighings) > 0 {
		s.WeighedKg = le.weighings[len(le.weighings)-1].Kg // ordered by date, then id
	}
	s.Evidence = RankEvidence(le.est, le.assays, le.weighings)
	s.Basis = s.Evidence.Basis
}

// latestAssay is the latest assay by date, then id; nil if none.
func latestAssay(assays []AssayEvidence) *AssayEvidence {
	var best *AssayEvidence
	for i := range assays {
		if a := &assays[i]; best == nil || a.On > best.On || a.On == best.On && a.ID > best.ID {
			best = a
		}
	}
	return best
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

// AssayRecord is one assay attached to a lot: its values (censored ones with their limit), the
// moisture of its sample, and the file it came from.
type AssayRecord struct {
	AssayEvidence
	FileName string             `json:"file_name"`
	WtPct    map[string]float64 `json:"wt_pct"` // a censored value: the middle of 0..limit
}

// Weighing is one weighing of a lot's black mass.
type Weighing = WeighingEvidence

// AuditRow is one entry of the audit trail.
type AuditRow struct {
	At, Action, Detail string
}

// Show returns a lot's detail.
func (r *Register) Show(ctx context.Context, id string) (_ *Detail, err error) {
	defer func() { err = r.wrap(err) }()
	d := &Detail{}
	var report, settings string
	var pay, rc sql.NullFloat64
	err = r.db.QueryRowContext(ctx, `SELECT lot_id, version, supplier, received, items, nameplate_kwh, black_mass_kg, added_at, tool_version,
		manifest_name, manifest_sha256, report_json, settings_json, currency, payable_value, reagent_cost FROM lots WHERE lot_id = ? AND current = 1`, id).
		Scan(&d.ID, &d.Version, &d.Supplier, &d.Received, &d.Items, &d.NameplateKWh, &d.BlackMassKg, &d.AddedAt, &d.ToolVersion,
			&d.ManifestName, &d.ManifestSHA256, &report, &settings, &d.Currency, &pay, &rc)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("lot %s: %w", intake.Printable(id, 40), ErrNoLot)
	}
	if err != nil {
		return nil, err
	}
	d.Report, d.Settings = json.RawMessage(report), json.RawMessage(settings)
	if pay.Valid {
		d.Payable = &pay.Float64
	}
	if rc.Valid {
		d.ReagentCost = &rc.Float64
	}
	assays, weighings, err := r.fill(ctx, &d.Summary)
	if err != nil {
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
	files := map[int64]string{}
	if err := collect(ctx, r.db, "SELECT assay_id, file_name FROM assays WHERE lot_id = ?", []any{id}, func(rows *sql.Rows) error {
		var aid int64
		var name string
		err := rows.Scan(&aid, &name)
		files[aid] = name
		return err
	}); err != nil {
		return nil, err
	}
	for _, a := range assays {
		rec := AssayRecord{AssayEvidence: a, FileName: files[a.ID], WtPct: map[string]float64{}}
		for _, v := range a.Values {
			rec.WtPct[v.Element] = v.WtPct
		}
		d.AssayList = append(d.AssayList, rec)
	}
	d.Weighings = weighings
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
