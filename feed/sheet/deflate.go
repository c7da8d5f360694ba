package sheet

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"errors"
	"hash/crc32"
	"io"
	"io/fs"
	"runtime"
	"sync"

	"github.com/xuri/excelize/v2"
)

// deflateBlockBytes is the input of one block that blockZip deflates on its own. Each block
// starts without the window of the one before, which costs well under 1 % of the size of a
// sheet's XML; the blocks are the same on any number of processors, so are the bytes.
const deflateBlockBytes = 1 << 20

// deflateLevel is the compression of a workbook's parts. Level 3 against the default 6, on a
// manifest of 230,000 lines: 4.0 s against 5.9 s for the whole command on two processors, the
// file 26.7 MB against 22.9 (level 2: 3.8 s, 29.3 MB; level 1: 3.7 s, 34.2 MB).
const deflateLevel = 3

// blockZip is the zip writer the xlsx library writes a workbook with: each part is cut into
// blocks deflated side by side, one per processor, and written in order as one deflate stream
// (every block but the last ends on a sync flush, which carries no end mark). The sizes and the
// checksum go in the data descriptor after the part, as the zip format allows for a part whose
// sizes are not known before it is written.
//
// A part named in splices is held as the library writes it and then written by its splice
// function, which puts in what the library never held (the Lines sheet's rows).
type blockZip struct {
	zw      *zip.Writer
	part    *blockPart // the part being written, if any
	splices map[string]splice
	held    *heldPart // the part being held for its splice, if any
}

// splice writes a part to out from the bytes the xlsx library gave for it.
type splice func(part []byte, out io.Writer) error

type heldPart struct {
	name string
	fn   splice
	buf  bytes.Buffer
}

// newBlockZip returns the xlsx library's zip writer, with the parts of splices written by them.
func newBlockZip(splices map[string]splice) func(io.Writer) excelize.ZipWriter {
	return func(w io.Writer) excelize.ZipWriter { return &blockZip{zw: zip.NewWriter(w), splices: splices} }
}

func (z *blockZip) Create(name string) (io.Writer, error) {
	if err := z.endPart(); err != nil {
		return nil, err
	}
	if fn := z.splices[name]; fn != nil {
		z.held = &heldPart{name: name, fn: fn}
		return &z.held.buf, nil
	}
	return z.create(name)
}

func (z *blockZip) create(name string) (*blockPart, error) {
	fh := &zip.FileHeader{Name: name, Method: zip.Deflate, Flags: 0x8}
	out, err := z.zw.CreateRaw(fh)
	if err != nil {
		return nil, err
	}
	z.part = newBlockPart(fh, out)
	return z.part, nil
}

func (z *blockZip) AddFS(fsys fs.FS) error {
	if err := z.endPart(); err != nil {
		return err
	}
	return z.zw.AddFS(fsys)
}

func (z *blockZip) Close() error {
	if err := z.endPart(); err != nil {
		return err
	}
	return z.zw.Close()
}

func (z *blockZip) endPart() error {
	if h := z.held; h != nil {
		z.held = nil
		p, err := z.create(h.name)
		if err != nil {
			return err
		}
		if err := h.fn(h.buf.Bytes(), p); err != nil {
			return err
		}
	}
	if z.part == nil {
		return nil
	}
	p := z.part
	z.part = nil
	return p.close()
}

// blockPart deflates one part: Write gathers a block, hands it to a worker and writes the
// finished blocks in the order they were cut.
type blockPart struct {
	fh      *zip.FileHeader
	out     io.Writer
	crc     uint32
	raw     uint64 // bytes in
	comp    uint64 // bytes out
	buf     []byte
	pending []*deflated // cut, in order, not yet written
	limit   int         // blocks in flight at most
	err     error
}

// deflated is one block on its way through a worker.
type deflated struct {
	out  *bytes.Buffer
	err  error
	done chan struct{}
}

// The compressors, blocks and their outputs are reused: a large part is many blocks.
var (
	flateWriters = sync.Pool{New: func() any {
		w, _ := flate.NewWriter(io.Discard, deflateLevel)
		return w
	}}
	blockBufs  = sync.Pool{New: func() any { b := make([]byte, 0, deflateBlockBytes); return &b }}
	outputBufs = sync.Pool{New: func() any { return new(bytes.Buffer) }}
)

func newBlock() []byte { return (*blockBufs.Get().(*[]byte))[:0] }

func newBlockPart(fh *zip.FileHeader, out io.Writer) *blockPart {
	return &blockPart{fh: fh, out: out, limit: 2 * runtime.GOMAXPROCS(0), buf: newBlock()}
}

func (p *blockPart) Write(b []byte) (int, error) {
	if p.err != nil {
		return 0, p.err
	}
	n := len(b)
	p.crc = crc32.Update(p.crc, crc32.IEEETable, b)
	p.raw += uint64(n)
	for len(b) > 0 {
		k := min(len(b), deflateBlockBytes-len(p.buf))
		p.buf = append(p.buf, b[:k]...)
		b = b[k:]
		if len(p.buf) == deflateBlockBytes {
			p.cut(false)
		}
	}
	return n, p.err
}

// cut sends the gathered block to a worker (last: it ends the stream) and writes the blocks
// that are done, waiting for the oldest while too many are in flight.
func (p *blockPart) cut(last bool) {
	in := p.buf
	p.buf = newBlock()
	d := &deflated{out: outputBufs.Get().(*bytes.Buffer), done: make(chan struct{})}
	d.out.Reset()
	p.pending = append(p.pending, d)
	go func() {
		defer close(d.done)
		defer blockBufs.Put(&in)
		fw := flateWriters.Get().(*flate.Writer)
		defer flateWriters.Put(fw)
		fw.Reset(d.out)
		if _, d.err = fw.Write(in); d.err != nil {
			return
		}
		if last {
			d.err = fw.Close()
		} else {
			d.err = fw.Flush()
		}
	}()
	for len(p.pending) > 0 && (len(p.pending) > p.limit || last) {
		p.writeOldest()
	}
}

func (p *blockPart) writeOldest() {
	d := p.pending[0]
	p.pending = p.pending[1:]
	<-d.done
	defer outputBufs.Put(d.out)
	if p.err != nil {
		return
	}
	if d.err != nil {
		p.err = d.err
		return
	}
	n, err := p.out.Write(d.out.Bytes())
	p.comp += uint64(n)
	p.err = err
}

// close ends the stream and puts the sizes and checksum in the part's header.
func (p *blockPart) close() error {
	p.cut(true)
	if p.err != nil {
		return p.err
	}
	if len(p.pending) != 0 {
		return errors.New("sheet: a deflated block was not written")
	}
	p.fh.CRC32, p.fh.UncompressedSize64, p.fh.CompressedSize64 = p.crc, p.raw, p.comp
	p.fh.UncompressedSize, p.fh.CompressedSize = uint32(min(p.raw, 1<<32-1)), uint32(min(p.comp, 1<<32-1))
	return nil
}
