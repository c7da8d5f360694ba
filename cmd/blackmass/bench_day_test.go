package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/register"
)

// benchDir holds the invented bench's manifests and assays (testdata/bench/README.md).
const benchDir = "../../testdata/bench"

// writeBenchXLSX writes lot HM-1004 as the bench's spreadsheet saves it: a title row above the
// header, headers with units, a lead-acid line mixed in.
func writeBenchXLSX(t *testing.T, path string) {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	if err := f.SetSheetName("Sheet1", "Intake"); err != nil {
		t.Fatal(err)
	}
	rows := [][]any{
		{"Hollowmere recycling bench: intake of lot HM-1004 (invented)"},
		{},
		{"Ref", "Description", "Chemistry", "Format", "Capacity (Wh)", "Qty", "Weight each (kg)"},
		{"d1", "laptop packs", "LCO", "pack", 56, 25, 0.29},
		{"d2", "tablet pouch cells", "LCO", "pouch", 26, 40, 0.13},
		{"d3", "alarm panel batteries", "SLA", "prismatic", nil, 2, 2.4},
	}
	for i, r := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		if err := f.SetSheetRow("Intake", cell, &r); err != nil {
			t.Fatal(err)
		}
	}
	if err := f.SaveAs(path); err != nil {
		t.Fatal(err)
	}
}

// benchRun runs one command of the bench's day and fails the test unless it succeeds.
func benchRun(t *testing.T, args ...string) string {
	t.Helper()
	code, out, errs := cli(t, "", args...)
	if code != 0 {
		t.Fatalf("%s: exit %d: %s", strings.Join(args, " "), code, errs)
	}
	return out
}

// benchShow is lot show --json of one lot.
func benchShow(t *testing.T, db, id string) *register.Detail {
	t.Helper()
	var d register.Detail
	if err := json.Unmarshal([]byte(benchRun(t, "lot", "show", id, "--json", "--db", db)), &d); err != nil {
		t.Fatal(err)
	}
	return &d
}

func benchNear(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g (± %g)", what, got, want, tol)
	}
}

