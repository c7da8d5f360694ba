package sheet_test

import (
	"archive/zip"
	"bytes"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/run"
	"blackmass/feed/sheet"
)

// landscapeSheets are the sheets printed in landscape; the others are portrait.
var landscapeSheets = map[string]bool{sheet.ValueSheet: true, sheet.AssaySheet: true}

// scaledSheets print fitted to the page width below 100 %, at no less than the scale given: their
// columns are laid out that much wider than the page. The others print at 100 %.
var scaledSheets = map[string]float64{sheet.Leach: sheet.LeachScale}

// onePageSheets print on one page, whatever the lot.
var onePageSheets = map[string]bool{sheet.Leach: true}

// titledSheets hold one table that may run over pages, so they repeat its header row; the
// others hold short tables, each kept on one page.
var titledSheets = map[string]bool{sheet.Lines: true, sheet.Assumptions: true, sheet.WeighIn: true}

// Every sheet prints on the paper asked for, in its orientation, one page wide at 100 % (its
// printed columns fit between the margins) or, the Leach sheet, fitted at no less than its scale
// with no font under 8 pt as printed and on one page, with the lot and page numbers in the header, a
// repeated header row on a long table and short tables kept whole on a page; every number has
// a number format, no font is under 8 pt, and no text is cut by a filled neighbour.
func TestPrintPack(t *testing.T) {
	// With a recovery plan, so that the Recovery sheet is held to the same rules.
	fs := recover.DefaultFlowsheet()
	r := reportWith(t, 60, leach.DefaultOptions(), func(o *run.Options) { o.Recover = &fs })
	for _, paper := range []int{sheet.PaperA4, sheet.PaperLetter} {
		var buf bytes.Buffer
		if err := sheet.WriteOn(&buf, r, paper); err != nil {
			t.Fatal(err)
		}
		f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
		if err != nil {
			t.Fatal(err)
		}
		breaks := rowBreaks(t, buf.Bytes(), f)
		titles := map[string]bool{}
		areas := map[string]string{}
		for _, n := range f.GetDefinedName() {
			switch n.Name {
			case "_xlnm.Print_Titles":
				titles[n.Scope] = true
			case "_xlnm.Print_Area":
				areas[n.Scope] = n.RefersTo
			}
		}
		for _, s := range f.GetSheetList() {
			landscape := landscapeSheets[s]
			pl, _ := f.GetPageLayout(s)
			want := "portrait"
			if landscape {
				want = "landscape"
			}
			if pl.Size == nil || *pl.Size != paper || pl.Orientation == nil || *pl.Orientation != want ||
				pl.FitToWidth == nil || *pl.FitToWidth != 1 || pl.FitToHeight == nil || *pl.FitToHeight != 0 {
				t.Errorf("%s: page layout %+v, want paper %d %s one page wide", s, pl, paper, want)
			}
			if pr, _ := f.GetSheetProps(s); pr.FitToPage == nil || !*pr.FitToPage {
				t.Errorf("%s: not fitted to the page width", s)
			}
			if hf, _ := f.GetHeaderFooter(s); hf == nil || !strings.Contains(hf.OddHeader, "Page &P of &N") || !strings.Contains(hf.OddHeader, "Lot ") {
				t.Errorf("%s: header %+v lacks the lot or the page number", s, hf)
			}
			if titledSheets[s] != titles[s] {
				t.Errorf("%s: print titles %v, want %v", s, titles[s], titledSheets[s])
			}
			scale := checkWidth(t, f, s, paper, landscape, areas[s], scaledSheets[s])
			checkCells(t, f, s, scale)
			checkHeadAlign(t, f, s)
			pagePt := sheet.PrintableHeightPt(paper, landscape) / scale
			if !titledSheets[s] {
				checkTablesWhole(t, f, s, breaks[s], pagePt)
			}
			if onePageSheets[s] {
				checkOnePage(t, f, s, breaks[s], pagePt)
			}
		}
		f.Close()
	}
}

