package main

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// While a file is written its directory holds nothing (so a process killed mid-write leaves no
// temporary file), and the finished file has its content, with and without force.
func TestWriteLeavesNoNameUntilDone(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := filepath.Join(dir, "lot.xlsx")
	for _, force := range []bool{false, true} {
		err := writeNewFile(path, force, func(w io.Writer) error {
			entries, err := os.ReadDir(dir)
			if err != nil {
				return err
			}
			if n := len(entries); n != 0 && !(force && n == 1 && entries[0].Name() == "lot.xlsx") {
				t.Errorf("force %v: the directory holds %d entries during the write", force, n)
			}
			_, err = io.WriteString(w, "content")
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		if b, _ := os.ReadFile(path); string(b) != "content" {
			t.Errorf("force %v: file holds %q", force, b)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("after the writes the directory holds %d entries", len(entries))
	}
	err := writeNewFile(path, false, func(w io.Writer) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "exists") {
		t.Errorf("no force over an existing file: %v", err)
	}
}
