package report

import (
	"iter"
	"runtime"

	"blackmass/feed/lot"
)

// linesPerChunk is how many of Lines (the lines of a report made in full) WriteLines gives one
// worker; the kept lines go in the lot's own chunks.
const linesPerChunk = 1024

// lineChunks is the report's lines as chunks that may be read side by side.
func (r *Report) lineChunks() (n int, chunk func(c int) iter.Seq2[int, lot.LineResult]) {
	if r.Lines == nil && r.KeptLines != nil {
		return r.KeptLines.Chunks(), r.KeptLines.Chunk
	}
	n = (len(r.Lines) + linesPerChunk - 1) / linesPerChunk
	return n, func(c int) iter.Seq2[int, lot.LineResult] {
		return func(yield func(int, lot.LineResult) bool) {
			for i := c * linesPerChunk; i < min((c+1)*linesPerChunk, len(r.Lines)); i++ {
				if !yield(i, r.Lines[i]) {
					return
				}
			}
		}
	}
}

// WriteLines renders every line with appendLine, a chunk of lines per worker side by side (one
// per processor), and hands each chunk's bytes to write in the manifest's order, so the output
// is the same on any number of processors. appendLine is called from several goroutines at once
// and must only read what it shares. The first error stops the writing and is returned.
func (r *Report) WriteLines(appendLine func(b []byte, i int, l lot.LineResult) ([]byte, error), write func([]byte) error) error {
	n, chunk := r.lineChunks()
	type rendered struct {
		b    []byte
		err  error
		done chan struct{}
	}
	var (
		pending []*rendered
		free    [][]byte // buffers written, for the next chunks
		err     error
	)
	flushOldest := func() {
		d := pending[0]
		pending = pending[1:]
		<-d.done
		if err == nil {
			if err = d.err; err == nil {
				err = write(d.b)
			}
		}
		free = append(free, d.b[:0])
	}
	limit := runtime.GOMAXPROCS(0) // chunks in flight at most
	for c := 0; c < n && err == nil; c++ {
		d := &rendered{done: make(chan struct{})}
		if k := len(free); k > 0 {
			d.b, free = free[k-1], free[:k-1]
		}
		pending = append(pending, d)
		go func() {
			defer close(d.done)
			for i, l := range chunk(c) {
				if d.b, d.err = appendLine(d.b, i, l); d.err != nil {
					return
				}
			}
		}()
		for len(pending) > limit {
			flushOldest()
		}
	}
	for len(pending) > 0 {
		flushOldest()
	}
	return err
}
