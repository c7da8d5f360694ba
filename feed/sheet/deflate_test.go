package sheet

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
	"runtime"
	"testing"
)

// TestBlockZipReadsBack writes parts of every size around the block size, text-like and
// incompressible, and reads them back with archive/zip (which checks each part's CRC-32 and
// sizes): the same bytes, and the same archive whatever the number of processors.
func TestBlockZipReadsBack(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var parts [][]byte
	for _, n := range []int{0, 1, 100, deflateBlockBytes - 1, deflateBlockBytes, deflateBlockBytes + 1, 5*deflateBlockBytes/2 + 7} {
		text := make([]byte, 0, n)
		for i := 0; len(text) < n; i++ {
			text = fmt.Appendf(text, `<row r="%d"><c r="A%d" t="inlineStr"><is><t>L%d</t></is></c></row>`, i, i, rng.IntN(1000))
		}
		noise := make([]byte, n)
		for i := range noise {
			noise[i] = byte(rng.Uint32())
		}
		parts = append(parts, text[:n], noise)
	}
	write := func() []byte {
		var buf bytes.Buffer
		z := newBlockZip(nil)(&buf)
		for i, p := range parts {
			w, err := z.Create(fmt.Sprintf("xl/part%d.xml", i))
			if err != nil {
				t.Fatal(err)
			}
			for len(p) > 0 { // in uneven writes, as io.Copy and the xlsx library give them
				k := min(len(p), 1+rng.IntN(70_000))
				if _, err := w.Write(p[:k]); err != nil {
					t.Fatal(err)
				}
				p = p[k:]
			}
		}
		if err := z.Close(); err != nil {
			t.Fatal(err)
		}
		return buf.Bytes()
	}
	many := write()
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(1))
	one := write()
	if !bytes.Equal(many, one) {
		t.Error("the archive differs on one processor")
	}
	zr, err := zip.NewReader(bytes.NewReader(many), int64(len(many)))
	if err != nil {
		t.Fatal(err)
	}
	if len(zr.File) != len(parts) {
		t.Fatalf("%d parts read back, want %d", len(zr.File), len(parts))
	}
	for i, f := range zr.File {
		rc, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		got, err := io.ReadAll(rc) // fails on a CRC-32 or size that disagrees
		_ = rc.Close()
		if err != nil {
			t.Fatalf("%s: %v", f.Name, err)
		}
		if !bytes.Equal(got, parts[i]) || f.UncompressedSize64 != uint64(len(parts[i])) {
			t.Errorf("%s: %d bytes back, want %d, or different", f.Name, len(got), len(parts[i]))
		}
	}
}
