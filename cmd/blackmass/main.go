// Command blackmass estimates what a lot of scrap lithium-ion cells holds, what its leach will
// consume and what the leach liquor will be, and writes an intake workbook for the lot.
package main

import (
	"os"
	"runtime"
	"runtime/debug"
	"runtime/metrics"
)

// gcPercent is the heap growth, in per cent of what the last collection kept, that starts the
// next collection once a run holds more than gcSmallHeapBytes, unless the environment sets GOGC
// or GOMEMLIMIT. The Monte Carlo's memory is per-sample arrays of floats, which the collector
// marks without scanning, so collecting often costs little; left to the default (collect when
// the heap doubles), the resident size of a large run is twice what it holds. A percentage,
// unlike a fixed limit, keeps the cost in proportion however much a run holds.
const gcPercent = 25

// gcSmallHeapBytes is the live heap below which the default growth (100 %) stands: a run that
// holds little (a manifest streamed to its sums) would otherwise collect every megabyte, about
// a tenth of its time, to keep a few megabytes from growing to a few more.
const gcSmallHeapBytes = 32 << 20

func main() {
	if os.Getenv("GOGC") == "" && os.Getenv("GOMEMLIMIT") == "" {
		tuneGC()
	}
	os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// tuneGC sets the heap growth after every collection from the heap it left live: 100 % while
// that is under gcSmallHeapBytes, gcPercent above.
func tuneGC() {
	sample := []metrics.Sample{{Name: "/gc/heap/live:bytes"}}
	current := 100
	var arm func()
	arm = func() {
		// The finalizer runs after the first collection that finds the sentinel unreachable.
		runtime.SetFinalizer(new([64]byte), func(*[64]byte) {
			metrics.Read(sample)
			want := 100
			if sample[0].Value.Kind() == metrics.KindUint64 && sample[0].Value.Uint64() > gcSmallHeapBytes {
				want = gcPercent
			}
			if want != current {
				debug.SetGCPercent(want)
				current = want
			}
			arm()
		})
	}
	arm()
}
