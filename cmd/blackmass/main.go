// Command blackmass estimates what a lot of scrap lithium-ion cells holds, what its leach will
// consume and what the leach liquor will be, and writes an intake workbook for the lot.
package main

import (
	"os"
	"runtime/debug"
)

// softMemoryLimit is the heap size past which the collector runs harder instead of letting
// garbage double the resident memory (a large manifest's run holds about 60-140 MB live; see
// DEVELOPERS.md, Performance). GOMEMLIMIT, when set, takes its place.
const softMemoryLimit = 150 << 20

func main() {
	if _, ok := os.LookupEnv("GOMEMLIMIT"); !ok {
		debug.SetMemoryLimit(softMemoryLimit)
	}
	os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}
