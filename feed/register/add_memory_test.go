package register

import (
	"context"
	"encoding/json"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
)

// BenchmarkAddLarge records one lot of 100,000 lines (the size of a 9 MB manifest) and a 9 MB
// manifest, and reports the bytes allocated per add beside the size of the report as JSON:
// the register's own copies of the report are what B/op above the line inserts shows.
func BenchmarkAddLarge(b *testing.B) {
	const lines = 100_000
	l := sampleLot("BIG", "s", "2026-11-02", lines)
	l.Manifest = make([]byte, 9<<20)
	rep, err := json.Marshal(l.Report)
	if err != nil {
		b.Fatal(err)
	}
	r, err := Open(filepath.Join(b.TempDir(), "big.db"))
	if err != nil {
		b.Fatal(err)
	}
	defer r.Close()
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		l.ID = "BIG-" + strconv.Itoa(i)
		i++
		if _, err := r.Add(context.Background(), l, false); err != nil {
			b.Fatal(err)
		}
	}
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	b.ReportMetric(float64(len(rep))/(1<<20), "report-MB")
	b.ReportMetric(float64(ms.HeapSys)/(1<<20), "heap-sys-MB")
}

// The report and settings are kept as JSON text, whole.
func TestReportStoredAsText(t *testing.T) {
	t.Parallel()
	r, _ := openTemp(t)
	l := sampleLot("KR-3", "s", "2026-11-02", 3)
	if _, err := r.Add(context.Background(), l, false); err != nil {
		t.Fatal(err)
	}
	var repType, setType string
	var valid int
	var report string
	if err := r.db.QueryRow(`SELECT typeof(report_json), typeof(settings_json), json_valid(report_json), report_json
		FROM lots WHERE lot_id = 'KR-3'`).Scan(&repType, &setType, &valid, &report); err != nil {
		t.Fatal(err)
	}
	head := *l.Report // kept without its lines, which lot_lines holds
	head.Lines = nil
	want, _ := json.Marshal(&head)
	if repType != "text" || setType != "text" || valid != 1 || report != string(want) {
		t.Errorf("report kept as %s (valid JSON %d), settings as %s; same report: %v",
			repType, valid, setType, report == string(want))
	}
}
