package intake

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/recover"
)

// maxLiquorGPerL bounds a concentration: above the solubility of any metal sulfate or chloride
// in water (common practice, with a margin).
const maxLiquorGPerL = 500

// ReadLiquor reads a measured liquor: a header row element,value,unit then one row per
// quantity. An element symbol takes g/L or mg/L; Fe(III) (or Fe3) the part of the iron that is
// ferric, in the same units; free_acid mol/L of the anion's acid; anion sulfate (SO4) or chloride
// (Cl); volume L or m3, which --volume may give instead. Errors name the file, line and column.
func ReadLiquor(r io.Reader, name string) (*recover.Measured, error) {
	br, err := openSideFile(r, name)
	if err != nil {
		return nil, err
	}
	cr := data.NewCSVReader(br, ',')
	cr.FieldsPerRecord = -1
	head, err := cr.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return nil, &Error{File: name, Reason: "empty file: want a header element,value,unit and a row per element"}
		}
		return nil, &Error{File: name, Line: 1, Reason: err.Error()}
	}
	col := map[string]int{}
	for i, h := range head {
		col[strings.ToLower(trimSpace(h))] = i
	}
	for _, c := range []string{"element", "value", "unit"} {
		if _, ok := col[c]; !ok {
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("missing column %q (want element, value, unit)", c)}
		}
	}
	m := &recover.Measured{File: name, GPerL: map[string]float64{}, Anion: "SO4"}
	seen := map[string]int{}
	es := cathode.DefaultElements()
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, &Error{File: name, Line: data.ErrorLine(pe), Reason: pe.Err.Error()}
			}
			return nil, &Error{File: name, Reason: err.Error()}
		}
		line, _ := cr.FieldPos(0)
		get := func(c string) string {
			if i := col[c]; i < len(rec) {
				return trimSpace(rec[i])
			}
			return ""
		}
		if err := liquorRow(m, es, get("element"), get("value"), get("unit"), name, line, seen); err != nil {
			return nil, err
		}
	}
	if len(m.GPerL) == 0 {
		return nil, &Error{File: name, Reason: "no element given: want a row per element (Li, Ni, Co ... in g/L or mg/L)"}
	}
	if m.Fe3GPerL > m.GPerL["Fe"]*(1+1e-9) {
		return nil, &Error{File: name, Line: seen["fe3"], Column: "value", Value: fmt.Sprint(m.Fe3GPerL),
			Reason: fmt.Sprintf("more Fe(III) than the %g g/L of Fe given", m.GPerL["Fe"])}
	}
	return m, nil
}

// liquorRow reads one row of a liquor file into m.
func liquorRow(m *recover.Measured, es *cathode.Elements, el, val, unit, name string, line int, seen map[string]int) error {
	fail := func(c, v, reason string) error {
		return &Error{File: name, Line: line, Column: c, Value: v, Reason: reason}
	}
	key := strings.ToLower(el)
	switch key {
	case "fe(iii)", "fe3", "fe3+":
		key = "fe3"
	case "free_acid", "free acid", "acid":
		key = "free_acid"
	}
	if first, dup := seen[key]; dup {
		return fail("element", el, fmt.Sprintf("given twice (first on line %d)", first))
	}
	seen[key] = line
	if key == "anion" {
		switch strings.ToLower(val) {
		case "so4", "sulfate", "sulphate":
			m.Anion = "SO4"
		case "cl", "chloride":
			m.Anion = "Cl"
		default:
			return fail("value", val, "want sulfate (SO4) or chloride (Cl)")
		}
		return nil
	}
	v, err := ParseNumber(val, false)
	if err != nil || v < 0 {
		return fail("value", val, "want a number, not negative")
	}
	u := strings.ToLower(strings.ReplaceAll(unit, " ", ""))
	switch key {
	case "free_acid":
		if u != "mol/l" && u != "m" {
			return fail("unit", unit, "free acid is in mol/L")
		}
		if v > 10 {
			return fail("value", val, "free acid above 10 mol/L is not a leach liquor")
		}
		m.FreeAcidMolPerL = v
		return nil
	case "volume":
		switch u {
		case "l":
		case "m3", "m³":
			v *= 1000
		default:
			return fail("unit", unit, "volume is in L or m3")
		}
		if !(v > 0) {
			return fail("value", val, "a volume is positive")
		}
		m.VolumeL = v
		return nil
	}
	switch u {
	case "g/l":
	case "mg/l":
		v /= 1000
	default:
		return fail("unit", unit, "want g/L or mg/L")
	}
	if v > maxLiquorGPerL {
		return fail("value", val, fmt.Sprintf("above %d g/L: no metal salt is that soluble", maxLiquorGPerL))
	}
	if key == "fe3" {
		m.Fe3GPerL = v
		return nil
	}
	if es.Lookup(el) == nil || el == "H" || el == "O" || el == "S" || el == "Cl" {
		return fail("element", el, "not an element of the liquor (Li, Ni, Co, Mn, Al, Fe, Cu, Na, P, F ...; Fe(III), "+
			"free_acid, anion, volume; case matters)")
	}
	m.GPerL[el] = v
	return nil
}

// ReadReagentPrices reads the recovery reagents' prices: columns reagent (as named in
// recover_reagents.csv: NaOH, Na2CO3, KMnO4 ...), price_per_kg (per kg as bought), currency,
// source. One currency; a reagent priced once.
func ReadReagentPrices(r io.Reader, name string) (*recover.ReagentPrices, error) {
	t, err := data.ParseTable(r, name)
	if err != nil {
		return nil, &Error{File: name, Reason: strings.TrimPrefix(err.Error(), name+": ")}
	}
	for _, c := range []string{"reagent", "price_per_kg", "currency"} {
		if !t.Has(c) {
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("missing column %q (want reagent, price_per_kg, "+
				"currency, source)", c)}
		}
	}
	rp := &recover.ReagentPrices{File: name, PerKg: map[string]float64{}, Line: map[string]int{}}
	for _, row := range t.Rows {
		fail := func(col, val, reason string) error {
			return &Error{File: name, Line: row.Line, Column: col, Value: val, Reason: reason}
		}
		g := row.Str("reagent")
		if first, dup := rp.Line[g]; dup {
			return nil, fail("reagent", g, fmt.Sprintf("priced twice (first on line %d)", first))
		}
		price, err := ParseNumber(row.Str("price_per_kg"), false)
		if err != nil || price < 0 || price > maxPricePerKg {
			return nil, fail("price_per_kg", row.Str("price_per_kg"), fmt.Sprintf("want a price from 0 to %g per kg",
				float64(maxPricePerKg)))
		}
		cur := strings.ToUpper(row.Str("currency"))
		if cur == "" || len(cur) > 8 {
			return nil, fail("currency", row.Str("currency"), "want a currency code such as EUR or USD")
		}
		if rp.Currency == "" {
			rp.Currency = cur
		} else if cur != rp.Currency {
			return nil, fail("currency", cur, fmt.Sprintf("every row must use one currency (the first row uses %s)", rp.Currency))
		}
		rp.PerKg[g], rp.Line[g] = price, row.Line
	}
	return rp, nil
}
