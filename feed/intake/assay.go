package intake

import (
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

// ReadAssay reads an assay CSV: columns element, value, unit (wt%, g/kg, mg/kg or ppm) and an
// optional uncertainty column (± in the same unit, a standard uncertainty). Refused: unknown
// elements or units, negative values, duplicates, and elements summing past 100 %.
func ReadAssay(r io.Reader, name string) (*assay.Assay, error) {
	br, err := openSideFile(r, name)
	if err != nil {
		return nil, err
	}
	cr := data.NewCSVReader(br, ',')
	cr.FieldsPerRecord = -1 // the uncertainty may be left off a row
	fail := func(line int, col, val, reason string) error {
		return &Error{File: name, Line: line, Column: col, Value: val, Reason: reason}
	}
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, fail(0, "", "", "empty file")
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
	es := cathode.DefaultElements()
	a := &assay.Assay{File: name}
	seen := map[string]int{}
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
		get := func(c string) string {
			if i, ok := idx[c]; ok && i < len(rec) {
				return strings.TrimSpace(rec[i])
			}
			return ""
		}
		if blank(rec) {
			continue
		}
		for i, f := range rec {
			if !utf8.ValidString(f) {
				return nil, fail(line, "", "", "not valid UTF-8")
			}
			if i >= len(header) && strings.TrimSpace(f) != "" {
				return nil, fail(line, fmt.Sprintf("column %d", i+1), f, fmt.Sprintf("a value beyond the header's %d columns", len(header)))
			}
		}
		el := get("element")
		if es.Lookup(el) == nil {
			return nil, fail(line, "element", el, "not an element of the atomic-weight table (symbols such as Co, Ni, Li; case matters: Co, not CO)")
		}
		if prev, dup := seen[el]; dup {
			return nil, fail(line, "element", el, fmt.Sprintf("given twice (first on line %d)", prev))
		}
		seen[el] = line
		unit := strings.ToLower(strings.ReplaceAll(get("unit"), " ", ""))
		f, ok := assayUnits[unit]
		if !ok {
			return nil, fail(line, "unit", get("unit"), "unknown unit (want wt%, g/kg, mg/kg or ppm)")
		}
		v, err := ParseNumber(get("value"), false)
		if err != nil {
			return nil, fail(line, "value", get("value"), err.Error())
		}
		if v < 0 {
			return nil, fail(line, "value", get("value"), "negative")
		}
		if v > 0 && v*f < minAssayWtPct {
			return nil, fail(line, "value", get("value"), fmt.Sprintf("below %g wt%% (0.01 ppm), under any lab's reporting limit: give 0", minAssayWtPct))
		}
		av := assay.Value{Element: el, WtPct: v * f, Line: line}
		if us := get("uncertainty"); us != "" {
			u, err := ParseNumber(strings.TrimPrefix(us, "±"), false)
			if err != nil || u < 0 || u*f > 100 {
				return nil, fail(line, "uncertainty", us, "want a non-negative number in the value's unit, at most 100 wt%")
			}
			av.SigmaWtPct = u * f
		} else {
			av.SigmaWtPct, av.SigmaAssumed = assay.DefaultSigmaRel*av.WtPct, true
		}
		if av.WtPct > 100 {
			return nil, fail(line, "value", get("value"), "more than 100 wt%")
		}
		sum += av.WtPct
		a.Values = append(a.Values, av)
	}
	if len(a.Values) == 0 {
		return nil, fail(0, "", "", "no assay rows")
	}
	if sum > maxAssaySumWtPct {
		return nil, fail(0, "", "", fmt.Sprintf("elements sum to %.2f wt%%, past 100 %%", sum))
	}
	return a, nil
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
var assayInfoColumns = map[string]bool{"lab": true, "sample": true, "sample_id": true, "method": true, "lod": true, "loq": true,
	"notes": true, "note": true, "comment": true, "comments": true, "date": true}

// assayHeader maps the assay's columns (with their synonyms); an unknown column is an error.
func assayHeader(header []string, name string) (map[string]int, error) {
	idx := map[string]int{}
	for i, h := range header {
		k := strings.ToLower(strings.TrimSpace(h))
		switch k {
		case "±", "+/-", "uncertainty", "sigma", "u", "plus_minus", "error":
			k = "uncertainty"
		case "symbol", "analyte":
			k = "element"
		case "result", "content":
			k = "value"
		case "element", "value", "unit":
		default:
			if assayInfoColumns[strings.ReplaceAll(k, " ", "_")] || k == "" {
				continue
			}
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("unrecognised column %q (want element, value, unit, uncertainty; lab, sample, method, LOD, notes are read past)", Printable(h, 40))}
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
