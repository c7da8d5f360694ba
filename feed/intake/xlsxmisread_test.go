package intake_test

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"runtime"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/intake"
	"blackmass/feed/manifest"
)

// workbook builds a small manifest workbook on Sheet1 (header and three LCO lines), edited.
func workbook(t testing.TB, edit func(f *excelize.File)) []byte {
	t.Helper()
	f := excelize.NewFile()
	_ = f.SetSheetRow("Sheet1", "A1", &[]any{"chemistry", "format", "capacity", "count"})
	for r := 2; r <= 4; r++ {
		_ = f.SetSheetRow("Sheet1", fmt.Sprintf("A%d", r), &[]any{"LCO", "pouch", "10 Wh", 1})
	}
	edit(f)
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func readXLSX(t testing.TB, b []byte) ([]manifest.Line, intake.Info, error) {
	t.Helper()
	var lines []manifest.Line
	info, err := intake.ReadXLSX(bytes.NewReader(b), "m.xlsx", intake.Options{Catalogue: cathodetest.Catalogue(t)}, func(l manifest.Line) error {
		lines = append(lines, l)
		return nil
	})
	return lines, info, err
}

// A count formatted as a date shows a date and stores its serial (46085 items): refused, as
// are formulas without a saved result in any column.
func TestXLSXDatesAndFormulas(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name string
		edit func(f *excelize.File)
		want string
	}{
		{"built-in date format on a count", func(f *excelize.File) {
			st, _ := f.NewStyle(&excelize.Style{NumFmt: 14})
			_ = f.SetCellValue("Sheet1", "D3", 46085)
			_ = f.SetCellStyle("Sheet1", "D3", "D3", st)
		}, `m.xlsx[Sheet1]:3: count (cell D3) "46085": the cell is formatted as a date`},
		{"custom date format on a capacity", func(f *excelize.File) {
			code := `dd/mm/yyyy`
			st, _ := f.NewStyle(&excelize.Style{CustomNumFmt: &code})
			_ = f.SetCellValue("Sheet1", "C2", 46085)
			_ = f.SetCellStyle("Sheet1", "C2", "C2", st)
		}, `capacity (cell C2) "46085": the cell is formatted as a date`},
		{"formula without a result in the count", func(f *excelize.File) {
			_ = f.SetCellValue("Sheet1", "D4", nil)
			_ = f.SetCellFormula("Sheet1", "D4", `2*3`)
		}, `m.xlsx[Sheet1]:4: count (cell D4) "=2*3": a formula with no saved result`},
	} {
		_, _, err := readXLSX(t, workbook(t, c.edit))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.name, err, c.want)
		}
	}
	// A number format that is no date, on a count, reads.
	lines, _, err := readXLSX(t, workbook(t, func(f *excelize.File) {
		code := `0 "pcs"`
		st, _ := f.NewStyle(&excelize.Style{CustomNumFmt: &code})
		_ = f.SetCellStyle("Sheet1", "D2", "D4", st)
	}))
	if err != nil || len(lines) != 3 {
		t.Fatalf("%v, %v", lines, err)
	}
}

// A hidden Lines sheet is not read over the visible one; Info says which sheet was.
func TestXLSXHiddenLinesSheet(t *testing.T) {
	t.Parallel()
	b := workbook(t, func(f *excelize.File) {
		_, _ = f.NewSheet(manifest.LinesSheetName)
		_ = f.SetSheetRow(manifest.LinesSheetName, "A1", &[]any{"chemistry", "format", "capacity", "count"})
		_ = f.SetSheetRow(manifest.LinesSheetName, "A2", &[]any{"LFP", "prismatic", "100 Wh", 9})
		_ = f.SetSheetVisible(manifest.LinesSheetName, false)
	})
	lines, info, err := readXLSX(t, b)
	if err != nil || info.Sheet != "Sheet1" || len(lines) != 3 || lines[0].Count != 1 {
		t.Fatalf("read sheet %q: %+v, %v", info.Sheet, lines, err)
	}
}

