package register

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"blackmass/feed/dist"
	"blackmass/feed/lot"
	"blackmass/feed/report"
)

// sampleReport is a small report of n lines, enough to exercise the register.
func sampleReport(n int, coKg float64) *report.Report {
	r := &report.Report{Lot: lot.LotSummary{Lines: n, Items: 10 * n, NameplateKWh: 1.5 * float64(n)},
		BlackMassKg: dist.Stat{P10: 90, P50: 100, P90: 110, Mean: 100},
		Elements: map[string]dist.Amount{
			"Co": {Kg: dist.Stat{P10: coKg * 0.9, P50: coKg, P90: coKg * 1.1, Mean: coKg}, WtPct: dist.Stat{P50: coKg}},
			"Ni": {Kg: dist.Stat{P10: 12, P50: 13, P90: 14, Mean: 13}, WtPct: dist.Stat{P50: 13}},
		},
		Groups: []lot.GroupResult{{Chemistry: "NMC622", Format: "pack", Lines: n, Items: 10 * n, NameplateKWh: 1.5 * float64(n), BlackMassKg: dist.Stat{P50: 100}}},
	}
	for i := range n {
		r.Lines = append(r.Lines, lot.LineResult{Line: i + 2, ID: fmt.Sprintf("L%d", i), ChemistryLabel: "NMC622", Chemistry: "NMC622", Format: "pack", Count: 10, EnergyWhPerItem: 150})
	}
	return r
}

func sampleLot(id, supplier, received string, n int) Lot {
	manifest := []byte("chemistry,format,capacity,count\nNMC622,pack,150 Wh,10\n")
	sum := sha256.Sum256(manifest)
	return Lot{ID: id, Supplier: supplier, Received: received, ToolVersion: "test", ManifestName: "m.csv",
		ManifestSHA256: fmt.Sprintf("%x", sum), Manifest: manifest, Settings: map[string]any{"seed": 1}, Report: sampleReport(n, 10)}
}

func openTemp(t testing.TB) (*Register, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "reg", "register.db")
	r, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { _ = r.Close() })
	return r, path
}

// A new register is created at the latest schema; a register at version 1 with a lot in it is
// upgraded to the latest with the lot intact and the new columns in place.
func TestMigrations(t *testing.T) {
	names, _ := migrationFiles()
	r, _ := openTemp(t)
	if v, _ := r.SchemaVersion(); v != len(names) {
		t.Fatalf("new register at version %d, want %d", v, len(names))
	}
	path := filepath.Join(t.TempDir(), "v1.db")
	db, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	old := &Register{db: db, path: path, now: time.Now}
	if err := old.migrate(context.Background(), 1); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec(`INSERT INTO lots (lot_id, version, supplier, received, added_at, tool_version, manifest_name, manifest_sha256, manifest,
		settings_json, report_json, items, nameplate_kwh, black_mass_kg) VALUES ('OLD-1', 1, 'Cinder Row', '2026-10-02', '2026-10-02T10:00:00Z', 'v1', 'm.csv', 'ab', x'00', '{}', '{}', 5, 1.5, 40)`); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec(`INSERT INTO weighings (lot_id, weighed_on, kg, added_at) VALUES ('OLD-1', '2026-10-03', 38.5, '2026-10-03T10:00:00Z')`); err != nil {
		t.Fatal(err)
	}
	_ = db.Close()
	up, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer up.Close()
	if v, _ := up.SchemaVersion(); v != len(names) {
		t.Errorf("upgraded to %d, want %d", v, len(names))
	}
	lots, err := up.List(context.Background(), Filter{})
	if err != nil || len(lots) != 1 || lots[0].ID != "OLD-1" || lots[0].WeighedKg != 38.5 || lots[0].Payable != nil {
		t.Fatalf("after upgrade: %+v %v", lots, err)
	}
}

