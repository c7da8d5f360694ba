package register

import (
	"blackmass/feed/intake"
	"context"
	"database/sql"
	"fmt"
	"maps"
	"slices"
	"time"
)

// Totals answers a bench's questions for a month (YYYY-MM): what was received by chemistry,
// the metal held in the yard (every current lot), and estimate against assay per supplier.
type Totals struct {
	Month       string           `json:"month"`
	ByChemistry []ChemistryTotal `json:"received_by_chemistry"`
	// InYardKg is the metal of every current lot, each on its best evidence (measured kg,
	// else the estimate's P50); InYardBasis counts the lots on each basis.
	InYardKg    map[string]float64    `json:"metal_in_yard_kg"`
	InYardBasis map[string]BasisCount `json:"metal_in_yard_lots_by_basis"`
	BySupplier  []SupplierCheck       `json:"estimate_vs_assay_by_supplier"`
}

// BasisCount counts lots by what an element's figure rests on.
type BasisCount struct {
	Measured int `json:"assay_weighing"`
	Estimate int `json:"estimate"`
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
	// MeanRatio is, over the lots measured (assay × dry weighed mass), the mean of measured kg
	// over the estimate's P50 kg.
	MeanRatio    map[string]float64 `json:"mean_measured_over_estimate_kg"`
	MeasuredLots int                `json:"measured_lots"`
}

// MonthTotals computes the totals for month (YYYY-MM).
func (r *Register) MonthTotals(ctx context.Context, month string) (_ *Totals, err error) {
	defer func() { err = r.wrap(err) }()
	m, err := time.Parse("2006-01", month)
	if err != nil {
		return nil, fmt.Errorf("month %q: want YYYY-MM", intake.Printable(month, 20))
	}
	from, to := m.Format(time.DateOnly), m.AddDate(0, 1, -1).Format(time.DateOnly)
	t := &Totals{Month: month}
	if t.ByChemistry, err = r.receivedByChemistry(ctx, from, to); err != nil {
		return nil, err
	}
	ratios, err := r.inYard(ctx, t, from, to)
	if err != nil {
		return nil, err
	}
	if t.BySupplier, err = r.supplierChecks(ctx, from, to, ratios); err != nil {
		return nil, err
	}
	return t, nil
}

// receivedByChemistry is the intake of the lots received from..to, by chemistry.
func (r *Register) receivedByChemistry(ctx context.Context, from, to string) ([]ChemistryTotal, error) {
	var out []ChemistryTotal
	err := collect(ctx, r.db, `SELECT g.chemistry, count(DISTINCT l.lot_id), sum(g.items), sum(g.nameplate_kwh), sum(g.black_mass_kg)
		FROM lots l JOIN lot_groups g ON g.lot_id = l.lot_id AND g.version = l.version
		WHERE l.current = 1 AND l.received BETWEEN ? AND ? GROUP BY g.chemistry ORDER BY sum(g.black_mass_kg) DESC`, []any{from, to}, func(rows *sql.Rows) error {
		var c ChemistryTotal
		err := rows.Scan(&c.Chemistry, &c.Lots, &c.Items, &c.NameplateKWh, &c.BlackMassKg)
		out = append(out, c)
		return err
	})
	return out, err
}

// inYard fills t's metal in the yard (every current lot on its best evidence) and returns, for
// the lots received from..to, each supplier's measured/estimate ratios by element.
func (r *Register) inYard(ctx context.Context, t *Totals, from, to string) (map[string]map[string][]float64, error) {
	// Only the lots' first columns are read: the later ones sit behind the manifest and report.
	type current struct{ id, supplier, received string }
	var lots []current
	err := collect(ctx, r.db, "SELECT lot_id, supplier, received FROM lots WHERE current = 1", nil, func(rows *sql.Rows) error {
		var c current
		err := rows.Scan(&c.id, &c.supplier, &c.received)
		lots = append(lots, c)
		return err
	})
	if err != nil {
		return nil, err
	}
	evidence, err := r.readCurrentEvidence(ctx)
	if err != nil {
		return nil, err
	}
	t.InYardKg, t.InYardBasis = map[string]float64{}, map[string]BasisCount{}
	ratios := map[string]map[string][]float64{} // supplier → element → measured/estimate
	for _, l := range lots {
		le := evidence[l.id]
		if le == nil {
			continue
		}
		inMonth := l.received >= from && l.received <= to
		ev := RankEvidence(le.est, le.assays, le.weighings)
		for _, e := range ev.Elements {
			t.InYardKg[e.Element] += e.Kg
			c := t.InYardBasis[e.Element]
			if e.Basis == BasisMeasured {
				c.Measured++
			} else {
				c.Estimate++
			}
			t.InYardBasis[e.Element] = c
			if inMonth && e.Ratio != nil {
				if ratios[l.supplier] == nil {
					ratios[l.supplier] = map[string][]float64{}
				}
				ratios[l.supplier][e.Element] = append(ratios[l.supplier][e.Element], *e.Ratio)
			}
		}
	}
	return ratios, nil
}

// supplierChecks compares, per supplier of the lots received from..to, the latest assay's
// detected values with the estimate, and gives the mean measured/estimate ratios.
func (r *Register) supplierChecks(ctx context.Context, from, to string, ratios map[string]map[string][]float64) ([]SupplierCheck, error) {
	bySup := map[string]*SupplierCheck{}
	sums := map[string]map[string][2]float64{}
	err := collect(ctx, r.db, `SELECT l.supplier, l.lot_id, v.element, v.wt_pct, m.wt_pct_p50
		FROM lots l
		JOIN assays a ON a.assay_id = (SELECT a2.assay_id FROM assays a2 WHERE a2.lot_id = l.lot_id ORDER BY a2.assayed_on DESC, a2.assay_id DESC LIMIT 1)
		JOIN assay_values v ON v.assay_id = a.assay_id
		JOIN lot_metals m ON m.lot_id = l.lot_id AND m.version = l.version AND m.element = v.element
		WHERE l.current = 1 AND l.received BETWEEN ? AND ? AND v.censored = 0`, []any{from, to}, func(rows *sql.Rows) error {
		var sup, id, el string
		var assayed, est float64
		if err := rows.Scan(&sup, &id, &el, &assayed, &est); err != nil {
			return err
		}
		if bySup[sup] == nil {
			bySup[sup] = &SupplierCheck{Supplier: sup, MeanDiffPct: map[string]float64{}, MeanRatio: map[string]float64{}}
			sums[sup] = map[string][2]float64{}
		}
		s := sums[sup][el]
		sums[sup][el] = [2]float64{s[0] + assayed - est, s[1] + 1}
		return nil
	})
	if err != nil {
		return nil, err
	}
	var out []SupplierCheck
	for _, sup := range slices.Sorted(maps.Keys(bySup)) {
		c := bySup[sup]
		lots := 0.0
		for el, s := range sums[sup] {
			c.MeanDiffPct[el] = s[0] / s[1]
			lots = max(lots, s[1])
		}
		c.AssayedLots = int(lots)
		for el, rs := range ratios[sup] {
			sum := 0.0
			for _, x := range rs {
				sum += x
			}
			c.MeanRatio[el] = sum / float64(len(rs))
			c.MeasuredLots = max(c.MeasuredLots, len(rs))
		}
		out = append(out, *c)
	}
	return out, nil
}