// A bench's day on the invented lots of testdata/bench: four lots added (CSV with a totals row
// and NiMH cells, a semicolon file with decimal commas and a bag weighed whole, e-bike packs,
// an .xlsx with lead-acid batteries), assays from three labs (XRF without lithium, ICP with
// values below detection, g/kg), weighings wet and dry; list, show, totals and export carry the
// measured metal (assay × dry weighed mass) beside the estimate; calibrate refuses too few lots.
// Every expected number is worked out by hand in the comments.
func TestBenchDay(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "hollowmere.db")
	xlsx := filepath.Join(dir, "lot-HM-1004.xlsx")
	writeBenchXLSX(t, xlsx)
	for _, l := range []struct{ id, file, supplier, received string }{
		{"HM-1001", benchDir + "/lot-HM-1001.csv", "Ostwick civic amenity site", "2026-11-20"},
		{"HM-1002", benchDir + "/lot-HM-1002.csv", "Brenlow tool-hire depot", "2026-11-22"},
		{"HM-1003", benchDir + "/lot-HM-1003.csv", "Ostwick civic amenity site", "2026-11-24"},
		{"HM-1004", xlsx, "Brenlow tool-hire depot", "2026-11-25"},
	} {
		benchRun(t, "lot", "add", l.file, "--lot", l.id, "--supplier", l.supplier, "--received", l.received, "--db", db, "--samples", "300", "-q")
	}
	// Nameplate: HM-1001 200 × 12 Wh + 30 × 18 V × 5 Ah + 150 × 3.6 V × 3 Ah = 2400 + 2700 + 1620
	// = 6720 Wh (the 60 NiMH cells carry none); HM-1002 40 × 90 + 12 × 180 = 5760 Wh (the bag
	// and the NiCd packs none); HM-1004 25 × 56 + 40 × 26 = 2440 Wh.
	for id, kWh := range map[string]float64{"HM-1001": 6.72, "HM-1002": 5.76, "HM-1004": 2.44} {
		benchNear(t, id+" nameplate kWh", benchShow(t, db, id).NameplateKWh, kWh, 1e-9)
	}

	benchRun(t, "lot", "assay", "HM-1001", benchDir+"/assay-HM-1001-xrf.csv", "--lab", "Cresset bench lab", "--date", "2026-11-26", "--db", db)
	benchRun(t, "lot", "assay", "HM-1001", benchDir+"/assay-HM-1001-icp.csv", "--lab", "Pellow assay lab", "--date", "2026-11-27", "--db", db)
	benchRun(t, "lot", "assay", "HM-1003", benchDir+"/assay-HM-1003-icp.csv", "--lab", "Pellow assay lab", "--date", "2026-11-28", "--db", db)
	benchRun(t, "lot", "weigh", "HM-1001", "--mass", "20 kg", "--moisture", "4", "--date", "2026-11-26", "--db", db)
	benchRun(t, "lot", "weigh", "HM-1003", "--mass", "40 kg", "--wet", "--date", "2026-11-28", "--db", db)
	benchRun(t, "lot", "weigh", "HM-1002", "--mass", "21.5 kg", "--dry", "--sigma", "0.2 kg", "--date", "2026-11-25", "--db", db)

	benchDayFirstEvidence(t, db)

	benchDayText(t, db)

	// Two assayed and weighed lots: calibrate refuses, saying how many it needs, and saves nothing.
	code, out, errs := cli(t, "", "calibrate", "--db", db)
	if code != exitError || out != "" || !strings.Contains(errs, "at least 3 assayed lots, have 2") {
		t.Errorf("calibrate on 2 lots: exit %d, %s%s", code, out, errs)
	}
	if code, _, errs := cli(t, "", "estimate", benchDir+"/lot-HM-1003.csv", "--calibrated", "--db", db, "--samples", "100"); code != exitError ||
		!strings.Contains(errs, "no such calibration") {
		t.Errorf("--calibrated after a refused calibration: exit %d, %s", code, errs)
	}

	// The rest of the day: HM-1002's XRF (no Li), HM-1004's g/kg assay, HM-1004 weighed.
	benchRun(t, "lot", "assay", "HM-1002", benchDir+"/assay-HM-1002-xrf.csv", "--lab", "Cresset bench lab", "--date", "2026-11-27", "--db", db)
	benchRun(t, "lot", "assay", "HM-1004", benchDir+"/assay-HM-1004-gkg.csv", "--lab", "Ravensgill assay lab", "--date", "2026-11-29", "--db", db)
	benchRun(t, "lot", "weigh", "HM-1004", "--mass", "7.1 kg", "--date", "2026-11-29", "--db", db)
	// HM-1004: 7.1 kg at the assay's 3.2 % moisture = 6.8728 kg dry; Co 330 g/kg = 33 wt% ×
	// 6.8728 = 2.268024 kg; Pb 1.8 g/kg = 0.18 % × 6.8728 = 0.01237104 kg; Ni < 0.5 g/kg: below
	// 0.05 % × 6.8728 = 0.0034364 kg. HM-1002: 21.5 kg dry; Co 6.1 % = 1.3115 kg, Ni 17.9 % =
	// 3.8485 kg, Cd 0.35 % = 0.07525 kg; its Li stays the estimate's.
	d := benchShow(t, db, "HM-1004")
	benchNear(t, "HM-1004 dry kg", d.Evidence.DryMass.Kg, 6.8728, 1e-9)
	benchNear(t, "HM-1004 Co kg", d.Evidence.Element("Co").Kg, 2.268024, 1e-9)
	benchNear(t, "HM-1004 Pb kg", d.Evidence.Element("Pb").Kg, 0.01237104, 1e-9)
	if ni := d.Evidence.Element("Ni"); ni.Measured == nil || !ni.Measured.Censored {
		t.Errorf("HM-1004 Ni below detection: %+v", ni)
	} else {
		benchNear(t, "HM-1004 Ni at most kg", ni.Measured.MaxKg, 0.0034364, 1e-9)
	}
	d = benchShow(t, db, "HM-1002")
	benchNear(t, "HM-1002 Co kg", d.Evidence.Element("Co").Kg, 1.3115, 1e-9)
	if li := d.Evidence.Element("Li"); li.Basis != register.BasisEstimate {
		t.Errorf("HM-1002 Li, not assayed: basis %s", li.Basis)
	}

	// The month's metal in the yard, every lot on its best evidence: Co 2.702985 + 1.3115 +
	// 1.073 + 2.268024 = 7.355509 kg; Ni 1.918464 (HM-1001: weights 1/0.4² = 6.25 and 1/0.3² =
	// 11.111, (6.25 × 9.8 + 11.111 × 10.1) / 17.361 = 9.9920 % × 19.2 kg) + 3.8485 + 8.325 +
	// 0.0017182 (HM-1004's half-limit, the expected value) = 14.093682 kg; Cd 0.07525 + 0.000192 (HM-1001's n.d. < 20 mg/kg: half of 0.002 % × 19.2 kg).
	var tot register.Totals
	if err := json.Unmarshal([]byte(benchRun(t, "lot", "totals", "--month", "2026-11", "--json", "--db", db)), &tot); err != nil {
		t.Fatal(err)
	}
	benchNear(t, "yard Co kg", tot.InYardKg["Co"], 7.355509, 1e-6)
	benchNear(t, "yard Ni kg", tot.InYardKg["Ni"], 14.093682, 1e-5)
	benchNear(t, "yard Cd kg", tot.InYardKg["Cd"], 0.075442, 1e-9)

	benchDayExport(t, dir, db)
}

