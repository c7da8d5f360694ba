package register

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/binary"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
)

// foreignDB writes, at exactly path, an SQLite database of another program (one table, one row)
// and returns its bytes. It is written under a plain name and renamed, so the test does not rely
// on the code under test to name the file.
func foreignDB(t *testing.T, path string) []byte {
	t.Helper()
	plain := filepath.Join(t.TempDir(), "foreign.db")
	db, err := sql.Open("sqlite", plain)
	if err != nil {
		t.Fatal(err)
	}
	const invoices = "CREATE TABLE invoices (id INTEGER PRIMARY KEY, total REAL); INSERT INTO invoices VALUES (1, 9.5)"
	if _, err := db.Exec(invoices); err != nil {
		t.Fatal(err)
	}
	_ = db.Close()
	if err := os.Rename(plain, path); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// isRegister reports whether the file at path carries the register's application id in its
// SQLite header (bytes 68–71, https://www.sqlite.org/fileformat.html#the_database_header).
func isRegister(t *testing.T, path string) bool {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil || len(b) < 100 {
		return false
	}
	return bytes.HasPrefix(b, []byte("SQLite format 3\x00")) && binary.BigEndian.Uint32(b[68:72]) == ApplicationID
}

// A name holding the characters an SQLite URI reads as query ('?'), fragment ('#') or escape
// ('%') opens exactly that file: the foreign database at the name SQLite would otherwise read
// is left byte for byte as it was, and the register is made under the name given.
func TestOpenExactPath(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ name, misread string }{
		{"f.db?x=1", "f.db"},
		{"f.db#x", "f.db"},
		{"my%20reg.db", "my reg.db"},
		{"a?mode=memory", "a"},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			path, misread := filepath.Join(dir, c.name), filepath.Join(dir, c.misread)
			before := foreignDB(t, misread)
			r, err := Open(path)
			if err != nil {
				t.Fatal(err)
			}
			if _, err := r.Add(context.Background(), sampleLot("KR-1", "s", "2026-11-02", 1), false); err != nil {
				t.Fatal(err)
			}
			if err := r.Close(); err != nil {
				t.Fatal(err)
			}
			if after, _ := os.ReadFile(misread); !bytes.Equal(before, after) {
				t.Errorf("the foreign database %q was modified", c.misread)
			}
			if !isRegister(t, path) {
				t.Errorf("no register at %q", c.name)
			}
			// And the other way round: a foreign database at the odd name itself is refused.
			odd := filepath.Join(dir, "other"+c.name)
			before = foreignDB(t, odd)
			if r, err := Open(odd); err == nil {
				_ = r.Close()
				t.Errorf("foreign database at %q opened", odd)
			}
			if after, _ := os.ReadFile(odd); !bytes.Equal(before, after) {
				t.Errorf("the foreign database at %q was modified", odd)
			}
		})
	}
}

// Ten writers that each open a register that does not exist yet and add one lot: every add is
// kept, whether the writers are goroutines or processes.
func TestConcurrentCreation(t *testing.T) {
	const writers = 10
	check := func(t *testing.T, path string) {
		t.Helper()
		r, err := Open(path)
		if err != nil {
			t.Fatal(err)
		}
		defer r.Close()
		lots, err := r.List(context.Background(), Filter{})
		if err != nil || len(lots) != writers {
			t.Errorf("%d lots (%v), want %d", len(lots), err, writers)
		}
	}
	t.Run("goroutines", func(t *testing.T) {
		for round := range 3 {
			path := filepath.Join(t.TempDir(), "new", "register.db")
			var wg sync.WaitGroup
			errs := make([]error, writers)
			for k := range writers {
				wg.Go(func() {
					r, err := Open(path)
					if err != nil {
						errs[k] = err
						return
					}
					defer r.Close()
					_, errs[k] = r.Add(context.Background(), sampleLot("G-"+strconv.Itoa(k), "s", "2026-11-02", 5), false)
				})
			}
			wg.Wait()
			for k, err := range errs {
				if err != nil {
					t.Errorf("round %d writer %d: %v", round, k, err)
				}
			}
			check(t, path)
		}
	})
	t.Run("processes", func(t *testing.T) {
		for round := range 2 {
			path := filepath.Join(t.TempDir(), "new", "register.db")
			var wg sync.WaitGroup
			errs := make([]error, writers)
			out := make([][]byte, writers)
			for k := range writers {
				wg.Go(func() { out[k], errs[k] = helper(path, "P"+strconv.Itoa(k), 1).CombinedOutput() })
			}
			wg.Wait()
			for k, err := range errs {
				if err != nil {
					t.Errorf("round %d process %d: %v %s", round, k, err, out[k])
				}
			}
			check(t, path)
		}
	})
}

