package register

import (
	"context"
	"database/sql"
	"math"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/value"
)

// pricedLot is the sample lot with a value: Co 10 kg worth 300 payable, Ni 13 kg worth 130.
func pricedLot(id string) Lot {
	l := sampleLot(id, "Cinder Row", "2026-11-03", 2)
	l.Report.Value = &value.Value{Currency: "EUR", Payable: dist.Stat{P50: 430}, Elements: []value.ElementValue{
		{Element: "Co", Basis: value.BasisMetal, PayableVal: dist.Stat{P50: 300}},
		{Element: "Ni", Basis: value.BasisMetal, PayableVal: dist.Stat{P50: 130}},
	}}
	return l
}

// A lot assayed (Co 12 ± 0.3 wt%, Cu below 0.05, moisture 10 wt%) and weighed wet at 100 kg:
// the register keeps the censoring and the moisture, and the lot's Co is 12 % of 90 kg dry,
// 10.8 kg, 1.08 times the estimate's 10 kg; its value moves by Co's share (300 × 0.08).
func TestRegisterRanksEvidence(t *testing.T) {
	r, _ := openTemp(t)
	ctx := context.Background()
	if _, err := r.Add(ctx, pricedLot("EV-1"), false); err != nil {
		t.Fatal(err)
	}
	cu := assay.Value{Element: "Cu"}
	cu.Censor(0.05)
	a := &assay.Assay{Values: []assay.Value{{Element: "Co", WtPct: 12, SigmaWtPct: 0.3}, cu},
		Moisture: &assay.Value{Element: "H2O", WtPct: 10, SigmaWtPct: 0.5}}
	if _, err := r.AddAssay(ctx, "EV-1", "Moor Lane lab", "2026-11-05", "a.csv", "00", []byte("x"), a); err != nil {
		t.Fatal(err)
	}
	if err := r.RecordWeighing(ctx, "EV-1", WeighingEvidence{On: "2026-11-05", Kg: 100, State: StateWet}); err != nil {
		t.Fatal(err)
	}
	d, err := r.Show(ctx, "EV-1")
	if err != nil {
		t.Fatal(err)
	}
	if d.Basis != BasisMeasured || d.Evidence.DryMass == nil || d.Evidence.DryMass.Kg != 90 {
		t.Fatalf("basis %s dry %+v", d.Basis, d.Evidence.DryMass)
	}
	co := d.Evidence.Element("Co")
	if math.Abs(co.Kg-10.8) > 1e-12 || co.EstimateKgP50 != 10 || math.Abs(*co.Ratio-1.08) > 1e-12 ||
		math.Abs(*d.Evidence.Payable-(430+300*0.08)) > 1e-9 {
		t.Errorf("Co %+v, value %v", co, *d.Evidence.Payable)
	}
	c := d.Evidence.Element("Cu").Measured
	if c == nil || !c.Censored || c.LimitWtPct != 0.05 || math.Abs(c.MaxKg-0.045) > 1e-12 {
		t.Errorf("Cu %+v", c)
	}
	if ni := d.Evidence.Element("Ni"); ni.Basis != BasisEstimate || ni.Kg != 13 {
		t.Errorf("Ni, not assayed: %+v", ni)
	}
	rec := d.AssayList[0]
	if rec.MoistureWtPct == nil || *rec.MoistureWtPct != 10 || !rec.Values[1].Censored || rec.Values[1].Element != "Cu" || rec.Values[0].Censored {
		t.Errorf("assay as kept: %+v", rec)
	}
	if len(d.Weighings) != 1 || d.Weighings[0].State != StateWet {
		t.Errorf("weighings %+v", d.Weighings)
	}
	tot, err := r.MonthTotals(ctx, "2026-11")
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(tot.InYardKg["Co"]-10.8) > 1e-12 || tot.InYardBasis["Co"].Measured != 1 || tot.InYardBasis["Ni"].Estimate != 1 ||
		len(tot.BySupplier) != 1 || math.Abs(tot.BySupplier[0].MeanRatio["Co"]-1.08) > 1e-12 || tot.BySupplier[0].MeanDiffPct["Cu"] != 0 {
		t.Errorf("totals %+v", tot)
	}
}

// Weighings a bench cannot have made are refused and nothing is written.
func TestRecordWeighingRefused(t *testing.T) {
	r, _ := openTemp(t)
	ctx := context.Background()
	if _, err := r.Add(ctx, pricedLot("EV-2"), false); err != nil {
		t.Fatal(err)
	}
	m := func(x float64) *float64 { return &x }
	for _, w := range []WeighingEvidence{
		{On: "2026-11-05", Kg: 100, MoistureWtPct: m(120)},
		{On: "2026-11-05", Kg: 100, MoistureWtPct: m(-1)},
		{On: "2026-11-05", Kg: 100, MoistureWtPct: m(math.NaN())},
		{On: "2026-11-05", Kg: 100, State: StateDry, MoistureWtPct: m(5)},
		{On: "2026-11-05", Kg: 100, State: "damp"},
		{On: "2026-11-05", Kg: 100, SigmaKg: -1},
		{On: "2026-11-05", Kg: -3},
	} {
		if err := r.RecordWeighing(ctx, "EV-2", w); err == nil {
			t.Errorf("weighing %+v accepted", w)
		}
	}
	var n int
	_ = r.db.QueryRow("SELECT (SELECT count(*) FROM weighings) + (SELECT count(*) FROM audit WHERE action = 'weigh')").Scan(&n)
	if n != 0 {
		t.Errorf("%d rows written by refused weighings", n)
	}
}

