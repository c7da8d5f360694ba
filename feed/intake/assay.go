package intake

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/assay"
)

// maxAssaySumWtPct is the highest total an assay's elements may reach: 100 % plus the rounding
// of a closed analysis.
const maxAssaySumWtPct = 100.5

// minAssayWtPct is the smallest non-zero assay value accepted: 0.01 ppm, below the reporting
// limit of ICP-OES and ICP-MS black-mass assays (common practice).
const minAssayWtPct = 1e-6

var assayUnits = map[string]float64{"wt%": 1, "%": 1, "wt.%": 1, "pct": 1, "g/kg": 0.1, "mg/kg": 1e-4, "ppm": 1e-4, "mg/g": 0.1}

// ReadAssay reads an assay CSV: columns element, value, unit (wt%, g/kg, mg/kg or ppm), an
// optional uncertainty column (± in the same unit, a standard uncertainty) and an optional
// detection-limit column (LOD, LOQ, detection limit). A value below the detection limit
// ("<0.05", "< 50 ppm", "n.d.", "ND", "BDL", "<LOD" with the limit in its column) is censored:
// somewhere from 0 to the limit. A moisture row (element moisture, H2O or water; wt% of the wet
// sample) is kept apart from the elements, which labs report on the dry sample. Refused: unknown
// elements or units, negative values, duplicates, a value below detection with no limit, and
// elements summing past 100 %.
func ReadAssay(r io.Reader, name string) (*assay.Assay, error) {
	br, err := openSideFile(r, name)
	if err != nil {
		return nil, err
	}
	cr := data.NewCSVReader(br, assaySeparator(br))
	cr.FieldsPerRecord = -1 // the uncertainty may be left off a row
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, &Error{File: name, Reason: "empty file"}
	}
	if err != nil {
		return nil, wrapCSV(name, err)
	}
	idx, err := assayHeader(header, name)
	if err != nil {
		return nil, err
	}
	// Only the symbols are checked here (is it an element, is it a metal), and those are
	// IUPAC's, not a table a user edits; the weights that turn wt% into moles come later, from
	// the tables the calculation is given.
	ar := assayRow{name: name, idx: idx, width: len(header), es: cathode.DefaultElements(), seen: map[string]int{}}
	a := &assay.Assay{File: name}
	sum := 0.0
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, wrapCSV(name, err)
		}
		line, _ := cr.FieldPos(0)
		if blank(rec) {
			continue
		}
		av, err := ar.read(rec, line)
		if err != nil {
			return nil, err
		}
		if av.Element == moistureElement {
			a.Moisture = &av
			continue
		}
		sum += av.WtPct
		a.Values = append(a.Values, av)
	}
	if len(a.Values) == 0 {
		return nil, &Error{File: name, Reason: "no assay rows"}
	}
	if sum > maxAssaySumWtPct {
		return nil, &Error{File: name, Reason: fmt.Sprintf("elements sum to %.2f wt%%, past 100 %%", sum)}
	}
	return a, nil
}

// assaySeparator is ';' when the assay's header (its first line that is neither blank nor a
// comment) holds semicolons and no commas, as spreadsheets of decimal-comma locales save CSV;
// else ','. Its numbers then take a decimal comma, which ParseNumber reads ("14,2").
func assaySeparator(br *bufio.Reader) rune {
	head, _ := br.Peek(br.Size())
	for len(head) > 0 {
		line, rest, _ := bytes.Cut(head, []byte("\n"))
		head = rest
		if t := bytes.TrimSpace(line); len(t) == 0 || t[0] == '#' {
			continue
		}
		if bytes.IndexByte(line, ';') >= 0 && bytes.IndexByte(line, ',') < 0 {
			return ';'
		}
		break
	}
	return ','
}

// moistureElement is the element name a moisture row is kept under.
const moistureElement = "H2O"

// moistureWords name a moisture row in the element column.
var moistureWords = map[string]bool{"moisture": true, "h2o": true, "water": true, "moisture content": true, "free moisture": true}

// assayRow reads the rows of one assay file.
type assayRow struct {
	name string
	idx  map[string]int
	// width is the number of the header's columns.
	width int
	es    *cathode.Elements
	seen  map[string]int
}

