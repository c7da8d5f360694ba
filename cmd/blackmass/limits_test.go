package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// An assay far past the side files' cap is refused by name at the cap; an endless one
// (/dev/zero) is refused too, promptly, because it is never read whole.
func TestQuoteAssayCapped(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "assay.csv")
	body := "element,value,unit,uncertainty,notes\nCo,20.5,wt%,0.4," + strings.Repeat("x", 5<<20)
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := cli(t, "", "quote", path, "--mass", "100kg")
	if code == 0 || !strings.Contains(stderr, "assay.csv") || !strings.Contains(stderr, "larger than 1024 KiB") {
		t.Errorf("exit %d: %s", code, stderr)
	}
	if _, err := os.Stat("/dev/zero"); err != nil {
		return
	}
	done := make(chan string, 1)
	go func() {
		code, _, stderr := cli(t, "", "quote", "/dev/zero", "--mass", "100kg")
		done <- fmt.Sprintf("%d %s", code, stderr)
	}()
	select {
	case got := <-done:
		if strings.HasPrefix(got, "0 ") || !strings.Contains(got, "/dev/zero") {
			t.Errorf("endless assay: %s", got)
		}
	case <-time.After(20 * time.Second):
		t.Error("an endless assay was still being read after 20 s")
	}
}

// A lot recorded without a supplier says so in lot show, rather than "from ;".
func TestLotShowWithoutSupplier(t *testing.T) {
	t.Parallel()
	db := filepath.Join(t.TempDir(), "r.db")
	if code, _, errs := cli(t, "", "lot", "add", "../../data/demo/lot-KR-2611.csv", "--lot", "NS-1", "--db", db,
		"--samples", "100", "--received", "2026-11-30"); code != 0 {
		t.Fatalf("lot add: %s", errs)
	}
	code, out, errs := cli(t, "", "lot", "show", "NS-1", "--db", db)
	if code != 0 || strings.Contains(out, "from ;") || !strings.Contains(out, "received 2026-11-30, no supplier given") {
		t.Errorf("exit %d: %s%s", code, out, errs)
	}
}
