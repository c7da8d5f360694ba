package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// shownElement is one element of a lot's evidence in lot show --json.
type shownElement struct {
	Element  string   `json:"element"`
	Basis    string   `json:"basis"`
	Kg       float64  `json:"kg"`
	Estimate float64  `json:"estimate_kg_p50"`
	Ratio    *float64 `json:"measured_over_estimate"`
	Assay    *struct {
		Censored bool    `json:"below_detection_limit"`
		Limit    float64 `json:"detection_limit_wt_pct"`
		Disagree bool    `json:"assays_disagree"`
	} `json:"assay"`
}

// shownLot is the part of lot show --json the evidence tests read.
type shownLot struct {
	Basis    string `json:"basis"`
	Evidence struct {
		DryMass *struct {
			Kg            float64 `json:"kg"`
			MoistureWtPct float64 `json:"moisture_wt_pct"`
		} `json:"dry_mass"`
		Elements []shownElement `json:"elements"`
		Notes    []string       `json:"notes"`
	} `json:"evidence"`
	Weighings []json.RawMessage `json:"weighings"`
	Audit     []json.RawMessage `json:"audit"`
}

// The register trusts measurements over estimates: an assay with below-limit values and a
// moisture row, a wet weighing, a second assay that disagrees; bad weighings exit 2 and write
// nothing; list, show and both exports say what each figure rests on.
func TestLotEvidence(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "register.db")
	demo := filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv")
	step := func(args ...string) string {
		t.Helper()
		code, out, errs := cli(t, "", append(args, "--db", db)...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		return out
	}
	show := func() shownLot {
		t.Helper()
		var s shownLot
		if err := json.Unmarshal([]byte(step("lot", "show", "KR-2611", "--json")), &s); err != nil {
			t.Fatal(err)
		}
		return s
	}
	el := func(s shownLot, name string) shownElement {
		t.Helper()
		for _, x := range s.Evidence.Elements {
			if x.Element == name {
				return x
			}
		}
		t.Fatalf("no %s in %+v", name, s.Evidence.Elements)
		return shownElement{}
	}
	step("lot", "add", demo, "--lot", "KR-2611", "--received", "2026-11-28", "--samples", "100")
	out := step("lot", "assay", "KR-2611", filepath.Join("..", "..", "testdata", "assay", "censored-WB-0412.csv"), "--lab", "Fenmoor bench lab", "--date", "2026-12-01")
	if !strings.Contains(out, "Cu < 0.05 wt%") || !strings.Contains(out, "moisture 6.5 wt%") {
		t.Errorf("lot assay: %s", out)
	}
	if s := show(); s.Basis != "estimate" || s.Evidence.DryMass != nil {
		t.Errorf("assayed, not weighed: basis %s", s.Basis)
	}
	step("lot", "weigh", "KR-2611", "--mass", "212 kg", "--wet", "--date", "2026-12-02")
	s := show()
	// 212 kg wet at the assay's 6.5 ± 0.5 % moisture is 198.22 kg dry, sd hypot(1 % of 212 × 0.935,
	// 212 × 0.005) = 2.25 kg; Co 8.1 % of it, 16.056 kg.
	if s.Basis != "assay+weighing" || s.Evidence.DryMass == nil || math.Abs(s.Evidence.DryMass.Kg-198.22) > 1e-9 {
		t.Fatalf("after the wet weighing: %+v", s.Evidence.DryMass)
	}
	co := el(s, "Co")
	if co.Basis != "assay+weighing" || math.Abs(co.Kg-16.05582) > 1e-9 || co.Ratio == nil || math.Abs(*co.Ratio-co.Kg/co.Estimate) > 1e-12 {
		t.Errorf("Co %+v", co)
	}
	if cu := el(s, "Cu"); cu.Assay == nil || !cu.Assay.Censored || cu.Assay.Limit != 0.05 {
		t.Errorf("Cu below the limit: %+v", cu)
	}
	// Bad weighings: exit 2, a clear error, nothing written.
	for _, bad := range [][]string{{"--moisture", "120"}, {"--moisture", "-1"}, {"--moisture", "wet"}, {"--dry", "--moisture", "5"},
		{"--sigma", "-2 kg"}, {"--sigma", "300 kg"}} {
		code, _, errs := cli(t, "", append([]string{"lot", "weigh", "KR-2611", "--mass", "200 kg", "--db", db}, bad...)...)
		if code != 2 || !strings.Contains(errs, "--") {
			t.Errorf("%v: exit %d %s", bad, code, errs)
		}
	}
	fresh := filepath.Join(dir, "fresh.db")
	if code, _, _ := cli(t, "", "lot", "weigh", "KR-2611", "--mass", "200 kg", "--moisture", "120", "--db", fresh); code != 2 {
		t.Errorf("moisture 120 %% on a new register: exit %d", code)
	}
	if _, err := os.Stat(fresh); err == nil {
		t.Error("a refused weighing created the register")
	}
	if s2 := show(); len(s2.Weighings) != 1 || len(s2.Audit) != len(s.Audit) {
		t.Errorf("refused weighings wrote %d weighings, %d audit rows (had %d)", len(s2.Weighings), len(s2.Audit), len(s.Audit))
	}
	// A second assay whose cobalt disagrees with the first beyond both uncertainties.
	step("lot", "assay", "KR-2611", filepath.Join("..", "..", "testdata", "assay", "second-KR-2611.csv"), "--lab", "Moor Lane lab", "--date", "2026-12-03")
	if co := el(show(), "Co"); co.Assay == nil || !co.Assay.Disagree {
		t.Errorf("8.1 ± 0.3 and 11.5 ± 0.3 wt%% Co agree: %+v", co.Assay)
	}
	text := step("lot", "show", "KR-2611")
	for _, want := range []string{"metal in kg", "metal in wt% of the dry black mass", "estimate kg P10", "measured/estimate", "Co: the 2 assays disagree",
		"198 ± 2.25 kg dry", "Cu < 0.05 wt% (below the detection limit)"} {
		if !strings.Contains(text, want) {
			t.Errorf("lot show lacks %q:\n%s", want, text)
		}
	}
	lotEvidenceOutputs(t, dir, step)
}