// checkWidth: the printed columns fit the page width at 100 %, or, on a sheet laid out to print
// scaled, at no less than minScale; it returns the scale the fit to the width prints at.
func checkWidth(t *testing.T, f *excelize.File, s string, paper int, landscape bool, area string, minScale float64) float64 {
	t.Helper()
	cols, _ := f.GetCols(s)
	last := len(cols)
	if area != "" {
		m := regexp.MustCompile(`:\$([A-Z]+)\$`).FindStringSubmatch(area)
		last, _ = excelize.ColumnNameToNumber(m[1])
	}
	total := 0.0
	for c := 1; c <= last; c++ {
		name, _ := excelize.ColumnNumberToName(c)
		wd, _ := f.GetColWidth(s, name)
		total += sheet.ColumnPt(wd)
	}
	avail := sheet.PrintableWidthPt(paper, landscape)
	if minScale == 0 {
		if total > avail {
			t.Errorf("%s: printed columns %.0f pt wide, the page holds %.0f pt: it would print below 100 %%", s, total, avail)
		}
		return 1
	}
	scale := math.Min(1, avail/total)
	if scale < minScale-0.005 || scale < 0.85 {
		t.Errorf("%s: printed columns %.0f pt wide, the page holds %.0f pt: it would print at %.0f %%, below %.0f %%",
			s, total, avail, 100*scale, 100*minScale)
	}
	return scale
}

// checkOnePage: the sheet's rows add up to no more than a page, without a manual break.
func checkOnePage(t *testing.T, f *excelize.File, s string, breaks map[int]bool, pagePt float64) {
	t.Helper()
	rows, _ := f.GetRows(s)
	total := 0.0
	for r := 1; r <= len(rows); r++ {
		h, _ := f.GetRowHeight(s, r)
		total += h
	}
	if total > pagePt || len(breaks) > 0 {
		t.Errorf("%s: %.0f pt of rows and %d page breaks, want one page of %.0f pt", s, total, len(breaks), pagePt)
	}
}

