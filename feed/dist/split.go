package dist

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// splitMin is the smallest share of samples worth a goroutine of its own.
const splitMin = 4096

// Split calls f over [0, n) in contiguous ranges [lo, hi), one per processor (a single call
// below 2·splitMin), and waits for them all. f must write only to its own range: the result
// is then the same whatever the number of processors.
func Split(n int, f func(lo, hi int)) {
	w := min(runtime.GOMAXPROCS(0), n/splitMin)
	if w <= 1 {
		f(0, n)
		return
	}
	var wg sync.WaitGroup
	for k := range w {
		lo, hi := k*n/w, (k+1)*n/w
		wg.Go(func() { f(lo, hi) })
	}
	wg.Wait()
}

// Each calls f(i) for i in [0, n), spread over the processors, and waits for them all. f must
// write only to what belongs to i.
func Each(n int, f func(i int)) {
	w := min(runtime.GOMAXPROCS(0), n)
	if w <= 1 {
		for i := range n {
			f(i)
		}
		return
	}
	var wg sync.WaitGroup
	var next atomic.Int64 // the next i to take
	for range w {
		wg.Go(func() {
			for i := int(next.Add(1) - 1); i < n; i = int(next.Add(1) - 1) {
				f(i)
			}
		})
	}
	wg.Wait()
}
