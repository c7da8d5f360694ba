// Command blackmass estimates what a lot of scrap lithium-ion cells holds, what its leach will
// consume and what the leach liquor will be, and writes an intake workbook for the lot.
package main

import (
	"os"
	"runtime/debug"
)

// gcPercent is the heap growth, in per cent of what the last collection kept, that starts the
// next collection, unless the environment sets GOGC or GOMEMLIMIT. The Monte Carlo's memory is
// per-sample arrays of floats, which the collector marks without scanning, so collecting often
// costs little; left to the default (collect when the heap doubles), the resident size of a
// large run is twice what it holds. A percentage, unlike a fixed limit, keeps the cost in
// proportion however much a run holds.
const gcPercent = 25

func main() {
	if os.Getenv("GOGC") == "" && os.Getenv("GOMEMLIMIT") == "" {
		debug.SetGCPercent(gcPercent)
	}
	os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}
