package main

import (
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/calibrate"
	"blackmass/feed/leach"
	"blackmass/feed/register"
	"blackmass/feed/run"
)

// seeded writes a demo register of invented lots (few samples: the test needs the lots, not
// sharp estimates) and returns its path.
func seeded(t testing.TB) string {
	t.Helper()
	db := filepath.Join(t.TempDir(), "bench.db")
	var out, errb strings.Builder
	if code := Main([]string{"demo", "--seed-register", db, "--samples", "400"}, nil, &out, &errb); code != 0 {
		t.Fatalf("seed: exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "INVENTED") || !strings.Contains(out.String(), "DM-007") {
		t.Errorf("seed output does not say the lots are invented or which is spoiled:\n%s", out.String())
	}
	return db
}

// calibrate on the demo register: the spoiled lot is named and left out, the bias shrinks, the
// calibration is saved as version 1, then 2; --keep and --exclude act; a lot not in the
// register is a usage error; the workbook holds the figures and a chart.
func TestCalibrateDemoRegister(t *testing.T) {
	db := seeded(t)
	code, out, errs := cli(t, "", "calibrate", "--db", db)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"calibration 1 of register", "DM-007", "left out of the fit", "coverage before", "Co "} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
	code, out, errs = cli(t, "", "calibrate", "--db", db, "--json", "--exclude", "DM-003")
	if code != 0 {
		t.Fatalf("--json: exit %d: %s", code, errs)
	}
	var o calibrate.Outcome
	if err := json.Unmarshal([]byte(out), &o); err != nil {
		t.Fatal(err)
	}
	// 30 lots given, one excluded by name and one left out by the rules: 28 used.
	if o.Calibration.Version != 2 || o.Report.Lots != 30 || len(o.Report.Used) != 28 || len(o.Report.LeftOut) != 2 {
		t.Errorf("version %d from %d lots (%d used, %d left out), want 2 from 30 (28, 2)", o.Calibration.Version, o.Report.Lots,
			len(o.Report.Used), len(o.Report.LeftOut))
	}
	left := map[string]calibrate.LeftOut{}
	for _, l := range o.Report.LeftOut {
		left[l.Lot] = l
	}
	if !left["DM-003"].Excluded || left["DM-007"].Reason == "" {
		t.Errorf("left out: %+v", o.Report.LeftOut)
	}
	for _, e := range o.Report.Elements {
		// The invented bench differs from the model by run.DemoTruth: those elements' bias
		// shrinks when each lot is predicted from the others.
		if f, ok := run.DemoTruth[e.Element]; ok {
			t.Logf("%s: true factor %.2f, bias %+.3f -> %+.3f, coverage %.0f %% -> %.0f %%", e.Element, f, e.BiasBefore, e.BiasAfter,
				100*e.CoverageBefore, 100*e.CoverageAfter)
			if !(math.Abs(e.BiasAfter) < math.Abs(e.BiasBefore)/2) {
				t.Errorf("%s: bias %+.3f before, %+.3f after", e.Element, e.BiasBefore, e.BiasAfter)
			}
		}
		if len(e.Points) != e.Lots {
			t.Errorf("%s: %d points for %d lots", e.Element, len(e.Points), e.Lots)
		}
	}
	code, out, errs = cli(t, "", "calibrate", "--db", db, "--keep", "DM-007", "--json")
	var kept calibrate.Outcome
	if err := json.Unmarshal([]byte(out), &kept); code != 0 || err != nil || !slices.Contains(kept.Report.Used, "DM-007") {
		t.Errorf("--keep DM-007: exit %d, %v, %s; used %v", code, err, errs, kept.Report.Used)
	}
	if code, _, errs := cli(t, "", "calibrate", "--db", db, "--exclude", "NO-SUCH"); code != exitUsage || !strings.Contains(errs, "NO-SUCH") {
		t.Errorf("--exclude of a lot not in the register: exit %d, %s", code, errs)
	}
	book := filepath.Join(t.TempDir(), "cal.xlsx")
	if code, _, errs := cli(t, "", "calibrate", "--db", db, "--xlsx", book); code != 0 {
		t.Fatalf("--xlsx: exit %d: %s", code, errs)
	}
	f, err := excelize.OpenFile(book)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if got := f.GetSheetList(); len(got) != 2 || got[0] != "Calibration" || got[1] != "Lots" {
		t.Errorf("sheets %v", got)
	}
	if v, _ := f.GetCellValue("Calibration", "A1"); !strings.Contains(v, "Calibration") {
		t.Errorf("A1 = %q", v)
	}
	if rows, _ := f.GetRows("Lots"); len(rows) < 100 {
		t.Errorf("%d rows of lots", len(rows))
	}
	if code, _, errs := cli(t, "", "calibrate", "--db", db, "--xlsx", book); code == 0 || !strings.Contains(errs, "exists") {
		t.Errorf("an existing workbook was overwritten: exit %d, %s", code, errs)
	}
	if code, _, _ := cli(t, "", "demo", "--seed-register", db); code == 0 {
		t.Error("--seed-register wrote over an existing register")
	}
}

