package sheet

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"io"
	"regexp"
	"slices"
	"sort"
)

// contentTypeItem is one <Default> or <Override> element of [Content_Types].xml.
var contentTypeItem = regexp.MustCompile(`<(Default|Override) [^>]*>(</(Default|Override)>)?|<(Default|Override) [^>]*/>`)

// cachedValue is a formula's computed value, stored beside it.
type cachedValue struct {
	text   string
	number bool
}

// normaliseZip rewrites an .xlsx so that the same workbook always gives the same bytes: parts in
// name order, and the [Content_Types].xml entries (which the xlsx library writes in map order)
// sorted. cached gives, per worksheet part, the values of its formula cells, written after each
// formula (the xlsx library writes formulas without them). Nothing else changes.
func normaliseZip(in []byte, w io.Writer, cached map[string]map[string]cachedValue) error {
	zr, err := zip.NewReader(bytes.NewReader(in), int64(len(in)))
	if err != nil {
		return err
	}
	files := slices.Clone(zr.File)
	sort.Slice(files, func(i, j int) bool { return files[i].Name < files[j].Name })
	zw := zip.NewWriter(w)
	for _, f := range files {
		if f.Name != "[Content_Types].xml" && cached[f.Name] == nil {
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
		if f.Name == "[Content_Types].xml" {
			body = sortContentTypes(body)
		} else {
			body = withCachedValues(body, cached[f.Name])
		}
		if _, err := out.Write(body); err != nil {
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

// formulaCellXML is a formula cell as the xlsx library writes it: no value after the formula.
var formulaCellXML = regexp.MustCompile(`<c r="([A-Z]+[0-9]+)"([^>]*?)( t="str")?><f>([^<]*)</f></c>`)

// withCachedValues writes each formula cell's value after its formula: a number as such, text
// with the cell typed as a formula string.
func withCachedValues(b []byte, vals map[string]cachedValue) []byte {
	return formulaCellXML.ReplaceAllFunc(b, func(m []byte) []byte {
		sub := formulaCellXML.FindSubmatch(m)
		v, ok := vals[string(sub[1])]
		if !ok {
			return m
		}
		var out bytes.Buffer
		out.WriteString(`<c r="` + string(sub[1]) + `"` + string(sub[2]))
		if !v.number {
			out.WriteString(` t="str"`)
		}
		out.WriteString(`><f>` + string(sub[4]) + `</f><v>`)
		_ = xml.EscapeText(&out, []byte(v.text))
		out.WriteString(`</v></c>`)
		return out.Bytes()
	})
}
