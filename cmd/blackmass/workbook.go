package main

import (
	"fmt"
	"os"
	"path/filepath"

	"blackmass/feed"
	"blackmass/feed/sheet"
)

// checkWritable refuses to go on if path exists and force is not set, before any work is done.
func checkWritable(path string, force bool) error {
	if _, err := os.Stat(path); err == nil && !force {
		return fmt.Errorf("%s exists; pass --force to overwrite it", path)
	}
	return nil
}

// writeWorkbook writes the intake workbook atomically: a temporary file in the same directory,
// synced, then renamed over path. A failure leaves nothing behind.
func writeWorkbook(path string, r *feed.Report, force bool) (err error) {
	if err := checkWritable(path, force); err != nil {
		return err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), ".blackmass-*.xlsx")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			_ = os.Remove(tmp.Name())
		}
	}()
	if err = sheet.Write(tmp, r); err != nil {
		_ = tmp.Close()
		return err
	}
	if err = tmp.Sync(); err != nil {
		_ = tmp.Close()
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}