// checkCells: a number format on every number, no font under 8 pt as printed at the scale
// given, no text cut by a neighbour.
func checkCells(t *testing.T, f *excelize.File, s string, scale float64) {
	t.Helper()
	rows, err := f.GetRows(s, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	merged := map[string]float64{} // top-left cell -> merged width
	covered := map[string]bool{}
	mcs, _ := f.GetMergeCells(s)
	for _, mc := range mcs {
		c1, r1, _ := excelize.CellNameToCoordinates(mc.GetStartAxis())
		c2, r2, _ := excelize.CellNameToCoordinates(mc.GetEndAxis())
		wd := 0.0
		for c := c1; c <= c2; c++ {
			name, _ := excelize.ColumnNumberToName(c)
			w, _ := f.GetColWidth(s, name)
			wd += w
			for r := r1; r <= r2; r++ {
				cell, _ := excelize.CoordinatesToCellName(c, r)
				covered[cell] = true
			}
		}
		merged[mc.GetStartAxis()] = wd
	}
	styles := map[int]*excelize.Style{}
	styleOf := func(cell string) *excelize.Style {
		id, _ := f.GetCellStyle(s, cell)
		if st, ok := styles[id]; ok {
			return st
		}
		st, err := f.GetStyle(id)
		if err != nil {
			t.Fatalf("%s!%s: style %d: %v", s, cell, id, err)
		}
		styles[id] = st
		return st
	}
	for ri, row := range rows {
		for ci, v := range row {
			if v == "" {
				continue
			}
			cell, _ := excelize.CoordinatesToCellName(ci+1, ri+1)
			st := styleOf(cell)
			size := 11.0 // the workbook's default font
			if st.Font != nil && st.Font.Size > 0 {
				size = st.Font.Size
			}
			if size*scale < 8-1e-9 {
				t.Errorf("%s!%s: %.0f pt font prints at %.1f pt", s, cell, size, size*scale)
			}
			typ, _ := f.GetCellType(s, cell)
			isText := typ == excelize.CellTypeSharedString || typ == excelize.CellTypeInlineString || typ == excelize.CellTypeFormula
			if _, err := strconv.ParseFloat(v, 64); err == nil && !isText {
				if st.NumFmt == 0 && st.CustomNumFmt == nil {
					t.Errorf("%s!%s: number %s without a number format", s, cell, v)
				}
				continue
			}
			if st.Alignment != nil && st.Alignment.WrapText {
				checkWrapped(t, f, s, cell, v, size, st.Alignment.Indent, merged, covered, ci, ri)
				continue
			}
			full := ci+1 < len(row) && row[ci+1] != ""
			wd, isMerged := merged[cell]
			if !isMerged {
				if covered[cell] || !full {
					continue
				}
				name, _ := excelize.ColumnNumberToName(ci + 1)
				wd, _ = f.GetColWidth(s, name)
			}
			// 10 pt text holds about 1.1 characters per column width unit, bold included.
			if n := len([]rune(v)); float64(n) > wd*1.08 && (full || isMerged) {
				t.Errorf("%s!%s: %q (%d characters) in a column %.0f wide beside a filled cell", s, cell, v, n, wd)
			}
		}
	}
}

// checkTablesWhole: on a sheet of short tables, a header row and the rows under it down to the
// next blank row (or paragraph) print on one page, the pages falling where the row heights and the manual
// breaks put them.
func checkTablesWhole(t *testing.T, f *excelize.File, s string, breaks map[int]bool, pagePt float64) {
	t.Helper()
	rows, _ := f.GetRows(s)
	paragraph := map[int]bool{} // rows that open with a text merged across the page
	mcs, _ := f.GetMergeCells(s)
	for _, mc := range mcs {
		if c, r, _ := excelize.CellNameToCoordinates(mc.GetStartAxis()); c == 1 {
			paragraph[r] = true
		}
	}
	page := make([]int, len(rows)+2)
	used, n := 0.0, 0
	for r := 1; r <= len(rows); r++ {
		h, _ := f.GetRowHeight(s, r)
		if breaks[r-1] || used+h > pagePt {
			n, used = n+1, 0
		}
		used += h
		page[r] = n
	}
	for r := 1; r <= len(rows); r++ {
		cell, _ := excelize.CoordinatesToCellName(1, r)
		id, _ := f.GetCellStyle(s, cell)
		st, _ := f.GetStyle(id)
		if st == nil || st.Font == nil || !st.Font.Bold || len(st.Border) == 0 || len(st.Fill.Color) == 0 {
			continue // not a header row
		}
		// The table runs down to the next blank row; a list of paragraphs is not a table.
		for q := r + 1; q <= len(rows) && len(rows[q-1]) > 0 && !paragraph[q]; q++ {
			if page[q] != page[r] {
				t.Errorf("%s: the table headed on row %d breaks across pages at row %d", s, r, q)
				break
			}
		}
	}
}

// rowBreaks reads the manual page breaks of every sheet (the xlsx library has no reader for
// them): sheet -> row after which a page ends.
func rowBreaks(t *testing.T, xlsx []byte, f *excelize.File) map[string]map[int]bool {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(xlsx), int64(len(xlsx)))
	if err != nil {
		t.Fatal(err)
	}
	byPart := map[string]map[int]bool{}
	brk := regexp.MustCompile(`<rowBreaks[^>]*>(.*?)</rowBreaks>`)
	id := regexp.MustCompile(`<brk id="(\d+)"`)
	for _, zf := range zr.File {
		if !strings.HasPrefix(zf.Name, "xl/worksheets/sheet") {
			continue
		}
		rc, _ := zf.Open()
		b, _ := io.ReadAll(rc)
		_ = rc.Close()
		m := map[int]bool{}
		if sub := brk.FindSubmatch(b); sub != nil {
			for _, x := range id.FindAllSubmatch(sub[1], -1) {
				n, _ := strconv.Atoi(string(x[1]))
				m[n] = true
			}
		}
		byPart[zf.Name] = m
	}
	out := map[string]map[int]bool{}
	for i, name := range f.GetSheetMap() {
		out[name] = byPart["xl/worksheets/sheet"+strconv.Itoa(i)+".xml"]
	}
	return out
}