// A register with too few assayed lots gets the number needed, not a fit; a register without a
// calibration says so to --calibrated; a missing register is not created.
func TestCalibrateTooFewLots(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	for _, args := range [][]string{
		{"lot", "add", "../../data/demo/lot-KR-2611.csv", "--lot", "KR-2611", "--db", db, "--received", "2026-11-28", "--samples", "200"},
		{"lot", "assay", "KR-2611", "../../testdata/assay-KR-2611.csv", "--lab", "Invented lab", "--date", "2026-12-01", "--db", db},
		{"lot", "weigh", "KR-2611", "--mass", "212 kg", "--date", "2026-12-01", "--db", db},
	} {
		if code, _, errs := cli(t, "", args...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
	}
	code, _, errs := cli(t, "", "calibrate", "--db", db)
	if code != exitError || !strings.Contains(errs, "at least 3 assayed lots, have 1") {
		t.Errorf("exit %d: %s", code, errs)
	}
	code, _, errs = cli(t, "", "demo", "--calibrated", "--db", db, "--samples", "100")
	if code != exitError || !strings.Contains(errs, "no such calibration") || !strings.Contains(errs, "calibrate --db") {
		t.Errorf("--calibrated without a calibration: exit %d, %s", code, errs)
	}
	missing := filepath.Join(dir, "none.db")
	if code, _, _ := cli(t, "", "calibrate", "--db", missing); code == 0 {
		t.Error("calibrate on a missing register succeeded")
	}
	if _, err := os.Stat(missing); err == nil {
		t.Error("calibrate created a register")
	}
}

// --calibrated scales the estimate by the register's calibration and says so (report, JSON,
// first warning); the same seed gives the same bytes; version 1 is taken when asked; without
// the flag nothing is scaled; lot add records which calibration it used.
func TestEstimateCalibrated(t *testing.T) {
	db := seeded(t)
	if code, _, errs := cli(t, "", "calibrate", "--db", db); code != 0 {
		t.Fatalf("calibrate: %s", errs)
	}
	plain := demoJSON(t)
	_, a, _ := cli(t, "", "demo", "--json", "--samples", "300", "--no-lines", "--calibrated", "--db", db)
	_, b, _ := cli(t, "", "demo", "--json", "--samples", "300", "--no-lines", "--calibrated=1", "--db", db)
	if a != b {
		t.Error("the latest calibration (1) and --calibrated=1 differ, or the same seed gave different output")
	}
	var cal map[string]any
	if err := json.Unmarshal([]byte(a), &cal); err != nil {
		t.Fatal(err)
	}
	use, _ := cal["calibration"].(map[string]any)
	if use == nil || use["version"] != 1.0 {
		t.Fatalf("calibration in the report: %v", cal["calibration"])
	}
	if w := cal["warnings"].([]any)[0].(string); !strings.HasPrefix(w, "calibrated:") {
		t.Errorf("first warning %q", w)
	}
	plan := filepath.Join(t.TempDir(), "cal.plan")
	if err := os.WriteFile(plan, []byte("# the bench's calibrated plan (invented)\ncalibrated = 1\ndb = "+db+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, c, errs := cli(t, "", "demo", "--json", "--samples", "300", "--no-lines", "--plan", plan); c != a {
		t.Errorf("a plan's calibrated and db keys do not give what the flags give: %s", errs)
	}
	if _, ok := plain["calibration"]; ok {
		t.Error("an uncalibrated report names a calibration")
	}
	co := func(r map[string]any) float64 {
		return r["elements"].(map[string]any)["Co"].(map[string]any)["kg"].(map[string]any)["p50"].(float64)
	}
	// The invented bench holds 0.85 of the model's cobalt: the calibrated P50 is lower.
	if !(co(cal) < 0.95*co(plain)) {
		t.Errorf("Co P50 %.3g kg calibrated, %.3g kg not", co(cal), co(plain))
	}
	bm := func(r map[string]any) any { return r["black_mass_kg"] }
	if bm(cal).(map[string]any)["p50"] != bm(plain).(map[string]any)["p50"] {
		t.Error("the calibration changed the black mass")
	}
	code, out, errs := cli(t, "", "lot", "add", "../../data/demo/lot-KR-2611.csv", "--lot", "KR-2611", "--db", db, "--calibrated",
		"--samples", "200", "--received", "2026-11-28")
	if code != 0 || !strings.Contains(out, "calibrated:") {
		t.Errorf("lot add --calibrated: exit %d, %s\n%s", code, errs, out)
	}
}

func demoJSON(t *testing.T) map[string]any {
	t.Helper()
	_, out, _ := cli(t, "", "demo", "--json", "--samples", "300", "--no-lines")
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	return r
}

// BenchmarkCalibratedEstimate times the demo lot's whole estimate (Monte Carlo, leach plan,
// report) at the default 4,000 samples with and without the demo register's calibration,
// alternately, each on a collected heap, and reports their ratio (x-uncalibrated; the goal is
// at most 1.2); and the same without the leach plan, where the Monte Carlo's share is larger.
func BenchmarkCalibratedEstimate(b *testing.B) {
	db := seeded(b)
	if code := Main([]string{"calibrate", "--db", db}, nil, io.Discard, io.Discard); code != 0 {
		b.Fatal("calibrate failed")
	}
	reg, err := register.Open(db)
	if err != nil {
		b.Fatal(err)
	}
	c, err := reg.LatestCalibration(context.Background())
	_ = reg.Close()
	if err != nil {
		b.Fatal(err)
	}
	demo, err := os.ReadFile("../../data/demo/lot-KR-2611.csv")
	if err != nil {
		b.Fatal(err)
	}
	tb, err := run.DefaultTables()
	if err != nil {
		b.Fatal(err)
	}
	once := func(cal *calibrate.Calibration, withLeach bool) time.Duration {
		runtime.GC()
		var lo *leach.Options
		if withLeach {
			d := leach.DefaultOptions()
			lo = &d
		}
		t0 := time.Now()
		if _, err := run.Estimate(tb, run.Options{Seed: 1, Samples: 4000, Leach: lo, UnknownAsPrior: true, Calibration: cal},
			run.Manifest{Name: "demo.csv", R: strings.NewReader(string(demo))}); err != nil {
			b.Fatal(err)
		}
		return time.Since(t0)
	}
	var plain, cal, plainMC, calMC time.Duration
	for b.Loop() {
		plain += once(nil, true)
		cal += once(c, true)
		plainMC += once(nil, false)
		calMC += once(c, false)
	}
	b.ReportMetric(float64(plain.Microseconds())/float64(b.N), "µs-uncalibrated")
	b.ReportMetric(float64(cal.Microseconds())/float64(b.N), "µs-calibrated")
	b.ReportMetric(float64(cal)/float64(plain), "x-uncalibrated")
	b.ReportMetric(float64(calMC)/float64(plainMC), "x-uncalibrated-no-leach")
}