// readBenchCSV reads the register's CSV export into rows by lot id, each a map by column.
func readBenchCSV(t *testing.T, path string) map[string]map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]map[string]string{}
	for _, rec := range recs[1:] {
		row := map[string]string{}
		for i, h := range recs[0] {
			row[h] = rec[i]
		}
		out[row["lot"]] = row
	}
	return out
}

// reconcile sets the estimate beside an ICP assay with values below detection: those print as
// "< limit" in the table, never as the half-limit the Monte Carlo draws around.
func TestReconcileCensoredText(t *testing.T) {
	out := benchRun(t, "reconcile", benchDir+"/lot-HM-1001.csv", benchDir+"/assay-HM-1001-icp.csv", "--samples", "200", "--bootstrap", "50")
	_, table, ok := strings.Cut(out, "estimate vs assay")
	if !ok {
		t.Fatalf("no comparison table:\n%s", out)
	}
	row := func(el string) string {
		for _, l := range strings.Split(table, "\n") {
			if f := strings.Fields(l); len(f) > 0 && f[0] == el && strings.Contains(l, ".") {
				return l
			}
		}
		return ""
	}
	// Fe < 0.05 wt%, Zn < 50 ppm = 0.005 wt%, Cd n.d. below 20 mg/kg = 0.002 wt%.
	for el, want := range map[string]string{"Fe": "< 0.05", "Zn": "< 0.005", "Cd": "< 0.002"} {
		if r := row(el); !strings.Contains(r, want) || strings.Contains(r, "0.03") {
			t.Errorf("%s row %q, want the assay as %q", el, r, want)
		}
	}
}

