package sheet

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/register"
)

// registerLots are two invented lots: one assayed and weighed wet (Co measured), one on its
// estimate only.
func registerLots() []register.Summary {
	pay := 12345.678
	est := register.Estimate{BlackMassKg: 200, Payable: &pay, Elements: map[string]register.EstimateElement{
		"Co": {Kg: dist.Stat{P10: 15, P50: 17.5, P90: 20}, WtPctP50: 8.75, PayableValue: &pay},
		"Ni": {Kg: dist.Stat{P10: 20, P50: 25, P90: 30}, WtPctP50: 12.5},
	}}
	m := 8.0
	measured := register.RankEvidence(est,
		[]register.AssayEvidence{{ID: 1, On: "2026-11-05", Values: []assay.Value{{Element: "Co", WtPct: 9.9, SigmaWtPct: 0.3}}}},
		[]register.WeighingEvidence{{ID: 1, On: "2026-11-05", Kg: 212, State: register.StateWet, MoistureWtPct: &m}})
	a := register.Summary{ID: "KR-3101", Version: 1, Supplier: "Moor Lane yard", Received: "2026-11-03", Items: 40, NameplateKWh: 12.5,
		BlackMassKg: 200, Assays: 1, AssayLab: "Tarn Valley Assay Lab", WeighedKg: 212, Currency: "EUR", Payable: &pay,
		Basis: measured.Basis, Evidence: measured, Chemistries: []string{"NMC622"}}
	b := a
	b.ID, b.Assays, b.AssayLab, b.WeighedKg = "=KR-3102", 0, "", 0
	b.Evidence = register.RankEvidence(est, nil, nil)
	b.Basis = b.Evidence.Basis
	return []register.Summary{a, b}
}

// The register's workbook: a header row frozen and repeated on every page, widths that fit the
// text, every number formatted, dates as dates, A4 landscape one page wide with page numbers.
func TestWriteRegister(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteRegister(&buf, registerLots()); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	lc, lr, _ := lotsSheet(registerLots())
	mc, mr, _ := metalsSheet(registerLots())
	for _, tab := range []struct {
		sheet string
		cols  []Column
		rows  [][]any
	}{{RegisterSheet, lc, lr}, {RegisterMetalsSheet, mc, mr}} {
		sheet, cols, rows := tab.sheet, tab.cols, tab.rows
		panes, err := f.GetPanes(sheet)
		if err != nil || !panes.Freeze || panes.YSplit != 1 || panes.TopLeftCell != "A2" {
			t.Errorf("panes %+v %v", panes, err)
		}
		for j, c := range cols {
			name, _ := excelize.ColumnNumberToName(j + 1)
			w, _ := f.GetColWidth(sheet, name)
			// The header wraps at its spaces: the column holds its longest word and every cell's text.
			// A text column of the printed ones may be narrower, wrapped, down to its longest word.
			need := 0
			for _, word := range strings.Fields(c.Head) {
				need = max(need, len([]rune(word)))
			}
			for _, r := range rows {
				if c.Kind == KindText {
					for _, word := range strings.Fields(shownText(r[j], c.Kind)) {
						need = max(need, len([]rune(word)))
					}
				} else {
					need = max(need, len([]rune(shownText(r[j], c.Kind))))
				}
			}
			if w < min(float64(need)/1.1+1, maxColumnWidth) { // 10 pt text: 1.1 characters a unit with a margin
				t.Errorf("column %s %q: width %v, its text needs %d", name, c.Head, w, need)
			}
			head, _ := f.GetCellValue(sheet, name+"1")
			if head != c.Head {
				t.Errorf("header %s: %q, want %q", name, head, c.Head)
			}
			for i, r := range rows {
				cell, _ := excelize.CoordinatesToCellName(j+1, i+2)
				if r[j] == nil {
					continue
				}
				st, _ := f.GetCellStyle(sheet, cell)
				style, _ := f.GetStyle(st)
				_, isText := r[j].(string)
				switch {
				case c.Kind == KindDate:
					typ, _ := f.GetCellType(sheet, cell)
					if style.CustomNumFmt == nil || *style.CustomNumFmt != "yyyy-mm-dd" || typ == excelize.CellTypeSharedString || typ == excelize.CellTypeInlineString {
						t.Errorf("%s: a date should be a number formatted as a date (type %v, style %+v)", cell, typ, style.CustomNumFmt)
					}
				case !isText && c.Kind == KindKg:
					want := kindFormat[KindKg] // zero, and from 100 kg: whole kilograms
					if d := sigDecimals(r[j].(float64)); d > 0 {
						want = fixedFmt(d)
					}
					if style.CustomNumFmt == nil || *style.CustomNumFmt != want {
						t.Errorf("%s (%s): number format %v, want %q (three significant figures)", cell, c.Head, style.CustomNumFmt, want)
					}
				case !isText && (style.CustomNumFmt == nil || *style.CustomNumFmt != kindFormat[c.Kind]):
					t.Errorf("%s (%s): number format %v, want %q", cell, c.Head, style.CustomNumFmt, kindFormat[c.Kind])
				}
			}
		}
		checkPrint(t, f, sheet)
	}
	// The money format has thousands separators and two decimals; a mass three figures.
	if !strings.Contains(kindFormat[KindMoney], "#,##0.00") || sigFmt(0.0123) != "#,##0.0000" {
		t.Errorf("formats %v", kindFormat)
	}
	// Text that looks like a formula stays text.
	if v, _ := f.GetCellValue(RegisterSheet, "A3"); v != "=KR-3102" {
		t.Errorf("lot id %q", v)
	}
	if fm, _ := f.GetCellFormula(RegisterSheet, "A3"); fm != "" {
		t.Errorf("a lot id became the formula %q", fm)
	}
}