func (ar *assayRow) fail(line int, col, val, reason string) error {
	return &Error{File: ar.name, Line: line, Column: col, Value: val, Reason: reason}
}

// read reads one row: the element (or moisture), its value, censored or not, and uncertainty.
func (ar *assayRow) read(rec []string, line int) (assay.Value, error) {
	get := func(c string) string {
		if i, ok := ar.idx[c]; ok && i < len(rec) {
			return trimSpace(rec[i])
		}
		return ""
	}
	for i, f := range rec {
		if !utf8.ValidString(f) {
			return assay.Value{}, ar.fail(line, "", "", "not valid UTF-8")
		}
		if i >= ar.width && trimSpace(f) != "" {
			return assay.Value{}, ar.fail(line, fmt.Sprintf("column %d", i+1), f,
				fmt.Sprintf("a value beyond the header's %d columns", ar.width)+decimalCommaSplit(rec))
		}
	}
	el := get("element")
	if moistureWords[strings.ToLower(el)] {
		el = moistureElement
	} else if ar.es.Lookup(el) == nil {
		return assay.Value{}, ar.fail(line, "element", el, "not an element of the atomic-weight table (symbols such as Co, Ni, Li; case matters: Co, not CO)")
	}
	if prev, dup := ar.seen[el]; dup {
		return assay.Value{}, ar.fail(line, "element", get("element"), fmt.Sprintf("given twice (first on line %d)", prev))
	}
	ar.seen[el] = line
	av := assay.Value{Element: el, Line: line, Basis: assay.BasisAssay}
	cv, err := readCensorable(get("value"), get("unit"), get("lod"))
	if err != nil {
		return av, ar.fail(line, err.col, err.val, err.reason)
	}
	if cv.censored {
		av.Censor(cv.limitWtPct)
		return av, nil
	}
	av.WtPct = cv.wtPct
	if us := get("uncertainty"); us != "" {
		u, err := ParseNumber(strings.TrimPrefix(us, "±"), false)
		if err != nil || u < 0 || u*cv.factor > 100 {
			return av, ar.fail(line, "uncertainty", us, "want a non-negative number in the value's unit, at most 100 wt%")
		}
		av.SigmaWtPct = u * cv.factor
	} else {
		av.SigmaWtPct, av.SigmaAssumed = assay.DefaultSigmaRel*av.WtPct, true
	}
	if el == moistureElement && av.WtPct >= 95 {
		return av, ar.fail(line, "value", get("value"), "moisture must be below 95 wt% of the wet sample")
	}
	return av, nil
}

func wrapCSV(name string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{File: name, Line: pe.Line, Reason: pe.Err.Error()}
	}
	return fmt.Errorf("%s: %w", name, err)
}

// assayInfoColumns are columns labs add that carry no value the reading needs; they are read
// past, by name, so that no other column is dropped unseen.
var assayInfoColumns = map[string]bool{"lab": true, "sample": true, "sample_id": true, "method": true,
	"notes": true, "note": true, "comment": true, "comments": true, "date": true}

// assayHeader maps the assay's columns (with their synonyms); an unknown column is an error.
func assayHeader(header []string, name string) (map[string]int, error) {
	idx := map[string]int{}
	for i, h := range header {
		k := strings.ToLower(trimSpace(h))
		switch k {
		case "±", "+/-", "uncertainty", "sigma", "u", "plus_minus", "error":
			k = "uncertainty"
		case "symbol", "analyte":
			k = "element"
		case "result", "content":
			k = "value"
		case "lod", "loq", "dl", "mdl", "detection limit", "detection_limit", "limit", "reporting limit", "lod/loq":
			k = "lod"
		case "element", "value", "unit":
		default:
			if assayInfoColumns[strings.ReplaceAll(k, " ", "_")] || k == "" {
				continue
			}
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("unrecognised column %q (want element, value, unit, uncertainty, LOD; lab, sample, method, notes are read past)", Printable(h, 40))}
		}
		if _, dup := idx[k]; dup {
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("duplicate column %q", Printable(h, 40))}
		}
		idx[k] = i
	}
	for _, c := range []string{"element", "value", "unit"} {
		if _, ok := idx[c]; !ok {
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("missing column %q (want element, value, unit and optionally uncertainty)", c)}
		}
	}
	return idx, nil
}