// The register's export and the calibration workbook print as the intake workbook does: A4 in
// their orientation, one page wide at 100 % (the printed columns fit between the margins), the
// header row repeated on every page of a long table, page numbers in the header or footer, a
// number format on every number, no font under 8 pt and no text cut by a filled neighbour.
func TestPrintPackRegisterAndCalibration(t *testing.T) {
	var reg, cal bytes.Buffer
	if err := sheet.WriteRegister(&reg, sheet.RegisterLots()); err != nil {
		t.Fatal(err)
	}
	if err := sheet.WriteCalibration(&cal, sheet.CalibrationOutcome(t)); err != nil {
		t.Fatal(err)
	}
	for _, wb := range []struct {
		name      string
		xlsx      []byte
		landscape bool
		titled    map[string]bool
	}{
		{"register", reg.Bytes(), true, map[string]bool{sheet.RegisterSheet: true, sheet.RegisterMetalsSheet: true}},
		{"calibration", cal.Bytes(), false, map[string]bool{sheet.CalibrationLots: true}},
	} {
		f, err := excelize.OpenReader(bytes.NewReader(wb.xlsx))
		if err != nil {
			t.Fatal(err)
		}
		titles, areas := map[string]bool{}, map[string]string{}
		for _, n := range f.GetDefinedName() {
			switch n.Name {
			case "_xlnm.Print_Titles":
				titles[n.Scope] = strings.HasSuffix(n.RefersTo, "!$1:$1")
			case "_xlnm.Print_Area":
				areas[n.Scope] = n.RefersTo
			}
		}
		want := "portrait"
		if wb.landscape {
			want = "landscape"
		}
		for _, s := range f.GetSheetList() {
			pl, _ := f.GetPageLayout(s)
			if pl.Size == nil || *pl.Size != sheet.PaperA4 || pl.Orientation == nil || *pl.Orientation != want ||
				pl.FitToWidth == nil || *pl.FitToWidth != 1 || pl.FitToHeight == nil || *pl.FitToHeight != 0 {
				t.Errorf("%s %s: page layout %+v, want A4 %s one page wide", wb.name, s, pl, want)
			}
			if pr, _ := f.GetSheetProps(s); pr.FitToPage == nil || !*pr.FitToPage {
				t.Errorf("%s %s: not fitted to the page width", wb.name, s)
			}
			if hf, _ := f.GetHeaderFooter(s); hf == nil || !strings.Contains(hf.OddHeader+hf.OddFooter, "Page &P of &N") {
				t.Errorf("%s %s: header and footer %+v lack the page number", wb.name, s, hf)
			}
			if titles[s] != wb.titled[s] {
				t.Errorf("%s %s: header row repeated %v, want %v", wb.name, s, titles[s], wb.titled[s])
			}
			checkWidth(t, f, s, sheet.PaperA4, wb.landscape, areas[s], 0)
			checkCells(t, f, s, 1)
		}
		f.Close()
	}
}

// checkWrapped: a wrapped text's row is tall enough for its lines. Type of size pt holds at most
// 1.25 × 10/size characters per column width unit (Calibri's average is near 1.2 at 10 pt), an
// indent takes about 1.5 units, and a line takes 1.2 × size pt; words are not split, so the count
// of lines here is a floor.
func checkWrapped(t *testing.T, f *excelize.File, s, cell, v string, size float64, indent int,
	merged map[string]float64, covered map[string]bool, ci, ri int) {
	t.Helper()
	wd, isMerged := merged[cell]
	if !isMerged {
		if covered[cell] {
			return
		}
		name, _ := excelize.ColumnNumberToName(ci + 1)
		wd, _ = f.GetColWidth(s, name)
	}
	perLine := (wd - 1.5*float64(indent)) * 1.25 * 10 / size
	lines := 0
	for _, para := range strings.Split(v, "\n") {
		lines += max(1, int(math.Ceil(float64(len([]rune(para)))/perLine)))
	}
	h, _ := f.GetRowHeight(s, ri+1)
	if need := float64(lines) * 1.2 * size; h+0.5 < need {
		t.Errorf("%s!%s: %q wraps to at least %d lines in a column %.1f wide, its row is %.1f pt (needs %.1f)", s, cell, v, lines, wd, h, need)
	}
}

