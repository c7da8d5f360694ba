package sheet

import (
	"archive/zip"
	"bytes"
	"io"
	"regexp"
	"slices"
	"sort"
)

// contentTypeItem is one <Default> or <Override> element of [Content_Types].xml.
var contentTypeItem = regexp.MustCompile(`<(Default|Override) [^>]*>(</(Default|Override)>)?|<(Default|Override) [^>]*/>`)

// normaliseZip rewrites an .xlsx so that the same workbook always gives the same bytes: parts in
// name order, and the [Content_Types].xml entries (which the xlsx library writes in map order)
// sorted. Nothing else changes.
func normaliseZip(in []byte, w io.Writer) error {
	zr, err := zip.NewReader(bytes.NewReader(in), int64(len(in)))
	if err != nil {
		return err
	}
	files := slices.Clone(zr.File)
	sort.Slice(files, func(i, j int) bool { return files[i].Name < files[j].Name })
	zw := zip.NewWriter(w)
	for _, f := range files {
		if f.Name != "[Content_Types].xml" {
			// Copied as compressed, without inflating and deflating again.
			if err := zw.Copy(f); err != nil {
				return err
			}
			continue
		}
		rc, err := f.Open()
		if err != nil {
			return err
		}
		body, err := io.ReadAll(rc)
		_ = rc.Close()
		if err != nil {
			return err
		}
		out, err := zw.CreateHeader(&zip.FileHeader{Name: f.Name, Method: zip.Deflate})
		if err != nil {
			return err
		}
		if _, err := out.Write(sortContentTypes(body)); err != nil {
			return err
		}
	}
	return zw.Close()
}

// sortContentTypes orders the <Default> elements, then the <Override> elements, by their text.
func sortContentTypes(b []byte) []byte {
	locs := contentTypeItem.FindAllIndex(b, -1)
	if len(locs) == 0 {
		return b
	}
	items := make([][]byte, len(locs))
	for i, l := range locs {
		items[i] = b[l[0]:l[1]]
	}
	sorted := slices.Clone(items)
	sort.SliceStable(sorted, func(i, j int) bool {
		di, dj := bytes.HasPrefix(sorted[i], []byte("<Default")), bytes.HasPrefix(sorted[j], []byte("<Default"))
		if di != dj {
			return di
		}
		return bytes.Compare(sorted[i], sorted[j]) < 0
	})
	var out bytes.Buffer
	out.Write(b[:locs[0][0]])
	for _, it := range sorted {
		out.Write(it)
	}
	out.Write(b[locs[len(locs)-1][1]:])
	return out.Bytes()
}
