package main

import (
	"bufio"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"testing"
	"time"

	"blackmass/feed/manifest/manifesttest"
)

// BenchmarkWholeCommand1M measures what a bench runs, `estimate FILE --json --no-lines` on a
// manifest of 1,000,000 distinct lines at the default 4,000 samples (reading, the Monte Carlo,
// the leach plan, the order sheet and the JSON written to a file), and in the same loop the
// floor: encoding/csv reading the same file and parsing its capacity column. The two alternate,
// each on a collected heap, so both see the same machine. It reports each per line and their
// ratio (x-floor; the goal is at most 2).
func BenchmarkWholeCommand1M(b *testing.B) {
	const n = 1_000_000
	dir := b.TempDir()
	path := filepath.Join(dir, "1m.csv")
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	if err := manifesttest.Write(f, n); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(dir, "out.json")
	var cmdNs, floorNs int64
	b.ReportAllocs()
	for b.Loop() {
		runtime.GC()
		t0 := time.Now()
		floor(b, path)
		floorNs += time.Since(t0).Nanoseconds()
		runtime.GC()
		t1 := time.Now()
		w, err := os.Create(out)
		if err != nil {
			b.Fatal(err)
		}
		if code := Main([]string{"estimate", path, "--json", "--no-lines"}, nil, w, io.Discard); code != 0 {
			b.Fatalf("exit %d", code)
		}
		if err := w.Close(); err != nil {
			b.Fatal(err)
		}
		cmdNs += time.Since(t1).Nanoseconds()
	}
	b.ReportMetric(float64(cmdNs)/float64(b.N)/n, "ns/line")
	b.ReportMetric(float64(floorNs)/float64(b.N)/n, "floor-ns/line")
	b.ReportMetric(float64(cmdNs)/float64(floorNs), "x-floor")
}

// floor reads the manifest with encoding/csv, parsing the capacity column.
func floor(b *testing.B, path string) {
	f, err := os.Open(path)
	if err != nil {
		b.Fatal(err)
	}
	defer f.Close()
	if _, _, err := manifesttest.CSVFloor(bufio.NewReaderSize(f, 1<<16)); err != nil {
		b.Fatal(err)
	}
}
