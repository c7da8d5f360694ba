package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A flag given with an empty value is a usage error naming it, never read as the flag left off:
// a script's unset variable must not turn a wet weighing dry or drop a calibration.
func TestEmptyFlagValuesRefused(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	if code, _, errs := cli(t, "", "lot", "add", "../../testdata/bench/lot-HM-1003.csv", "--lot", "HM-1003", "--db", db,
		"--received", "2026-11-24", "--samples", "100"); code != 0 {
		t.Fatalf("lot add: exit %d: %s", code, errs)
	}
	assayFile := "../../testdata/bench/assay-HM-1001-xrf.csv"
	for _, c := range []struct {
		flag string
		args []string
	}{
		{"--moisture", []string{"quote", assayFile, "--mass", "20 kg", "--moisture", ""}},
		{"--missing-li", []string{"quote", assayFile, "--mass", "20 kg", "--missing-li", ""}},
		{"--moisture", []string{"lot", "weigh", "HM-1003", "--mass", "40 kg", "--moisture", "", "--db", db}},
		{"--calibrated", []string{"estimate", "../../testdata/bench/lot-HM-1003.csv", "--calibrated=", "--db", db, "--samples", "100"}},
	} {
		code, out, errs := cli(t, "", c.args...)
		if code != exitUsage || !strings.Contains(errs, c.flag) || out != "" {
			t.Errorf("%v: exit %d, stdout %d bytes, %s; want exit %d naming %s, no output", c.args, code, len(out), errs, exitUsage, c.flag)
		}
	}
	code, out, _ := cli(t, "", "lot", "show", "HM-1003", "--db", db)
	if code != 0 || strings.Contains(out, "weighed 2") {
		t.Errorf("a refused weighing was recorded:\n%s", out)
	}
}

// --calibrated with no --db and no register at the default path is a usage error that names
// both flags; it creates no register.
func TestCalibratedWithoutDB(t *testing.T) {
	home := t.TempDir()
	t.Setenv("BLACKMASS_DB", "")
	t.Setenv("HOME", home)
	t.Setenv("XDG_DATA_HOME", filepath.Join(home, "data"))
	code, out, errs := cli(t, "", "estimate", "../../testdata/bench/lot-HM-1003.csv", "--calibrated", "--samples", "100")
	if code != exitUsage || !strings.Contains(errs, "--calibrated") || !strings.Contains(errs, "--db") || out != "" {
		t.Errorf("exit %d, stdout %d bytes, %s", code, len(out), errs)
	}
	if _, err := os.Stat(filepath.Join(home, "data", "blackmass", "register.db")); err == nil {
		t.Error("a register was created at the default path")
	}
}

// The lot commands that read a register (list, show, totals, export, assay, weigh) refuse a
// register that does not exist, naming it, and create none: a mistyped --db must not answer
// "no lots" from a new empty file. Only lot add creates a register.
func TestLotCommandsNeedAnExistingRegister(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "regsiter.db")
	for _, args := range [][]string{
		{"lot", "list"},
		{"lot", "show", "HM-1003"},
		{"lot", "totals", "--month", "2026-11"},
		{"lot", "export", "--csv", filepath.Join(dir, "out.csv")},
		{"lot", "assay", "HM-1003", "../../testdata/bench/assay-HM-1003-icp.csv", "--lab", "Pellow assay lab"},
		{"lot", "weigh", "HM-1003", "--mass", "40 kg", "--dry"},
	} {
		code, out, errs := cli(t, "", append(args, "--db", missing)...)
		if code != exitError || !strings.Contains(errs, missing) || !strings.Contains(errs, "does not exist") || out != "" {
			t.Errorf("%v: exit %d, %s", args, code, errs)
		}
		if _, err := os.Stat(missing); err == nil {
			t.Fatalf("%v created the register", args)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out.csv")); err == nil {
		t.Error("lot export wrote its file from a missing register")
	}
}

// lot assay and lot weigh check their flags before the register is touched: a bad date or no
// lab is a usage error naming the flag, and nothing is recorded.
func TestLotAssayWeighFlagErrors(t *testing.T) {
	db := filepath.Join(t.TempDir(), "r.db")
	if code, _, errs := cli(t, "", "lot", "add", "../../testdata/bench/lot-HM-1003.csv", "--lot", "HM-1003", "--db", db, "--samples", "100", "-q"); code != 0 {
		t.Fatalf("lot add: exit %d: %s", code, errs)
	}
	a := "../../testdata/bench/assay-HM-1003-icp.csv"
	for _, c := range []struct {
		flag string
		args []string
	}{
		{"--date", []string{"lot", "assay", "HM-1003", a, "--lab", "Pellow assay lab", "--date", "2026-02-30"}},
		{"--lab", []string{"lot", "assay", "HM-1003", a}},
		{"--date", []string{"lot", "weigh", "HM-1003", "--mass", "40 kg", "--date", "2026-13-01"}},
	} {
		code, out, errs := cli(t, "", append(c.args, "--db", db)...)
		if code != exitUsage || !strings.Contains(errs, c.flag) || out != "" {
			t.Errorf("%v: exit %d, %s; want exit %d naming %s", c.args, code, errs, exitUsage, c.flag)
		}
	}
	if _, out, _ := cli(t, "", "lot", "show", "HM-1003", "--db", db); strings.Contains(out, "assay 1") || strings.Contains(out, "weighed 2") {
		t.Errorf("a refused assay or weighing was recorded:\n%s", out)
	}
}

// lot add with a date that is not one is a usage error naming --received; a workbook path
// that is a directory is refused as such, without suggesting --force.
func TestLotAddReceivedAndDirectoryTarget(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	code, _, errs := cli(t, "", "lot", "add", "../../testdata/bench/lot-HM-1003.csv", "--lot", "HM-1003", "--received", "2026-02-30", "--db", db)
	if code != exitUsage || !strings.Contains(errs, "--received") {
		t.Errorf("--received 2026-02-30: exit %d, %s", code, errs)
	}
	if _, err := os.Stat(db); err == nil {
		t.Error("a refused lot add created the register")
	}
	code, _, errs = cli(t, "", "estimate", "../../testdata/bench/lot-HM-1003.csv", "--xlsx", dir, "--samples", "100", "-q")
	if code == 0 || !strings.Contains(errs, "not a regular file") || strings.Contains(errs, "pass --force") {
		t.Errorf("--xlsx DIR: exit %d, %s", code, errs)
	}
}