// A register made at schema 3 (lot with priced metals, an assay, a weighing) is brought to 4 in
// place: the metals gain their payable value from the stored report, the assay and weighing
// their new columns, and the lot ranks its evidence.
func TestMigrateToEvidence(t *testing.T) {
	path := filepath.Join(t.TempDir(), "v3.db")
	db, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	old := &Register{db: db, path: path, now: time.Now}
	if err := old.migrate(context.Background(), 3); err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{
		`INSERT INTO lots (lot_id, version, supplier, received, added_at, tool_version, manifest_name, manifest_sha256, manifest,
			settings_json, report_json, items, nameplate_kwh, black_mass_kg, currency, payable_value) VALUES ('OLD-3', 1, 'Cinder Row',
			'2026-10-02', '2026-10-02T10:00:00Z', 'v3', 'm.csv', 'ab', x'00', '{}',
			'{"value":{"elements":[{"element":"Co","payable_value":{"p50":250}}]}}', 5, 1.5, 40, 'EUR', 400)`,
		`INSERT INTO lots (lot_id, version, supplier, received, added_at, tool_version, manifest_name, manifest_sha256, manifest,
			settings_json, report_json, items, nameplate_kwh, black_mass_kg) VALUES ('OLD-4', 1, 'Cinder Row',
			'2026-10-02', '2026-10-02T10:00:00Z', 'v3', 'm.csv', 'ab', x'00', '{}', 'not json', 5, 1.5, 40)`,
		`INSERT INTO lot_metals VALUES ('OLD-3', 1, 'Co', 4, 5, 6, 12.5)`,
		`INSERT INTO lot_metals VALUES ('OLD-3', 1, 'Ni', 4, 5, 6, 12.5)`,
		`INSERT INTO lot_metals VALUES ('OLD-4', 1, 'Co', 4, 5, 6, 12.5)`,
		`INSERT INTO assays VALUES (1, 'OLD-3', 'Moor Lane lab', '2026-10-04', '2026-10-04T10:00:00Z', 'a.csv', 'cd', x'00')`,
		`INSERT INTO assay_values VALUES (1, 'Co', 15, 0.5)`,
		`INSERT INTO weighings (lot_id, weighed_on, kg, added_at) VALUES ('OLD-3', '2026-10-03', 40, '2026-10-03T10:00:00Z')`,
		`INSERT INTO assays VALUES (2, 'OLD-4', 'Moor Lane lab', '2026-10-04', '2026-10-04T10:00:00Z', 'b.csv', 'ef',
			CAST('element,value,unit,uncertainty' || char(10) || 'Co,9,wt%,0.3' || char(10) || 'Cu,<0.05,wt%,' || char(10) ||
			'Moisture,7,wt%,0.5' || char(10) AS BLOB))`,
		`INSERT INTO assay_values VALUES (2, 'Co', 9, 0.3)`,
		`INSERT INTO assay_values VALUES (2, 'Cu', 0.025, 0.0144)`, // as stored before schema 4: the middle, unflagged
	} {
		if _, err := db.Exec(q); err != nil {
			t.Fatal(err)
		}
	}
	_ = db.Close()
	up, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer up.Close()
	if v, _ := up.SchemaVersion(); v < 4 {
		t.Fatalf("schema %d", v)
	}
	d, err := up.Show(context.Background(), "OLD-3")
	if err != nil {
		t.Fatal(err)
	}
	co := d.Evidence.Element("Co")
	// 15 % of 40 kg taken as dry (the weighing said neither): 6 kg, 1.2 × the estimate's 5 kg;
	// the value 400 + 250 × 0.2.
	if co.Basis != BasisMeasured || math.Abs(co.Kg-6) > 1e-12 || co.PayableValue == nil || math.Abs(*co.PayableValue-300) > 1e-9 ||
		math.Abs(*d.Evidence.Payable-450) > 1e-9 || !strings.Contains(strings.Join(d.Evidence.Notes, " "), "taken as dry") {
		t.Errorf("migrated lot: Co %+v value %v notes %q", co, d.Evidence.Payable, d.Evidence.Notes)
	}
	if ni := d.Evidence.Element("Ni"); ni.PayableValue != nil {
		t.Errorf("Ni was not priced: %+v", ni)
	}
	d, err = up.Show(context.Background(), "OLD-4")
	if err != nil || d.Evidence.Element("Co").PayableValue != nil {
		t.Fatalf("lot with an unreadable report: %v", err)
	}
	// Its assay, stored before schema 4, is read again: Cu below 0.05 is censored, the moisture kept.
	a := d.AssayList[0]
	if a.MoistureWtPct == nil || *a.MoistureWtPct != 7 || a.MoistureSigmaWtPct != 0.5 || !a.Values[1].Censored || a.Values[1].LimitWtPct != 0.05 ||
		a.Values[0].Censored {
		t.Errorf("stored assay after the upgrade: %+v", a)
	}
}
