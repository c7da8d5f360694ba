package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"

	"github.com/xuri/excelize/v2"

	"blackmass/feed/sheet"
)

func TestWorkbook(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "lot.xlsx")
	manifest := filepath.Join(dir, "lot.csv")
	csv := "id,description,chemistry,format,capacity,count,mass\n=1+2,+danger,NMC811,pouch,60 Wh,10,250 g\n@sum,-2,LFP,prismatic,280 Ah,2,5.4 kg\n"
	if err := os.WriteFile(manifest, []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errs := cli(t, "", "estimate", manifest, "--samples", "200", "--xlsx", path, "--acid-price", "0.3", "--h2o2-price", "0.9"); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	for _, s := range []string{sheet.Summary, sheet.Lines, sheet.Leach, sheet.Assumptions, sheet.WeighIn} {
		if idx, _ := f.GetSheetIndex(s); idx < 0 {
			t.Errorf("no sheet %q", s)
		}
	}
	// User text beginning with = + - @ is stored as text, never as a formula.
	for _, cell := range []string{"A2", "B2", "A3", "B3"} {
		if fm, _ := f.GetCellFormula(sheet.Lines, cell); fm != "" {
			t.Errorf("%s has formula %q", cell, fm)
		}
	}
	if v, _ := f.GetCellValue(sheet.Lines, "A2"); v != "=1+2" {
		t.Errorf("A2 = %q", v)
	}
	// Numbers are numbers.
	if typ, _ := f.GetCellType(sheet.Leach, "C4"); typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset {
		t.Errorf("Leach!C4 type %v", typ)
	}
	// Live formulas: cost = kg × price, evaluated by the calculation engine against the Go values.
	kg := cellFloat(t, f, sheet.Leach, "C4")
	cost, err := f.CalcCellValue(sheet.Leach, "H4", excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	if c, _ := strconv.ParseFloat(cost, 64); abs(c-0.3*kg) > 1e-6*kg {
		t.Errorf("cost formula %v, want %v", c, 0.3*kg)
	}
	// The weigh-in compares a net weight with the estimate.
	_ = f.SetCellValue(sheet.WeighIn, "B4", 30.5)
	_ = f.SetCellValue(sheet.WeighIn, "C4", 0.5)
	net, _ := f.CalcCellValue(sheet.WeighIn, "D25", excelize.Options{RawCellValue: true})
	if net != "30" {
		t.Errorf("net = %q, want 30", net)
	}
	p50 := cellFloat(t, f, sheet.WeighIn, "C26")
	diff, _ := f.CalcCellValue(sheet.WeighIn, "D27", excelize.Options{RawCellValue: true})
	if d, _ := strconv.ParseFloat(diff, 64); abs(d-(30-p50)) > 1e-9 {
		t.Errorf("difference %v, want %v", d, 30-p50)
	}
	// Never overwritten without --force; nothing left behind.
	before, _ := os.ReadFile(path)
	if code, out, errs := cli(t, "", "estimate", manifest, "--samples", "200", "--xlsx", path); code == 0 || !strings.Contains(errs, "--force") || out != "" {
		t.Errorf("overwrite without --force: exit %d, %q", code, errs)
	}
	after, _ := os.ReadFile(path)
	if string(before) != string(after) {
		t.Error("existing workbook changed")
	}
	if code, _, errs := cli(t, "", "estimate", manifest, "--samples", "200", "--xlsx", path, "--force"); code != 0 {
		t.Errorf("--force: %s", errs)
	}
	// A failed run leaves nothing behind.
	bad := filepath.Join(dir, "bad.xlsx")
	if code, _, _ := cli(t, "", "estimate", filepath.Join("..", "..", "testdata", "bad", "ragged.csv"), "--xlsx", bad); code == 0 {
		t.Error("bad manifest succeeded")
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if e.Name() != "lot.csv" && e.Name() != "lot.xlsx" {
			t.Errorf("left behind: %s", e.Name())
		}
	}
	// The workbook reads back as a manifest (its lines sheet) and gives the same estimate.
	_, a, _ := cli(t, "", "estimate", manifest, "--samples", "200", "--json", "--no-lines")
	_, b, errs := cli(t, "", "estimate", path, "--samples", "200", "--json", "--no-lines")
	ja, jb := blackMassLine(a), blackMassLine(b)
	if ja == "" || ja != jb {
		t.Errorf("re-read workbook: %q vs %q (%s)", ja, jb, errs)
	}
}

func blackMassLine(js string) string {
	i := strings.Index(js, `"black_mass_kg"`)
	if i < 0 {
		return ""
	}
	return js[i : i+120]
}

func cellFloat(t *testing.T, f *excelize.File, s, c string) float64 {
	t.Helper()
	v, err := f.GetCellValue(s, c, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	x, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("%s!%s = %q", s, c, v)
	}
	return x
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// The workbook is never written over an existing path of any kind without --force, the error
// names the target before any work, new files follow the umask, and --force keeps the mode.
func TestWorkbookTargets(t *testing.T) {
	dir := t.TempDir()
	demo := []string{"demo", "--samples", "50", "--xlsx"}
	dangling := filepath.Join(dir, "dangling.xlsx")
	if err := os.Symlink(filepath.Join(dir, "nowhere"), dangling); err != nil {
		t.Fatal(err)
	}
	if code, _, errs := cli(t, "", append(demo, dangling)...); code == 0 || !strings.Contains(errs, "dangling.xlsx exists") {
		t.Errorf("dangling symlink replaced: exit %d %s", code, errs)
	}
	if code, _, errs := cli(t, "", append(demo, filepath.Join(dir, "no", "such", "x.xlsx"))...); code == 0 || !strings.Contains(errs, "does not exist") {
		t.Errorf("missing directory: exit %d %s", code, errs)
	}
	fresh := filepath.Join(dir, "fresh.xlsx")
	if code, _, errs := cli(t, "", append(demo, fresh)...); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	st, err := os.Stat(fresh)
	if err != nil {
		t.Fatal(err)
	}
	if st.Mode().Perm()&0o600 != 0o600 || st.Mode().Perm()&0o002 != 0 {
		t.Errorf("new workbook mode %v", st.Mode().Perm())
	}
	if err := os.Chmod(fresh, 0o600); err != nil {
		t.Fatal(err)
	}
	if code, _, errs := cli(t, "", append(demo, fresh, "--force")...); code != 0 {
		t.Fatalf("--force: exit %d: %s", code, errs)
	}
	if st, _ := os.Stat(fresh); st.Mode().Perm() != 0o600 {
		t.Errorf("--force changed the mode to %v", st.Mode().Perm())
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".blackmass-*"))
	if len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

// The same input and seed give the same workbook bytes; a very long lot id is shortened in the
// print header, never dropped with the caution.
func TestWorkbookReproducibleAndHeader(t *testing.T) {
	dir := t.TempDir()
	long := strings.Repeat("LOT-", 50) // 200 characters, the longest --lot accepted
	var got [2][]byte
	for i := range got {
		p := filepath.Join(dir, "w"+strconv.Itoa(i)+".xlsx")
		if code, _, errs := cli(t, "", "demo", "--samples", "50", "--lot", long, "--xlsx", p); code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		got[i] = b
	}
	if !bytes.Equal(got[0], got[1]) {
		t.Error("two runs gave different workbook bytes")
	}
	f, err := excelize.OpenReader(bytes.NewReader(got[0]))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	for _, s := range f.GetSheetList() {
		hf, err := f.GetHeaderFooter(s)
		if err != nil {
			t.Fatal(err)
		}
		if len(hf.OddHeader) > 255 || len(hf.OddFooter) > 255 || !strings.Contains(hf.OddFooter, "licensed practice") || !strings.Contains(hf.OddHeader, "LOT-") {
			t.Errorf("%s: header %d chars, footer %q", s, len(hf.OddHeader), hf.OddFooter)
		}
	}
}

// A FIFO at the target is not a file to replace, even with --force.
func TestWorkbookFIFOTarget(t *testing.T) {
	p := filepath.Join(t.TempDir(), "pipe.xlsx")
	if err := syscall.Mkfifo(p, 0o644); err != nil {
		t.Skip("no FIFOs here:", err)
	}
	for _, force := range []bool{false, true} {
		args := []string{"demo", "--samples", "20", "--xlsx", p}
		if force {
			args = append(args, "--force")
		}
		if code, _, errs := cli(t, "", args...); code == 0 || !strings.Contains(errs, "pipe.xlsx exists") {
			t.Errorf("force=%v: exit %d %s", force, code, errs)
		}
	}
	if st, err := os.Lstat(p); err != nil || st.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the FIFO was replaced: %v %v", st.Mode(), err)
	}
}
