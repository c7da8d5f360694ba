package lot

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// ElementMass is one element's mass, kg.
type ElementMass struct {
	Element string
	Kg      float64
}

// ElementMasses is a line's metals by element, sorted by symbol. It is a short list rather than
// a map (a manifest of a million lines keeps a million of them) and reads and writes as a JSON
// object keyed by symbol, {"Co": 4.7, "Li": 0.56}.
type ElementMasses []ElementMass

// Kg returns the mass of an element, and whether the line holds it.
func (m ElementMasses) Kg(element string) (float64, bool) {
	i, ok := slices.BinarySearchFunc(m, element, func(e ElementMass, s string) int { return strings.Compare(e.Element, s) })
	if !ok {
		return 0, false
	}
	return m[i].Kg, true
}

// MarshalJSON writes the masses as an object keyed by symbol, in symbol order.
func (m ElementMasses) MarshalJSON() ([]byte, error) {
	b := make([]byte, 0, 2+24*len(m))
	b = append(b, '{')
	for i, e := range m {
		if i > 0 {
			b = append(b, ',')
		}
		if plainSymbol(e.Element) { // what json.Marshal writes for it, without its machinery
			b = append(append(append(b, '"'), e.Element...), '"')
		} else {
			k, err := json.Marshal(e.Element)
			if err != nil {
				return nil, err
			}
			b = append(b, k...)
		}
		b = append(b, ':')
		if math.IsNaN(e.Kg) || math.IsInf(e.Kg, 0) {
			if _, err := json.Marshal(e.Kg); err != nil {
				return nil, err
			}
		}
		b = appendJSONFloat(b, e.Kg)
	}
	return append(b, '}'), nil
}

// plainSymbol reports whether s is letters and digits only, which JSON quotes as they are.
func plainSymbol(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9') {
			return false
		}
	}
	return true
}

// appendJSONFloat appends a finite float64 as encoding/json writes it: the shortest decimal
// that reads back the same, in exponent form below 1e-6 and from 1e21, with a one-digit
// negative exponent written without its zero (1e-7, not 1e-07).
func appendJSONFloat(b []byte, f float64) []byte {
	format := byte('f')
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// UnmarshalJSON reads an object keyed by symbol.
func (m *ElementMasses) UnmarshalJSON(data []byte) error {
	var obj map[string]float64
	if err := json.Unmarshal(data, &obj); err != nil {
		return fmt.Errorf("element masses: %w", err)
	}
	out := make(ElementMasses, 0, len(obj))
	for k, v := range obj {
		out = append(out, ElementMass{Element: k, Kg: v})
	}
	slices.SortFunc(out, func(a, b ElementMass) int { return strings.Compare(a.Element, b.Element) })
	*m = out
	return nil
}