// A wet weighing recorded before any assay gives a moisture says that the lot's dry mass is not
// known yet (its metal stays on the estimate), not that an assay's moisture was used; once an
// assay with a moisture row arrives, the weighing counts: 40 kg × (1 − 0.075) = 37 kg dry.
func TestWetWeighingBeforeTheAssay(t *testing.T) {
	db := filepath.Join(t.TempDir(), "r.db")
	benchRun(t, "lot", "add", benchDir+"/lot-HM-1003.csv", "--lot", "HM-1003", "--db", db, "--samples", "100", "-q")
	out := benchRun(t, "lot", "weigh", "HM-1003", "--mass", "40 kg", "--wet", "--date", "2026-11-28", "--db", db)
	if !strings.Contains(out, "dry mass not known yet") {
		t.Errorf("lot weigh --wet with no moisture known:\n%s", out)
	}
	benchRun(t, "lot", "assay", "HM-1003", benchDir+"/assay-HM-1003-icp.csv", "--lab", "Pellow assay lab", "--db", db)
	if d := benchShow(t, db, "HM-1003"); d.Evidence.DryMass == nil || math.Abs(d.Evidence.DryMass.Kg-37) > 1e-9 {
		t.Errorf("after the assay: dry mass %+v, want 37 kg", d.Evidence.DryMass)
	}
	out = benchRun(t, "lot", "weigh", "HM-1003", "--mass", "39 kg", "--moisture", "7", "--date", "2026-11-29", "--db", db)
	// 39 × 0.93 = 36.27 kg dry.
	if !strings.Contains(out, "36.3 kg dry") {
		t.Errorf("lot weigh --moisture 7:\n%s", out)
	}
}

// lot list --json gives the latest assay's measured values as numbers and its values below the
// detection limit apart, as limits: HM-1001's ICP has Fe < 0.05 wt%, never Fe 0.025.
func TestListJSONCensored(t *testing.T) {
	db := filepath.Join(t.TempDir(), "r.db")
	benchRun(t, "lot", "add", benchDir+"/lot-HM-1001.csv", "--lot", "HM-1001", "--db", db, "--samples", "100", "-q")
	benchRun(t, "lot", "assay", "HM-1001", benchDir+"/assay-HM-1001-icp.csv", "--lab", "Pellow assay lab", "--db", db)
	var lots []register.Summary
	if err := json.Unmarshal([]byte(benchRun(t, "lot", "list", "--json", "--db", db)), &lots); err != nil {
		t.Fatal(err)
	}
	if len(lots) != 1 {
		t.Fatalf("%d lots", len(lots))
	}
	l := lots[0]
	if _, ok := l.AssayWtPct["Fe"]; ok || l.AssayBelowLimit["Fe"] != 0.05 || l.AssayWtPct["Co"] != 14 {
		t.Errorf("latest assay %v, below the limit %v; want Co 14 measured and Fe below 0.05", l.AssayWtPct, l.AssayBelowLimit)
	}
}

// The workbook of a quote and of a reconciliation shows an assay value below the detection
// limit as "< limit" on the Assay sheet, not as its half-limit.
func TestWorkbookAssayCensored(t *testing.T) {
	dir := t.TempDir()
	for name, args := range map[string][]string{
		"quote.xlsx":     {"quote", benchDir + "/assay-HM-1001-icp.csv", "--mass", "19.2 kg"},
		"reconcile.xlsx": {"reconcile", benchDir + "/lot-HM-1001.csv", benchDir + "/assay-HM-1001-icp.csv"},
	} {
		path := filepath.Join(dir, name)
		benchRun(t, append(args, "--xlsx", path, "--samples", "200", "--bootstrap", "50", "-q")...)
		f, err := excelize.OpenFile(path)
		if err != nil {
			t.Fatal(err)
		}
		rows, err := f.GetRows("Assay")
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, r := range rows {
			if len(r) > 3 && r[0] == "Fe" {
				found = true
				if !strings.Contains(strings.Join(r, " "), "< 0.05") {
					t.Errorf("%s: Fe row %q, want the assay as < 0.05", name, r)
				}
			}
		}
		if !found {
			t.Errorf("%s: no Fe row on the Assay sheet", name)
		}
	}
}