// add → show → export: what comes back is the report that went in.
func TestRoundTrip(t *testing.T) {
	r, _ := openTemp(t)
	ctx := context.Background()
	l := sampleLot("KR-9001", "Cinder Row", "2026-11-03", 3)
	if _, err := r.Add(ctx, l, false); err != nil {
		t.Fatal(err)
	}
	d, err := r.Show(ctx, "KR-9001")
	if err != nil {
		t.Fatal(err)
	}
	head := *l.Report // kept without its lines, which lot_lines holds
	head.Lines = nil
	want, _ := json.Marshal(&head)
	if string(d.Report) != string(want) {
		t.Errorf("report changed on the way through the register")
	}
	if d.Lines != 3 || d.MetalsKg["Co"] != 10 || d.BlackMassKg != 100 || d.Supplier != "Cinder Row" || d.ManifestSHA256 != l.ManifestSHA256 {
		t.Errorf("show: %+v", d.Summary)
	}
	lots, _ := r.List(ctx, Filter{Chemistry: "nmc6"})
	if len(lots) != 1 || lots[0].MetalsKg["Ni"] != 13 {
		t.Errorf("list by chemistry: %+v", lots)
	}
	// Added twice: refused without replace; with replace, a new version and the old one kept.
	if _, err := r.Add(ctx, l, false); !errors.Is(err, ErrExists) {
		t.Errorf("second add: %v", err)
	}
	l.Report = sampleReport(4, 11)
	if v, err := r.Add(ctx, l, true); err != nil || v != 2 {
		t.Fatalf("replace: %v %v", v, err)
	}
	d, _ = r.Show(ctx, "KR-9001")
	if len(d.Versions) != 2 || d.Version != 2 || d.MetalsKg["Co"] != 11 {
		t.Errorf("after replace: versions %v current %d Co %v", d.Versions, d.Version, d.MetalsKg["Co"])
	}
	// Remove leaves an audit row.
	if err := r.Remove(ctx, "KR-9001", "test"); err != nil {
		t.Fatal(err)
	}
	if _, err := r.Show(ctx, "KR-9001"); !errors.Is(err, ErrNoLot) {
		t.Errorf("removed lot still shown: %v", err)
	}
	var n int
	_ = r.db.QueryRow("SELECT count(*) FROM audit WHERE lot_id = 'KR-9001' AND action = 'remove'").Scan(&n)
	if n != 1 {
		t.Errorf("audit rows for the removal: %d", n)
	}
	for _, bad := range []Lot{{ID: "", Received: "2026-11-01", Report: l.Report}, {ID: "X", Received: "11/01/2026", Report: l.Report}, {ID: "a\x1bb", Received: "2026-11-01", Report: l.Report}} {
		if _, err := r.Add(ctx, bad, false); err == nil {
			t.Errorf("bad lot %q %q accepted", bad.ID, bad.Received)
		}
	}
	if err := r.Weigh(ctx, "NOPE", "2026-11-01", 1, ""); !errors.Is(err, ErrNoLot) {
		t.Errorf("weigh of an unknown lot: %v", err)
	}
}

// A file that is not a blackmass register is refused and left byte for byte as it was.
func TestForeignFilesRefused(t *testing.T) {
	dir := t.TempDir()
	random := filepath.Join(dir, "random.db")
	b := make([]byte, 8192)
	_, _ = rand.Read(b)
	if err := os.WriteFile(random, b, 0o644); err != nil {
		t.Fatal(err)
	}
	other := filepath.Join(dir, "other.db")
	db, err := sql.Open("sqlite", "file:"+other)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE TABLE invoices (id INTEGER PRIMARY KEY, total REAL); INSERT INTO invoices VALUES (1, 9.5)"); err != nil {
		t.Fatal(err)
	}
	_ = db.Close()
	appID := filepath.Join(dir, "app.db")
	db, _ = sql.Open("sqlite", "file:"+appID)
	if _, err := db.Exec("PRAGMA application_id = 1234; CREATE TABLE t (x)"); err != nil {
		t.Fatal(err)
	}
	_ = db.Close()
	// Our own register, damaged in the middle.
	damaged := filepath.Join(dir, "damaged.db")
	r, err := Open(damaged)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 50 {
		if _, err := r.Add(context.Background(), sampleLot(fmt.Sprintf("D-%d", i), "s", "2026-11-01", 20), false); err != nil {
			t.Fatal(err)
		}
	}
	_ = r.Close()
	raw, _ := os.ReadFile(damaged)
	for i := 4096 + 100; i < 4096*6 && i < len(raw); i++ {
		raw[i] ^= 0x5a
	}
	_ = os.WriteFile(damaged, raw, 0o644)
	for _, path := range []string{random, other, appID, damaged} {
		t.Run(filepath.Base(path), func(t *testing.T) {
			before, _ := os.ReadFile(path)
			r, err := Open(path)
			if err == nil {
				_ = r.Close()
				t.Fatal("opened")
			}
			after, _ := os.ReadFile(path)
			if string(before) != string(after) {
				t.Error("the file was modified")
			}
			t.Log(err)
		})
	}
}

// helperEnv makes the test binary a register client: add COUNT lots named PREFIX-i to PATH.
const helperEnv = "BLACKMASS_REGISTER_HELPER"

func TestMain(m *testing.M) {
	if path := os.Getenv(readerEnv); path != "" {
		runReader(path)
		os.Exit(0)
	}
	if spec := os.Getenv(helperEnv); spec != "" {
		parts := strings.Split(spec, "|")
		count, _ := strconv.Atoi(parts[2])
		r, err := Open(parts[0])
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(3)
		}
		for i := range count {
			if _, err := r.Add(context.Background(), sampleLot(fmt.Sprintf("%s-%d", parts[1], i), parts[1], "2026-11-05", 200), false); err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(4)
			}
		}
		_ = r.Close()
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// readerEnv makes the test binary a reader of the register at its value: it lists the lots,
// tries to add one, and prints what happened.
const readerEnv = "BLACKMASS_REGISTER_READER"

