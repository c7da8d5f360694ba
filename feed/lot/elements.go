package lot

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
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
	var b bytes.Buffer
	b.WriteByte('{')
	for i, e := range m {
		if i > 0 {
			b.WriteByte(',')
		}
		k, err := json.Marshal(e.Element)
		if err != nil {
			return nil, err
		}
		v, err := json.Marshal(e.Kg)
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
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
