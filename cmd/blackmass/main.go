// Command blackmass estimates what a lot of scrap lithium-ion cells holds, what its leach will
// consume and what the leach liquor will be, and writes an intake workbook for the lot.
package main

import (
	"os"
	"runtime/debug"
)

// softMemoryLimit is the heap size at which the collector starts to work harder, unless the
// environment sets GOMEMLIMIT or GOGC. The Monte Carlo's memory is per-sample arrays of floats,
// which the collector marks without scanning, so collecting near the limit costs little; left to
// the default (collect when the heap doubles), the resident size of a large run is twice what
// it holds.
const softMemoryLimit = 192 << 20

func main() {
	if os.Getenv("GOMEMLIMIT") == "" && os.Getenv("GOGC") == "" {
		debug.SetMemoryLimit(softMemoryLimit)
	}
	os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}
