package intake

import (
	"errors"
	"fmt"
	"io"
	"runtime"
	"sync"

	"blackmass/feed/manifest"
)

// The lines under the header are read in three steps that overlap: one goroutine splits the
// input into records, a batch at a time; parsers (one per processor, each with its own caches)
// parse the batches side by side; and the caller's goroutine takes the batches back in the order
// they were read, decides which rows the trailer reads past, and hands the lines to fn. Whatever
// a parser finds of a row depends on that row alone, so the lines, notes and the first error
// (by line) are the same on any number of processors (TestPipelineSameAnyShape).

// pipeShape is how the reading is spread: parsers working side by side, records per batch.
type pipeShape struct {
	parsers int
	rows    int
}

// defaultShape is one parser per processor, batches of a few hundred lines: few enough hand-overs
// to cost nothing beside the parsing, small enough that a short manifest is not held up.
func defaultShape() pipeShape { return pipeShape{parsers: runtime.GOMAXPROCS(0), rows: 512} }

// parsedRow is what a parser found of one record.
type parsedRow struct {
	skip       bool // blank, a comment, or values in left-out columns only: not a manifest row
	totalWords bool // its first cell starts a totals row ("Total", "Grand total", "Sum" ...)
	text       bool // no manifest values: free text (see isText)
	line       manifest.Line
	err        error // the parse's error; the trailer decides whether it stands
}

// rowBatch is a run of records on their way from the splitter to a parser and back.
type rowBatch struct {
	fields []string // the records' fields, one record after another
	starts []int    // each field's offset in its record's raw text (valid where raws[i] != "")
	ends   []int    // where record i's fields end in fields and starts
	lines  []int    // the line each record starts on
	raws   []string // the text each record was split from ("" when the source cannot say)
	err    error    // the source's error after the last record (io.EOF at the end); nil: more to come
	out    []parsedRow
	done   chan struct{} // closed when out is filled
}

func (b *rowBatch) reset() {
	b.fields, b.starts, b.ends, b.lines, b.raws = b.fields[:0], b.starts[:0], b.ends[:0], b.lines[:0], b.raws[:0]
	b.err, b.out, b.done = nil, b.out[:0], make(chan struct{})
}

// rec is record i and its fields' offsets.
func (b *rowBatch) rec(i int) (rec []string, starts []int) {
	lo := 0
	if i > 0 {
		lo = b.ends[i-1]
	}
	return b.fields[lo:b.ends[i]:b.ends[i]], b.starts[lo:b.ends[i]:b.ends[i]]
}

// fill reads up to n records from src into b; it stops early at the source's end or error.
func (b *rowBatch) fill(src rowSource, rl rawLiner, n int) {
	for len(b.lines) < n {
		rec, line, err := src.next()
		if err != nil {
			b.err = err
			return
		}
		var raw string
		var starts []int
		if rl != nil {
			raw, starts = rl.rawLine()
		}
		b.fields = append(b.fields, rec...)
		if raw != "" && len(starts) == len(rec) {
			b.starts = append(b.starts, starts...)
		} else {
			raw = ""
			b.starts = append(b.starts, make([]int, len(rec))...)
		}
		b.ends, b.lines, b.raws = append(b.ends, len(b.fields)), append(b.lines, line), append(b.raws, raw)
	}
}

// parseBatch parses every record of b with p.
func (p *lineParser) parseBatch(b *rowBatch) {
	for i, line := range b.lines {
		rec, starts := b.rec(i)
		b.out = append(b.out, parsedRow{})
		row := &b.out[i]
		if blank(rec) || comment(rec) || p.onlyIgnored(rec) {
			row.skip = true
			continue
		}
		p.load(rec)
		p.rowFacts(rec, row)
		row.err = p.parseAlike(&row.line, rec, line, b.raws[i], starts)
	}
	close(b.done)
}

// readLines reads the lines under the header (info says where it is) and hands them to fn in
// order, spread as shape says. It returns once every goroutine it started has stopped.
func readLines(src rowSource, name string, opt Options, decimalComma bool, hdr *header, info *Info, shape pipeShape,
	fn func(manifest.Line) error) error {
	work := make(chan *rowBatch, 2*shape.parsers)
	ordered := make(chan *rowBatch, 4*shape.parsers)
	free := make(chan *rowBatch, 4*shape.parsers+2)
	stop := make(chan struct{})
	var wg sync.WaitGroup
	defer wg.Wait()
	defer close(stop)
	wg.Add(1 + shape.parsers)
	go func() { // the splitter
		defer wg.Done()
		defer close(work)
		defer close(ordered)
		rl, _ := src.(rawLiner)
		for {
			var b *rowBatch
			select {
			case b = <-free:
			default:
				b = &rowBatch{}
			}
			b.reset()
			b.fill(src, rl, shape.rows)
			select {
			case ordered <- b:
			case <-stop:
				return
			}
			select {
			case work <- b:
			case <-stop:
				return
			}
			if b.err != nil {
				return
			}
		}
	}()
	for range shape.parsers {
		go func() {
			defer wg.Done()
			p := newLineParser(name, opt, decimalComma, hdr)
			for b := range work {
				p.parseBatch(b)
			}
		}()
	}
	c := lineConsumer{p: newLineParser(name, opt, decimalComma, hdr), tr: trailer{lastLine: info.HeaderLine}, info: info,
		name: name, fn: fn}
	for b := range ordered {
		<-b.done
		if err := c.batch(b); err != nil {
			return err
		}
		if b.err != nil {
			if errors.Is(b.err, io.EOF) {
				break
			}
			return b.err
		}
		select {
		case free <- b:
		default:
		}
	}
	if info.Lines == 0 {
		return &Error{File: name, Line: info.HeaderLine, Reason: "header but no lines"}
	}
	c.tr.finish(info)
	return nil
}

// lineConsumer takes parsed batches in order: the trailer's decisions, the line count, fn.
type lineConsumer struct {
	p    *lineParser // reads totals rows
	tr   trailer
	info *Info
	name string
	fn   func(manifest.Line) error
}

func (c *lineConsumer) batch(b *rowBatch) error {
	for i, line := range b.lines {
		row := &b.out[i]
		if row.skip {
			continue
		}
		rec, _ := b.rec(i)
		if skip, err := c.tr.skip(c.p, rec, line, row, c.info); skip || err != nil {
			if err != nil {
				return err
			}
			continue
		}
		if c.info.Lines >= MaxLines {
			return &Error{File: c.name, Line: line, Reason: fmt.Sprintf("more than %d lines: split the manifest", MaxLines)}
		}
		if row.err != nil {
			return commentHint(row.err, rec)
		}
		c.tr.add(&row.line, c.info)
		c.info.Lines++
		if err := c.fn(row.line); err != nil {
			var ie *Error
			if errors.As(err, &ie) {
				return err
			}
			return &Error{File: c.name, Line: line, Reason: err.Error()}
		}
	}
	return nil
}