// checkHeadAlign: a header over a column of numbers is aligned right, as the numbers are (a
// header row is bold, shaded and ruled; its column holds a number in the row below it).
func checkHeadAlign(t *testing.T, f *excelize.File, s string) {
	t.Helper()
	rows, _ := f.GetRows(s, excelize.Options{RawCellValue: true})
	for ri := 0; ri+1 < len(rows); ri++ {
		for ci, v := range rows[ri] {
			if v == "" || ci >= len(rows[ri+1]) {
				continue
			}
			cell, _ := excelize.CoordinatesToCellName(ci+1, ri+1)
			id, _ := f.GetCellStyle(s, cell)
			st, _ := f.GetStyle(id)
			if st == nil || st.Font == nil || !st.Font.Bold || len(st.Border) == 0 || len(st.Fill.Color) == 0 {
				continue
			}
			below, _ := excelize.CoordinatesToCellName(ci+1, ri+2)
			typ, _ := f.GetCellType(s, below)
			if _, err := strconv.ParseFloat(rows[ri+1][ci], 64); err != nil || typ == excelize.CellTypeSharedString ||
				typ == excelize.CellTypeInlineString {
				continue
			}
			if st.Alignment == nil || st.Alignment.Horizontal != "right" {
				t.Errorf("%s!%s: the header %q over a column of numbers is not aligned right", s, cell, v)
			}
		}
	}
}

// The Lines sheet, the one long table, prints in 8 pt on rows of 10 pt under a header of two
// lines, so that a lot of a few hundred lines takes a few pages: 72 single-line rows to an A4
// page, 68 to a Letter one; a lot of 200 lines of one line each and its total print on 3 pages
// of either.
func TestLinesDense(t *testing.T) {
	r := sampleReport(t, 60)
	var buf bytes.Buffer
	if err := sheet.WriteOn(&buf, r, sheet.PaperA4); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	single := 0
	for row := 2; row <= len(r.Lines)+1; row++ {
		h, _ := f.GetRowHeight(sheet.Lines, row)
		if h <= 10 {
			single++
		}
		for col := 1; col <= sheet.PrintedLineColumns; col++ {
			cell, _ := excelize.CoordinatesToCellName(col, row)
			id, _ := f.GetCellStyle(sheet.Lines, cell)
			if st, _ := f.GetStyle(id); st == nil || st.Font == nil || st.Font.Size != 8 {
				t.Fatalf("Lines!%s: font %+v, want 8 pt", cell, st)
			}
		}
	}
	if single < len(r.Lines)/2 {
		t.Errorf("%d of %d lines on rows of one 8 pt line", single, len(r.Lines))
	}
}

func TestLines200OnThreePages(t *testing.T) {
	r := sampleReport(t, 200)
	for _, paper := range []int{sheet.PaperA4, sheet.PaperLetter} {
		var buf bytes.Buffer
		if err := sheet.WriteOn(&buf, r, paper); err != nil {
			t.Fatal(err)
		}
		f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
		if err != nil {
			t.Fatal(err)
		}
		head, _ := f.GetRowHeight(sheet.Lines, 1)
		if head > 2*9.75+2 {
			t.Errorf("paper %d: Lines header %.2f pt, more than two lines of 8 pt", paper, head)
		}
		// Rows fill a page under the repeated header; a row that does not fit starts the next.
		pagePt := sheet.PrintableHeightPt(paper, false)
		pages, used := 1, head
		for row := 2; row <= len(r.Lines)+2; row++ {
			h, _ := f.GetRowHeight(sheet.Lines, row)
			if used+h > pagePt {
				pages, used = pages+1, head
			}
			used += h
		}
		if pages > 3 {
			t.Errorf("paper %d: 200 lines on %d pages, want 3", paper, pages)
		}
		f.Close()
	}
}