// benchDayFirstEvidence checks the lots on the first assays and weighings: dry mass, metals
// from two labs by their uncertainties, a value below detection.
func benchDayFirstEvidence(t *testing.T, db string) {
	t.Helper()
	// HM-1001: 20 kg wet at 4 % moisture (the weighing's own; the XRF assay's 4 % is the same
	// water and is not taken off again): 20 × 0.96 = 19.2 kg dry (not 18.43), sd 1 % of 20 kg ×
	// 0.96 = 0.192 kg.
	d := benchShow(t, db, "HM-1001")
	dm := d.Evidence.DryMass
	if dm == nil || d.Evidence.Basis != register.BasisMeasured {
		t.Fatalf("HM-1001: basis %s, dry mass %+v", d.Evidence.Basis, dm)
	}
	benchNear(t, "HM-1001 dry kg", dm.Kg, 19.2, 1e-9)
	benchNear(t, "HM-1001 dry sd kg", dm.SigmaKg, 0.192, 1e-9)
	// Co from two labs, by their uncertainties: XRF 14.2 ± 0.5, ICP 14.0 ± 0.4 wt%; weights
	// 1/0.25 = 4 and 1/0.16 = 6.25: (4 × 14.2 + 6.25 × 14.0) / 10.25 = 144.3 / 10.25 = 14.07805 wt%,
	// sd 1/√10.25 = 0.31235; × 19.2 kg = 2.702985 kg, sd √((0.0031235 × 19.2)² + (0.1407805 ×
	// 0.192)²) = √(0.059971² + 0.027030²) = 0.065781 kg.
	co := d.Evidence.Element("Co")
	if co.Measured == nil || co.Basis != register.BasisMeasured || co.Assay.Assays != 2 {
		t.Fatalf("HM-1001 Co %+v", co)
	}
	benchNear(t, "HM-1001 Co wt%", co.Assay.WtPct, 14.07805, 1e-5)
	benchNear(t, "HM-1001 Co kg", co.Kg, 2.702985, 1e-6)
	benchNear(t, "HM-1001 Co sd kg", co.Measured.SigmaKg, 0.065781, 1e-6)
	// Li only from the ICP (the XRF has none): 3.1 % × 19.2 = 0.5952 kg.
	li := d.Evidence.Element("Li")
	if li.Assay == nil || li.Assay.Assays != 1 {
		t.Fatalf("HM-1001 Li %+v", li)
	}
	benchNear(t, "HM-1001 Li kg", li.Kg, 0.5952, 1e-9)
	// Fe < 0.05 wt% of 19.2 kg: below 0.0096 kg; its ratio to the estimate only bounded.
	fe := d.Evidence.Element("Fe")
	if fe.Measured == nil || !fe.Measured.Censored || fe.Ratio != nil || fe.RatioAtMost == nil {
		t.Fatalf("HM-1001 Fe %+v", fe)
	}
	benchNear(t, "HM-1001 Fe at most kg", fe.Measured.MaxKg, 0.0096, 1e-12)
	benchNear(t, "HM-1001 Fe ratio at most", *fe.RatioAtMost, 0.0096/fe.EstimateKgP50, 1e-12)

	// HM-1003: 40 kg wet at the assay's 7.5 ± 0.4 % moisture: 37.0 kg dry, sd √((0.01 × 40 ×
	// 0.925)² + (40 × 0.004)²) = √(0.37² + 0.16²) = 0.40311 kg; Co 2.9 % × 37 = 1.073 kg,
	// Ni 22.5 % × 37 = 8.325 kg, Li 3.3 % × 37 = 1.221 kg.
	d = benchShow(t, db, "HM-1003")
	if d.Evidence.DryMass == nil {
		t.Fatal("HM-1003: no dry mass from the assay's moisture")
	}
	benchNear(t, "HM-1003 dry kg", d.Evidence.DryMass.Kg, 37, 1e-9)
	benchNear(t, "HM-1003 dry sd kg", d.Evidence.DryMass.SigmaKg, 0.40311, 1e-5)
	for el, kg := range map[string]float64{"Co": 1.073, "Ni": 8.325, "Li": 1.221} {
		benchNear(t, "HM-1003 "+el+" kg", d.Evidence.Element(el).Kg, kg, 1e-9)
	}
	// HM-1002: weighed dry but not assayed: its metal stays on the estimate.
	if d = benchShow(t, db, "HM-1002"); d.Evidence.Basis != register.BasisEstimate || d.Evidence.Element("Co").Measured != nil {
		t.Errorf("HM-1002 without an assay: basis %s", d.Evidence.Basis)
	}
}

