package intake

import (
	"archive/zip"
	"bufio"
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"path"
	"strings"
)

// Bounds the workbook's parts are held to before excelize reads them, so that what it keeps in
// memory stays in proportion to the manifest, not to the file's inflated size.
const (
	// maxXMLRun is the longest stretch of a part without '<' or '>': a cell's text or a tag. A
	// manifest cell holds at most MaxTextBytes; megabytes of blanks between two tags, or one
	// huge shared string, are no manifest.
	maxXMLRun = MaxLineBytes
	// maxSharedStringsBytes bounds the shared-strings part (every distinct text of the
	// workbook), which excelize holds in memory: about 8 MiB of XML per 100,000 lines with
	// distinct ids and descriptions.
	maxSharedStringsBytes = 32 << 20
	// maxBlankRows bounds consecutive empty rows (rows a spreadsheet program wrote for a
	// format, or a jump to row 1,000,000); the manifest's own lines may run to MaxLines.
	maxBlankRows = 10_000
	maxPartBytes = 1 << 20 // workbook.xml and the relationship parts
)

// xlsxZip is the workbook's zip with the paths of its sheets' parts.
type xlsxZip struct {
	zr     *zip.Reader
	files  map[string]*zip.File
	sheets map[string]string // sheet name -> part path
}

// openXLSXZip opens the workbook's parts and checks every one: the total inflated size, no
// overlong run of text, a bounded shared-strings part.
func openXLSXZip(ra io.ReaderAt, size int64) (*xlsxZip, error) {
	zr, err := zip.NewReader(ra, size)
	if err != nil {
		return nil, err
	}
	z := &xlsxZip{zr: zr, files: map[string]*zip.File{}, sheets: map[string]string{}}
	total := int64(0)
	for _, f := range zr.File {
		z.files[strings.TrimPrefix(f.Name, "/")] = f
		if !strings.HasSuffix(f.Name, ".xml") && !strings.HasSuffix(f.Name, ".rels") {
			continue
		}
		n, err := scanPart(f, MaxUnzippedBytes-total)
		if err != nil {
			return nil, fmt.Errorf("part %s: %w", Printable(f.Name, 60), err)
		}
		if strings.HasSuffix(f.Name, "sharedStrings.xml") && n > maxSharedStringsBytes {
			return nil, fmt.Errorf("the shared strings hold %d MiB, more than the %d MiB a manifest needs", n>>20, maxSharedStringsBytes>>20)
		}
		total += n
	}
	if err := z.findSheets(); err != nil {
		return nil, err
	}
	return z, nil
}

// scanPart reads a part through, refusing it past left inflated bytes or with a run of more
// than maxXMLRun bytes without '<' or '>'. It returns the part's inflated size.
func scanPart(f *zip.File, left int64) (int64, error) {
	rc, err := f.Open()
	if err != nil {
		return 0, err
	}
	defer rc.Close()
	buf := make([]byte, 64<<10)
	total, run := int64(0), 0
	for {
		n, err := rc.Read(buf)
		total += int64(n)
		if total > left {
			return total, fmt.Errorf("the workbook inflates past %d MiB", MaxUnzippedBytes>>20)
		}
		for b := buf[:n]; len(b) > 0; {
			i := bytes.IndexAny(b, "<>")
			if i < 0 {
				run += len(b)
				break
			}
			run += i
			if run > maxXMLRun {
				break
			}
			run, b = 0, b[i+1:]
		}
		if run > maxXMLRun {
			return total, fmt.Errorf("more than %d KiB of text or blanks in one place: no manifest cell is that long", maxXMLRun>>10)
		}
		if errors.Is(err, io.EOF) {
			return total, nil
		}
		if err != nil {
			return total, err
		}
	}
}

// readPart unmarshals a small part (at most maxPartBytes) into v; a missing part leaves v.
func (z *xlsxZip) readPart(name string, v any) error {
	f := z.files[name]
	if f == nil {
		return nil
	}
	rc, err := f.Open()
	if err != nil {
		return err
	}
	defer rc.Close()
	b, err := io.ReadAll(io.LimitReader(rc, maxPartBytes+1))
	if err != nil {
		return err
	}
	if len(b) > maxPartBytes {
		return fmt.Errorf("part %s is larger than %d KiB", name, maxPartBytes>>10)
	}
	return xml.Unmarshal(b, v)
}

type xmlRels struct {
	Rels []struct {
		ID     string `xml:"Id,attr"`
		Type   string `xml:"Type,attr"`
		Target string `xml:"Target,attr"`
	} `xml:"Relationship"`
}

// findSheets maps each sheet's name to its part, as the package's relationships give them.
func (z *xlsxZip) findSheets() error {
	var root xmlRels
	if err := z.readPart("_rels/.rels", &root); err != nil {
		return err
	}
	wb := "xl/workbook.xml"
	for _, r := range root.Rels {
		if strings.HasSuffix(r.Type, "/officeDocument") {
			wb = strings.TrimPrefix(r.Target, "/")
		}
	}
	var book struct {
		Sheets []struct {
			Name string `xml:"name,attr"`
			RID  string `xml:"http://schemas.openxmlformats.org/officeDocument/2006/relationships id,attr"`
		} `xml:"sheets>sheet"`
	}
	if err := z.readPart(wb, &book); err != nil {
		return err
	}
	var rels xmlRels
	dir := path.Dir(wb)
	if err := z.readPart(path.Join(dir, "_rels", path.Base(wb)+".rels"), &rels); err != nil {
		return err
	}
	for _, s := range book.Sheets {
		for _, r := range rels.Rels {
			if r.ID != s.RID {
				continue
			}
			p := path.Join(dir, r.Target)
			if strings.HasPrefix(r.Target, "/") {
				p = strings.TrimPrefix(r.Target, "/")
			}
			z.sheets[s.Name] = p
		}
	}
	return nil
}

// sheetReader opens the part of the named sheet.
func (z *xlsxZip) sheetReader(sheet string) (io.ReadCloser, error) {
	for name, p := range z.sheets {
		if strings.EqualFold(name, sheet) && z.files[p] != nil {
			return z.files[p].Open()
		}
	}
	return nil, fmt.Errorf("no part for sheet %q", sheet)
}

// bufferedReader is a reader for encoding/xml that needs no extra buffer of its own.
func bufferedReader(r io.Reader) *bufio.Reader { return bufio.NewReaderSize(r, 64<<10) }