func runReader(path string) {
	r, err := Open(path)
	if err != nil {
		fmt.Println("open:", err)
		os.Exit(3)
	}
	defer r.Close()
	lots, err := r.List(context.Background(), Filter{})
	fmt.Println("lots", len(lots), err)
	_, err = r.Add(context.Background(), sampleLot("RO-1", "s", "2026-11-04", 1), false)
	fmt.Println("add:", err, errors.Is(err, ErrReadOnly))
}

func helper(path, prefix string, count int) *exec.Cmd {
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), helperEnv+"="+path+"|"+prefix+"|"+strconv.Itoa(count))
	return cmd
}

// Two processes adding lots at once both succeed (WAL and a busy timeout).
func TestConcurrentWriters(t *testing.T) {
	_, path := openTemp(t)
	var wg sync.WaitGroup
	errs := make([]error, 2)
	out := make([][]byte, 2)
	for k, prefix := range []string{"A", "B"} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			out[k], errs[k] = helper(path, prefix, 25).CombinedOutput()
		}()
	}
	wg.Wait()
	for k := range errs {
		if errs[k] != nil {
			t.Errorf("writer %d: %v %s", k, errs[k], out[k])
		}
	}
	r, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	lots, _ := r.List(context.Background(), Filter{})
	if len(lots) != 50 {
		t.Errorf("%d lots, want 50", len(lots))
	}
}

// A writer killed mid-write (kill -9) leaves the register consistent: it opens, passes its
// integrity check, and every lot in it is whole (all its lines and metals).
func TestCrashConsistency(t *testing.T) {
	_, path := openTemp(t)
	for round := range 3 {
		cmd := helper(path, "K"+strconv.Itoa(round), 100000)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(150+100*round) * time.Millisecond)
		_ = cmd.Process.Signal(syscall.SIGKILL)
		_ = cmd.Wait()
	}
	r, err := Open(path)
	if err != nil {
		t.Fatalf("after kill -9: %v", err)
	}
	defer r.Close()
	lots, err := r.List(context.Background(), Filter{})
	if err != nil {
		t.Fatal(err)
	}
	if len(lots) == 0 {
		t.Fatal("no lot was written before the kills; the test proves nothing")
	}
	for _, l := range lots {
		var lines, metals int
		_ = r.db.QueryRow("SELECT count(*) FROM lot_lines WHERE lot_id = ? AND version = ?", l.ID, l.Version).Scan(&lines)
		_ = r.db.QueryRow("SELECT count(*) FROM lot_metals WHERE lot_id = ? AND version = ?", l.ID, l.Version).Scan(&metals)
		if lines != 200 || metals != 2 {
			t.Fatalf("lot %s is partial: %d lines, %d metals", l.ID, lines, metals)
		}
	}
	t.Logf("%d whole lots after three kills", len(lots))
}

// Totals: the month's intake by chemistry, the metal in the yard, estimate against assay.
func TestMonthTotals(t *testing.T) {
	r, _ := openTemp(t)
	ctx := context.Background()
	for i, d := range []string{"2026-11-02", "2026-11-20", "2026-12-01"} {
		if _, err := r.Add(ctx, sampleLot("T-"+strconv.Itoa(i), "Cinder Row", d, 2), false); err != nil {
			t.Fatal(err)
		}
	}
	tot, err := r.MonthTotals(ctx, "2026-11")
	if err != nil {
		t.Fatal(err)
	}
	if len(tot.ByChemistry) != 1 || tot.ByChemistry[0].Lots != 2 || tot.InYardKg["Co"] != 30 {
		t.Errorf("totals %+v", tot)
	}
	if _, err := r.MonthTotals(ctx, "November"); err == nil {
		t.Error("bad month accepted")
	}
}

// BenchmarkRegister adds 10,000 lots, then asks for a month's totals; it reports the time per
// lot added and the register's size.
func BenchmarkRegister(b *testing.B) {
	const lots = 10_000
	for b.Loop() {
		b.StopTimer()
		path := filepath.Join(b.TempDir(), "bench.db")
		r, err := Open(path)
		if err != nil {
			b.Fatal(err)
		}
		l := sampleLot("", "Cinder Row", "", 20)
		b.StartTimer()
		start := time.Now()
		for i := range lots {
			l.ID, l.Received = fmt.Sprintf("B-%05d", i), fmt.Sprintf("2026-%02d-%02d", 1+i%12, 1+i%28)
			if _, err := r.Add(context.Background(), l, false); err != nil {
				b.Fatal(err)
			}
		}
		perLot := time.Since(start) / lots
		q := time.Now()
		if _, err := r.MonthTotals(context.Background(), "2026-11"); err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(perLot.Microseconds()), "µs/lot")
		b.ReportMetric(float64(time.Since(q).Milliseconds()), "ms/month-totals")
		_ = r.Close()
		st, _ := os.Stat(path)
		b.ReportMetric(float64(st.Size())/(1<<20), "MB")
	}
}