// benchDayText checks the text the bench reads: the basis per lot and per element, a censored
// value as "< limit".
func benchDayText(t *testing.T, db string) {
	t.Helper()
	// The text the bench reads: the basis per lot and per element, a censored value as "< limit".
	list := benchRun(t, "lot", "list", "--db", db)
	for _, want := range []string{"HM-1001", "assay+weighing", "2.70 m", "1.07 m", "estimate"} {
		if !strings.Contains(list, want) {
			t.Errorf("lot list lacks %q:\n%s", want, list)
		}
	}
	show := benchRun(t, "lot", "show", "HM-1001", "--db", db)
	if first, _, _ := strings.Cut(show, "\n"); strings.ContainsAny(first, "[]") {
		t.Errorf("lot show's versions printed as a Go slice: %q", first)
	}
	for _, want := range []string{"19.2 ± 0.192 kg dry", "< 0.0096", "Fe < 0.05 wt% (below the detection limit)", "not assayed, from the estimate"} {
		if !strings.Contains(show, want) {
			t.Errorf("lot show lacks %q:\n%s", want, show)
		}
	}
	for _, l := range strings.Split(show, "\n") {
		if f := strings.Fields(l); len(f) > 2 && f[0] == "Fe" && f[1] == "m" && strings.Contains(l, "0.0048") {
			t.Errorf("lot show's table prints the censored Fe as its half-limit 0.0048 kg: %q", l)
		}
	}
	// The note gives the range and the middle the sums use: 0.05 % × 19.2 kg = 0.0096 kg, half 0.0048.
	if !strings.Contains(show, "Fe: below the detection limit, 0 to 0.0096 kg; sums and value use the middle, 0.0048 kg") {
		t.Errorf("lot show lacks the censored Fe's note:\n%s", show)
	}
}

// benchDayExport checks the export: one row per lot, the measured kg and the basis beside the
// estimate.
func benchDayExport(t *testing.T, dir, db string) {
	t.Helper()
	// The export: one row per lot, the measured kg and the basis beside the estimate.
	csvPath := filepath.Join(dir, "lots.csv")
	benchRun(t, "lot", "export", "--csv", csvPath, "--db", db)
	benchRun(t, "lot", "export", "--xlsx", filepath.Join(dir, "lots.xlsx"), "--db", db)
	rows := readBenchCSV(t, csvPath)
	if len(rows) != 4 {
		t.Fatalf("export: %d lots, want 4", len(rows))
	}
	r := rows["HM-1001"]
	if r["basis"] != register.BasisMeasured || r["Co basis"] != register.BasisMeasured || r["Li basis"] != register.BasisMeasured {
		t.Errorf("export HM-1001 bases: %s, Co %s, Li %s", r["basis"], r["Co basis"], r["Li basis"])
	}
	for col, want := range map[string]float64{"dry black mass kg": 19.2, "Co kg": 2.702985, "Co measured kg": 2.702985} {
		v, err := strconv.ParseFloat(r[col], 64)
		if err != nil {
			t.Fatalf("export HM-1001 %s: %q", col, r[col])
		}
		benchNear(t, "export HM-1001 "+col, v, want, 1e-6)
	}
	if r["Co estimate kg (P50)"] == "" || r["Co measured/estimate"] == "" {
		t.Error("export HM-1001: the estimate is not kept beside the measurement")
	}
}
