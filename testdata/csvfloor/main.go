// Command csvfloor is the floor the whole command is measured against: it reads a manifest with
// encoding/csv and parses the capacity column's number, nothing more (see DEVELOPERS.md,
// Performance):
//
//	go run ./testdata/csvfloor /tmp/1m.csv
package main

import (
	"bufio"
	"fmt"
	"os"

	"blackmass/feed/manifest/manifesttest"
)

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "csvfloor: want a manifest path")
		os.Exit(2)
	}
	f, err := os.Open(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, "csvfloor:", err)
		os.Exit(1)
	}
	defer f.Close()
	n, sum, err := manifesttest.CSVFloor(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		fmt.Fprintln(os.Stderr, "csvfloor:", err)
		os.Exit(1)
	}
	fmt.Printf("%d lines, capacity sum %g\n", n, sum)
}