// storedXLSX is a workbook whose sheet part is sheetXML, stored uncompressed.
func storedXLSX(t testing.TB, sheetXML func(w io.Writer)) []byte {
	t.Helper()
	base := workbook(t, func(*excelize.File) {})
	zr, err := zip.NewReader(bytes.NewReader(base), int64(len(base)))
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	zw := zip.NewWriter(&out)
	for _, zf := range zr.File {
		method := zip.Deflate
		if zf.Name == "xl/worksheets/sheet1.xml" {
			method = zip.Store
		}
		w, _ := zw.CreateHeader(&zip.FileHeader{Name: zf.Name, Method: method})
		if zf.Name == "xl/worksheets/sheet1.xml" {
			sheetXML(w)
			continue
		}
		rc, _ := zf.Open()
		_, _ = io.Copy(w, rc)
		_ = rc.Close()
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return out.Bytes()
}

const sheetHead = `<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>` +
	`<row r="1"><c r="A1" t="inlineStr"><is><t>chemistry</t></is></c><c r="B1" t="inlineStr"><is><t>format</t></is></c>` +
	`<c r="C1" t="inlineStr"><is><t>capacity</t></is></c><c r="D1" t="inlineStr"><is><t>count</t></is></c></row>`

// manifestRows writes n LCO rows from row 2.
func manifestRows(w io.Writer, n int) {
	for r := 2; r < n+2; r++ {
		fmt.Fprintf(w, `<row r="%d"><c r="A%d" t="inlineStr"><is><t>LCO</t></is></c><c r="B%d" t="inlineStr"><is><t>pouch</t></is></c>`+
			`<c r="C%d" t="inlineStr"><is><t>10 Wh</t></is></c><c r="D%d"><v>1</v></c></row>`, r, r, r, r, r)
	}
}

// Merged cells are refused in a workbook of any size (the check streams the sheet).
func TestXLSXMergedInLargeWorkbook(t *testing.T) {
	t.Parallel()
	b := storedXLSX(t, func(w io.Writer) {
		io.WriteString(w, sheetHead)
		manifestRows(w, 30000)
		io.WriteString(w, `</sheetData><mergeCells count="1"><mergeCell ref="A5:A6"/></mergeCells></worksheet>`)
	})
	if len(b) < 5<<20 {
		t.Fatalf("workbook of %d bytes, want over 5 MiB", len(b))
	}
	_, _, err := readXLSX(t, b)
	if err == nil || !strings.Contains(err.Error(), "m.xlsx[Sheet1]:5: merged cells A5:A6") {
		t.Fatalf("error %v", err)
	}
}

// Workbooks within the inflation limit that would take memory out of proportion: 150 MB of
// blanks in the sheet, one 100 MB shared string, a million empty rows. Each is refused, and the
// reading allocates less than 200 MB in all (a hard limit, so measured here rather than benchmarked).
func TestXLSXInflatedWithinLimit(t *testing.T) {
	if testing.Short() {
		t.Skip("builds workbooks inflating to 150 MB")
	}
	cases := map[string]map[string]func(io.Writer) error{
		"150 MB of blanks": {"xl/worksheets/sheet1.xml": func(w io.Writer) error {
			io.WriteString(w, sheetHead)
			if err := repeat(" ", 150<<20)(w); err != nil {
				return err
			}
			_, err := io.WriteString(w, `</sheetData></worksheet>`)
			return err
		}},
		"one 100 MB shared string": {"xl/sharedStrings.xml": func(w io.Writer) error {
			io.WriteString(w, `<?xml version="1.0" encoding="UTF-8"?><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="1" uniqueCount="1"><si><t>`)
			if err := repeat("LCO", 100<<20)(w); err != nil {
				return err
			}
			_, err := io.WriteString(w, `</t></si></sst>`)
			return err
		}},
		"a million empty rows": {"xl/worksheets/sheet1.xml": func(w io.Writer) error {
			io.WriteString(w, sheetHead)
			manifestRows(w, 1)
			for r := 3; r < 1_000_003; r++ {
				fmt.Fprintf(w, `<row r="%d"/>`, r)
			}
			_, err := io.WriteString(w, `</sheetData></worksheet>`)
			return err
		}},
	}
	for name, parts := range cases {
		t.Run(name, func(t *testing.T) {
			b := zipWith(t, parts)
			var before, after runtime.MemStats
			runtime.GC()
			runtime.ReadMemStats(&before)
			_, _, err := readXLSX(t, b)
			runtime.ReadMemStats(&after)
			// All bytes allocated while reading: an upper bound on the peak, whatever the
			// memory the test's own building left to reuse.
			grown := int64(after.TotalAlloc - before.TotalAlloc)
			t.Logf("%s (%d KiB): allocated %d MB, %v", name, len(b)>>10, grown>>20, err)
			if err == nil {
				t.Fatal("read")
			}
			if grown > 200<<20 {
				t.Errorf("allocated %d MB", grown>>20)
			}
		})
	}
}

// The cost of reading a 30,000-line workbook, with the parts' scan and the cells' check (compare
// B/op and ns/op with the lines: both grow in proportion).
func BenchmarkReadXLSX(b *testing.B) {
	for _, n := range []int{3000, 30000} {
		wb := storedXLSX(b, func(w io.Writer) {
			io.WriteString(w, sheetHead)
			manifestRows(w, n)
			io.WriteString(w, `</sheetData></worksheet>`)
		})
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, _, err := readXLSX(b, wb); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
