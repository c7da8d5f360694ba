package main

import (
	"fmt"
	"os"

	"blackmass/feed"
)

// checkWritable refuses to go on if path exists and force is not set, before any work is done.
func checkWritable(path string, force bool) error {
	if _, err := os.Stat(path); err == nil && !force {
		return fmt.Errorf("%s exists; pass --force to overwrite it", path)
	}
	return nil
}

func writeWorkbook(path string, r *feed.Report, force bool) error {
	return fmt.Errorf("the intake workbook is not available yet")
}
