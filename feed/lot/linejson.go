package lot

import (
	"encoding/json"
	"math"
	"strconv"
	"unicode/utf8"
)

// AppendJSON appends the line as encoding/json writes it (compact, its field names and
// omitempty, HTML characters escaped), without its reflection: a report of hundreds of thousands
// of lines writes each one (TestLineJSONAsEncodingJSON holds the two to the same bytes). It fails,
// as encoding/json does, on a value that is not finite.
func (l *LineResult) AppendJSON(b []byte) ([]byte, error) {
	e := lineJSON{b: b}
	e.b = append(e.b, '{')
	e.int("line", l.Line, false)
	e.str("id", l.ID, false)
	e.str("description", l.Description, true)
	e.str("chemistry_label", l.ChemistryLabel, false)
	e.str("chemistry", l.Chemistry, false)
	e.bool("unknown_chemistry", l.Unknown, false)
	e.str("format", l.Format, false)
	e.int("count", l.Count, false)
	e.int("cells_per_item", l.CellsPerItem, false)
	e.str("capacity_as_typed", l.CapacityText, false)
	e.str("capacity", l.CapacityGiven, false)
	e.str("capacity_basis", l.CapacityBasis, false)
	e.float("voltage_V", l.VoltageV, true)
	e.str("application", l.Application, true)
	e.float("energy_Wh_per_item", l.EnergyWhPerItem, false)
	e.bool("energy_uses_assumed_voltage", l.EnergyAssumed, false)
	e.bool("energy_from_mass", l.EnergyFromMass, true)
	e.float("charge_Ah_per_item", l.ChargeAhPerItem, true)
	e.float("modelled_mass_kg_per_item", l.ModelMassKgEach, false)
	e.float("measured_mass_kg_per_item", l.MeasuredMassKg, true)
	e.float("measured_Wh_per_kg", l.MeasuredWhPerKg, true)
	e.float("cathode_active_kg_most_likely", l.CathodeKg, false)
	e.float("black_mass_kg_most_likely", l.BlackMassKg, false)
	e.key("elements_kg_most_likely")
	if m, err := l.ElementsKg.MarshalJSON(); err != nil {
		return b, err
	} else {
		e.b = append(e.b, m...)
	}
	if len(l.Flags) > 0 {
		e.key("flags")
		e.b = append(e.b, '[')
		for i, f := range l.Flags {
			if i > 0 {
				e.b = append(e.b, ',')
			}
			e.quote(f)
		}
		e.b = append(e.b, ']')
	}
	e.str("notes", l.Notes, true)
	if e.err != nil {
		return b, e.err
	}
	return append(e.b, '}'), nil
}

// lineJSON appends a JSON object's members.
type lineJSON struct {
	b   []byte
	n   int // members so far
	err error
}

func (e *lineJSON) key(k string) {
	if e.n > 0 {
		e.b = append(e.b, ',')
	}
	e.n++
	e.b = append(append(append(e.b, '"'), k...), `":`...)
}

func (e *lineJSON) str(k, v string, omitEmpty bool) {
	if omitEmpty && v == "" {
		return
	}
	e.key(k)
	e.quote(v)
}

// quote appends v as a JSON string: as it is when it is printable ASCII that needs no escape,
// else as encoding/json escapes it.
func (e *lineJSON) quote(v string) {
	for i := 0; i < len(v); i++ {
		if c := v[i]; c < 0x20 || c >= utf8.RuneSelf || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			q, err := json.Marshal(v)
			if err != nil && e.err == nil {
				e.err = err
			}
			e.b = append(e.b, q...)
			return
		}
	}
	e.b = append(append(append(e.b, '"'), v...), '"')
}

func (e *lineJSON) int(k string, v int, omitEmpty bool) {
	if omitEmpty && v == 0 {
		return
	}
	e.key(k)
	e.b = strconv.AppendInt(e.b, int64(v), 10)
}

func (e *lineJSON) bool(k string, v, omitEmpty bool) {
	if omitEmpty && !v {
		return
	}
	e.key(k)
	e.b = strconv.AppendBool(e.b, v)
}

func (e *lineJSON) float(k string, v float64, omitEmpty bool) {
	if omitEmpty && v == 0 {
		return
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		if _, err := json.Marshal(v); err != nil && e.err == nil {
			e.err = err
		}
		return
	}
	e.key(k)
	e.b = appendJSONFloat(e.b, v)
}
