package intake_test

import (
	"bytes"
	"fmt"
	"os"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/intake"
	"blackmass/feed/manifest"
)

// A sheet too large to be worked in memory is worked from a temporary file in the directory the
// caller gives (which it removes, also when interrupted), not in the system's, and the file is
// gone once the reading ends.
func TestLargeSheetTempFilesInGivenDir(t *testing.T) {
	t.Parallel()
	f := excelize.NewFile()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		t.Fatal(err)
	}
	_ = sw.SetRow("A1", []any{"id", "chemistry", "format", "capacity", "count", "notes"})
	pad := strings.Repeat("bin B, sorted by hand on the morning shift; ", 34)
	for i := 2; i < 13_000; i++ {
		cell, _ := excelize.CoordinatesToCellName(1, i)
		if err := sw.SetRow(cell, []any{fmt.Sprintf("T%d", i), "LFP", "cylindrical", "6 Ah", 1, pad}); err != nil {
			t.Fatal(err)
		}
	}
	if err := sw.Flush(); err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if _, err := f.WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	seen := -1
	opt := intake.Options{Catalogue: cathodetest.Catalogue(t), TempDir: dir}
	_, err = intake.ReadXLSX(bytes.NewReader(buf.Bytes()), "big.xlsx", opt, func(manifest.Line) error {
		if seen < 0 {
			entries, _ := os.ReadDir(dir)
			seen = len(entries)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if seen < 1 {
		t.Errorf("no temporary file in the given directory while reading a %d-byte workbook", buf.Len())
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("%d temporary files left after the reading", len(entries))
	}
}
