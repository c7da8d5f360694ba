// Command genmanifest writes a manifest of N distinct lines to standard output, for load checks
// of the whole command (see DEVELOPERS.md, Performance):
//
//	go run ./testdata/genmanifest 1000000 > /tmp/1m.csv
package main

import (
	"fmt"
	"os"
	"strconv"

	"blackmass/feed/manifest/manifesttest"
)

func main() {
	n := 1_000_000
	if len(os.Args) > 1 {
		v, err := strconv.Atoi(os.Args[1])
		if err != nil || v < 1 {
			fmt.Fprintln(os.Stderr, "genmanifest: want a positive line count")
			os.Exit(2)
		}
		n = v
	}
	if err := manifesttest.Write(os.Stdout, n); err != nil {
		fmt.Fprintln(os.Stderr, "genmanifest:", err)
		os.Exit(1)
	}
}
