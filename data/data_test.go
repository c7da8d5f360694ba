package data_test

import (
	"io/fs"
	"strings"
	"testing"

	"blackmass/data"
)

// Ensure every embedded reference table parses and names a source on every row.
func TestEmbeddedTablesHaveSources(t *testing.T) {
	names, err := fs.Glob(data.FS, "*.csv")
	if err != nil || len(names) < 9 {
		t.Fatalf("tables: %v %v", names, err)
	}
	for _, n := range names {
		tb, err := data.ReadTable(data.FS, n)
		if err != nil {
			t.Errorf("%s: %v", n, err)
			continue
		}
		for _, r := range tb.Rows {
			if len(r.Str("source")) < 5 {
				t.Errorf("%s:%d: source %q says too little", n, r.Line, r.Str("source"))
			}
		}
	}
}

func TestParseTableErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"", "empty table"},
		{"a,b\n1,2\n", "no \"source\" column"},
		{"a,source\n1,\n", "t.csv:2: empty source"},
		{"a,source\n1,x\n2\n", "t.csv:3"},
		{"a,A,source\n", "duplicate column"},
		{"\ufeffa,source\n", "header but no rows"},
	} {
		_, err := data.ParseTable(strings.NewReader(c.in), "t.csv")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseTable(%q) = %v, want %q", c.in, err, c.want)
		}
	}
	tb, err := data.ParseTable(strings.NewReader("# comment\nName,lo_min_V,lo_mode_V,lo_max_V,source\nx,1,2,3,here\ny,3,2,1,there\n"), "t.csv")
	if err != nil {
		t.Fatal(err)
	}
	if lo, mode, hi, err := tb.Rows[0].Range("lo", "_V"); err != nil || lo != 1 || mode != 2 || hi != 3 {
		t.Errorf("Range = %v %v %v %v", lo, mode, hi, err)
	}
	if _, _, _, err := tb.Rows[1].Range("lo", "_V"); err == nil || !strings.Contains(err.Error(), "t.csv:4") {
		t.Errorf("unordered range: %v", err)
	}
}

// The share of rows whose source is published (not "from memory", "common practice" or an
// assumption) is reported per table, so that progress in grounding the model shows.
func TestPublishedSourceShare(t *testing.T) {
	names, _ := fs.Glob(data.FS, "*.csv")
	total, published := 0, 0
	for _, n := range names {
		tb, err := data.ReadTable(data.FS, n)
		if err != nil {
			t.Fatal(err)
		}
		p := 0
		for _, r := range tb.Rows {
			src := strings.ToLower(r.Str("source"))
			if !strings.Contains(src, "from memory") && !strings.Contains(src, "common practice") && !strings.Contains(src, "assumption") && !strings.Contains(src, "invented") {
				p++
			}
		}
		t.Logf("%-22s %3d of %3d rows cite a published source", n, p, len(tb.Rows))
		total += len(tb.Rows)
		published += p
	}
	t.Logf("all tables: %d of %d rows (%.0f %%) cite a published source", published, total, 100*float64(published)/float64(total))
	if published == 0 {
		t.Error("no row cites a published source")
	}
}