// Each lot says what its figures rest on: the measured lot's Co on assay × dry weighed mass with
// the estimate beside it, the other lot on its estimate.
func TestRegisterTableBasis(t *testing.T) {
	cols, rows := RegisterTable(registerLots())
	at := func(head string) int {
		for j, c := range cols {
			if c.Head == head {
				return j
			}
		}
		t.Fatalf("no column %q", head)
		return -1
	}
	m, e := rows[0], rows[1]
	if m[at("basis")] != register.BasisMeasured || m[at("Co basis")] != register.BasisMeasured || m[at("Ni basis")] != register.BasisEstimate ||
		e[at("basis")] != register.BasisEstimate || e[at("Co measured kg")] != nil {
		t.Errorf("bases: %v / %v", m[at("Co basis")], e[at("basis")])
	}
	// 9.9 % of 212 kg less 8 % moisture: 19.309 kg beside the estimate's 17.5.
	co, est, ratio := m[at("Co kg")].(float64), m[at("Co estimate kg (P50)")].(float64), m[at("Co measured/estimate")].(float64)
	dry := m[at("dry black mass kg")].(float64)
	if math.Abs(co-19.30896) > 1e-9 || est != 17.5 || math.Abs(ratio-co/17.5) > 1e-12 || math.Abs(dry-195.04) > 1e-9 {
		t.Errorf("Co %v estimate %v ratio %v", co, est, ratio)
	}
}

// checkPrint checks a sheet's print setup: A4 landscape, one page wide, the header row repeated,
// page numbers in the footer.
func checkPrint(t *testing.T, f *excelize.File, sheet string) {
	t.Helper()
	lay, err := f.GetPageLayout(sheet)
	if err != nil || *lay.Size != PaperA4 || *lay.Orientation != "landscape" || *lay.FitToWidth != 1 || *lay.FitToHeight != 0 {
		t.Errorf("page layout %+v %v", lay, err)
	}
	props, _ := f.GetSheetProps(sheet)
	if props.FitToPage == nil || !*props.FitToPage {
		t.Error("not fitted to the page")
	}
	hf, _ := f.GetHeaderFooter(sheet)
	if !strings.Contains(hf.OddFooter, "&P") || !strings.Contains(hf.OddFooter, "&N") {
		t.Errorf("footer %q", hf.OddFooter)
	}
	titles := false
	for _, dn := range f.GetDefinedName() {
		if dn.Name == "_xlnm.Print_Titles" && dn.Scope == sheet && strings.Contains(dn.RefersTo, "$1:$1") {
			titles = true
		}
	}
	if !titles {
		t.Errorf("no repeated header row: %+v", f.GetDefinedName())
	}
}

// The metals sheet: a row per lot and payable metal, the measured lot's Co with its measurement,
// sd and range beside the estimate's P10/P50/P90; the other lot's Co on the estimate alone.
func TestMetalsTable(t *testing.T) {
	cols, rows := MetalsTable(registerLots())
	at := map[string]int{}
	for j, c := range cols {
		at[c.Head] = j
	}
	var measured, estimated []any
	for _, r := range rows {
		if r[at["element"]] == "Co" && r[at["lot"]] == "KR-3101" {
			measured = r
		}
		if r[at["element"]] == "Co" && r[at["lot"]] == "=KR-3102" {
			estimated = r
		}
	}
	if len(rows) != 12 || measured == nil || estimated == nil {
		t.Fatalf("%d rows", len(rows))
	}
	if measured[at["basis"]] != register.BasisMeasured || math.Abs(measured[at["measured kg"]].(float64)-19.30896) > 1e-9 ||
		measured[at["estimate kg P10"]] != 15.0 || measured[at["estimate kg P90"]] != 20.0 || measured[at["assay wt%"]] != 9.9 ||
		measured[at["measured min kg"]].(float64) >= measured[at["measured kg"]].(float64) {
		t.Errorf("measured Co %v", measured)
	}
	if estimated[at["basis"]] != register.BasisEstimate || estimated[at["measured kg"]] != nil || estimated[at["kg"]] != 17.5 {
		t.Errorf("estimated Co %v", estimated)
	}
}