// lotEvidenceOutputs checks what carries the lot's evidence out of the register: the list, the
// CSV and workbook exports and the month's totals. step runs a command on the register.
func lotEvidenceOutputs(t *testing.T, dir string, step func(args ...string) string) {
	t.Helper()
	if list := step("lot", "list"); !strings.Contains(list, "assay+weighing") || !strings.Contains(list, " m ") {
		t.Errorf("lot list: %s", list)
	}
	csvPath := filepath.Join(dir, "lots.csv")
	step("lot", "export", "--csv", csvPath)
	b, _ := os.ReadFile(csvPath)
	if !strings.Contains(string(b), "Co basis") || !strings.Contains(string(b), "assay+weighing") || !strings.Contains(string(b), "Co estimate kg (P50)") {
		t.Errorf("csv export: %s", b)
	}
	xlsxPath := filepath.Join(dir, "lots.xlsx")
	step("lot", "export", "--xlsx", xlsxPath)
	f, err := excelize.OpenFile(xlsxPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if v, _ := f.GetCellValue("Lots", "A2"); v != "KR-2611" {
		t.Errorf("xlsx A2 %q", v)
	}
	if p, _ := f.GetPanes("Lots"); !p.Freeze {
		t.Error("xlsx header not frozen")
	}
	tot := step("lot", "totals", "--month", "2026-11")
	if !strings.Contains(tot, "on its best evidence") || !strings.Contains(tot, "measured/estimate over 1 weighed lots: Co") {
		t.Errorf("totals: %s", tot)
	}
}