// The chemistry filter finds the text given, as text: '%' and '_' are no wildcards.
func TestChemistryFilterLiteral(t *testing.T) {
	t.Parallel()
	r, _ := openTemp(t)
	ctx := context.Background()
	nmc := sampleLot("C-1", "s", "2026-11-02", 1)
	lfp := sampleLot("C-2", "s", "2026-11-03", 1)
	lfp.Report.Groups[0].Chemistry = "LFP"
	for _, l := range []Lot{nmc, lfp} {
		if _, err := r.Add(ctx, l, false); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct {
		chem string
		want int
	}{{"%", 0}, {"_MC6__", 0}, {"N_C", 0}, {"nmc6", 1}, {"NMC622", 1}, {"lfp", 1}, {"622", 1}} {
		lots, err := r.List(ctx, Filter{Chemistry: c.chem})
		if err != nil || len(lots) != c.want {
			t.Errorf("--chemistry %q: %d lots (%v), want %d", c.chem, len(lots), err, c.want)
		}
	}
}

// A register whose tables were dropped is refused with an error that names the file.
func TestDroppedTablesNamed(t *testing.T) {
	t.Parallel()
	r, path := openTemp(t)
	if _, err := r.Add(context.Background(), sampleLot("K-1", "s", "2026-11-02", 1), false); err != nil {
		t.Fatal(err)
	}
	if _, err := r.db.Exec("DROP TABLE lot_metals; DROP TABLE lot_lines; DROP TABLE lot_groups; DROP TABLE lots"); err != nil {
		t.Fatal(err)
	}
	_ = r.Close()
	r2, err := Open(path)
	if err == nil {
		defer r2.Close()
		_, err = r2.List(context.Background(), Filter{})
	}
	if err == nil || !strings.Contains(err.Error(), path) {
		t.Errorf("error %v does not name %s", err, path)
	}
}

// Every error a register's methods return names the register's file.
func TestErrorsNameTheFile(t *testing.T) {
	t.Parallel()
	r, path := openTemp(t)
	ctx := context.Background()
	if _, err := r.db.Exec("DROP TABLE lot_metals; DROP TABLE lot_lines; DROP TABLE lot_groups; DROP TABLE lots"); err != nil {
		t.Fatal(err)
	}
	_, errAdd := r.Add(ctx, sampleLot("K-1", "s", "2026-11-02", 1), false)
	_, errList := r.List(ctx, Filter{})
	_, errShow := r.Show(ctx, "K-1")
	_, errTotals := r.MonthTotals(ctx, "2026-11")
	errWeigh := r.Weigh(ctx, "K-1", "2026-11-03", 5, "")
	errRemove := r.Remove(ctx, "K-1", "")
	for i, err := range []error{errAdd, errList, errShow, errTotals, errWeigh, errRemove} {
		if err == nil || !strings.Contains(err.Error(), path) {
			t.Errorf("call %d: error %v does not name %s", i, err, path)
		}
	}
}

// A lot is checked before any file is opened: CheckLot and Validate refuse what Add refuses,
// with the field named, so a caller can refuse it before estimating or creating the register.
func TestCheckLotBeforeOpen(t *testing.T) {
	t.Parallel()
	good := sampleLot("KR-7", "s", "2026-02-28", 1)
	if err := good.Validate(); err != nil {
		t.Fatal(err)
	}
	noReport := good
	noReport.Report = nil
	for _, c := range []struct {
		lot  Lot
		want string
	}{
		{Lot{ID: "KR-7", Received: "2026-02-30", Report: good.Report}, `date "2026-02-30": no such day`},
		{Lot{ID: "KR-7", Received: "2025-02-29", Report: good.Report}, `date "2025-02-29": no such day`}, // 2025 is no leap year
		{Lot{ID: "KR-7", Received: "30/11/2026", Report: good.Report}, `date "30/11/2026": want YYYY-MM-DD`},
		{Lot{ID: " KR-7", Received: "2026-11-30", Report: good.Report}, "lot id"},
		{Lot{ID: strings.Repeat("K", MaxIDLen+1), Received: "2026-11-30", Report: good.Report}, "lot id longer"},
		{noReport, "no report"},
	} {
		err := c.lot.Validate()
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Validate(%q, %q) = %v, want %q", c.lot.ID, c.lot.Received, err, c.want)
			continue
		}
		if c.lot.Report != nil {
			if err := CheckLot(c.lot.ID, c.lot.Received); err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("CheckLot(%q, %q) = %v", c.lot.ID, c.lot.Received, err)
			}
		}
	}
	// Add refuses the same lots, naming the register.
	r, path := openTemp(t)
	if _, err := r.Add(context.Background(), Lot{ID: "KR-7", Received: "2026-02-30", Report: good.Report}, false); err == nil ||
		!strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "no such day") {
		t.Errorf("Add of 2026-02-30: %v", err)
	}
}
