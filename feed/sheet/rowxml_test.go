package sheet

import (
	"archive/zip"
	"bytes"
	"io"
	"math"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// libraryRow is one row for the comparison: its height and its cells (nil for none).
type libraryRow struct {
	heightPt float64
	cells    []any
	styles   []int
}

// librarySheetData is what the xlsx library's stream writer puts between <sheetData> and
// </sheetData> for rows (numbered from 1).
func librarySheetData(t testing.TB, rows []libraryRow) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range rows {
		vals := make([]any, len(r.cells))
		for j, v := range r.cells {
			if v != nil {
				vals[j] = excelize.Cell{StyleID: r.styles[j], Value: v}
			}
		}
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		if err := sw.SetRow(cell, vals, excelize.RowOpts{Height: r.heightPt}); err != nil {
			t.Fatal(err)
		}
	}
	if err := sw.Flush(); err != nil {
		t.Fatal(err)
	}
	buf, err := f.WriteToBuffer()
	if err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		t.Fatal(err)
	}
	for _, zf := range zr.File {
		if zf.Name != "xl/worksheets/sheet1.xml" {
			continue
		}
		rc, _ := zf.Open()
		b, _ := io.ReadAll(rc)
		rc.Close()
		i, j := bytes.Index(b, []byte("<sheetData>")), bytes.Index(b, []byte("</sheetData>"))
		if i < 0 || j < 0 {
			return nil // no rows: an empty <sheetData/>
		}
		return b[i+len("<sheetData>") : j]
	}
	t.Fatal("no sheet1.xml")
	return nil
}

func ownSheetData(rows []libraryRow) []byte {
	var x rowXML
	for i, r := range rows {
		x.start(i+1, r.heightPt)
		for j, v := range r.cells {
			x.cell(j+1, i+1, r.styles[j], v)
		}
		x.end()
	}
	return x.b
}

func compareRowXML(t testing.TB, rows []libraryRow) {
	t.Helper()
	want, got := librarySheetData(t, rows), ownSheetData(rows)
	if !bytes.Equal(got, want) {
		t.Fatalf("rows differ from the xlsx library's:\n got %q\nwant %q", got, want)
	}
}

// The Lines sheet's rows are the bytes the xlsx library's stream writer gives for the same cells:
// text that needs escaping, white space at either end, character-code patterns, text over a
// cell's 32,767 UTF-16 units, integers, floats of every size and beyond 15 digits, empty cells,
// columns past Z, row heights.
func TestRowXMLAsTheLibrary(t *testing.T) {
	long := strings.Repeat("é", 40000)
	astral := strings.Repeat("\U0001F50B", 20000) // two UTF-16 units each
	texts := []any{"L-0001", "", " lead", "trail\t", "a<b>&'\"c", "line\nbreak\r\n", "ctl\x01\x1f", "_x0041_", "_x005F_x0041_",
		"_xD800_ lone", "_x005F_", "x_x12_", "ünïcødé 電池", long, astral, "bad \xff utf8", strings.Repeat("w", maxCellUTF16+1)}
	nums := []any{0, 1, -7, 1 << 40, 0.0, 1.5, -2.25e-9, 1e21, 123456789012345678.0, 0.1 + 0.2, math.MaxFloat64, -math.SmallestNonzeroFloat64,
		math.NaN(), math.Inf(1), 1234.56789012345678}
	var rows []libraryRow
	for i, v := range append(texts, nums...) {
		rows = append(rows, libraryRow{heightPt: float64(i%3) * 9.75, cells: []any{v, nil, v}, styles: []int{i % 4, 0, 2}})
	}
	wide := libraryRow{heightPt: 10, cells: make([]any, 60), styles: make([]int, 60)}
	for j := range wide.cells {
		if j%7 != 3 {
			wide.cells[j], wide.styles[j] = j, j%5
		}
	}
	rows = append(rows, wide)
	compareRowXML(t, rows)
}

// FuzzRowXMLAsTheLibrary holds any text and number to the xlsx library's bytes.
func FuzzRowXMLAsTheLibrary(f *testing.F) {
	f.Add("L1", 3.25, 2, 10.0)
	f.Add(" _x0020_ <&> \n", -1e-300, 0, 0.0)
	f.Fuzz(func(t *testing.T, s string, v float64, n int, h float64) {
		if !(h >= 0 && h <= 409) { // the library refuses rows taller than 409 pt
			h = 0
		}
		compareRowXML(t, []libraryRow{{heightPt: h, cells: []any{s, v, n, nil, s}, styles: []int{1, 2, 3, 0, 0}}})
	})
}
