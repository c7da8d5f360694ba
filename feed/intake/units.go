package intake

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Unit is one accepted unit: its spellings (matched case-insensitively), the factor to the base
// unit and the base unit's name. Exact spellings are matched with their case, for SI prefixes
// that case tells apart: m is milli and M mega (SI Brochure, 9th edition, 2019, table 7).
type Unit struct {
	Names  []string
	Factor float64
	Base   string
	Exact  []string
}

// UnitTable is the set of units a quantity accepts.
type UnitTable struct {
	Units []Unit
	Want  string // the accepted spellings, for error messages
}

// ounceKg is the international avoirdupois ounce, exactly 28.349523125 g, and poundKg the
// international pound, exactly 0.45359237 kg (International Yard and Pound Agreement, 1959;
// NIST Handbook 44, Appendix C).
const (
	poundKg = 0.45359237
	ounceKg = poundKg / 16
)

var (
	// CapacityUnits are energies (base Wh) and charges (base Ah).
	CapacityUnits = UnitTable{Units: []Unit{
		{[]string{"wh", "whr", "whrs", "watt-hour", "watt-hours"}, 1, "Wh", nil},
		{[]string{"kwh", "kwhr"}, 1e3, "Wh", nil},
		{nil, 1e6, "Wh", []string{"MWh", "MWH", "Mwh", "MWhr"}},
		{nil, 1e-3, "Wh", []string{"mWh", "mwh", "mWH", "mWhr", "mwhr"}},
		{[]string{"ah", "ahr"}, 1, "Ah", nil},
		{[]string{"mah", "mahr"}, 1e-3, "Ah", nil},
	}, Want: "Wh, Whr, kWh, MWh, mWh, Ah or mAh"}
	// MassUnits are masses (base kg).
	MassUnits = UnitTable{Units: []Unit{
		{[]string{"g", "gram", "grams"}, 1e-3, "kg", nil},
		{[]string{"kg", "kgs", "kilogram", "kilograms"}, 1, "kg", nil},
		{[]string{"t", "tonne", "tonnes", "metric ton"}, 1e3, "kg", nil},
		{[]string{"lb", "lbs", "pound", "pounds"}, poundKg, "kg", nil},
		{[]string{"oz", "ounce", "ounces"}, ounceKg, "kg", nil},
	}, Want: "g, kg, t (tonne), lb or oz"}
	// VoltUnits are voltages (base V).
	VoltUnits = UnitTable{Units: []Unit{{[]string{"v", "vdc", "volt", "volts"}, 1, "V", nil}}, Want: "V"}
)

// find returns the unit named s, or nil.
func (u UnitTable) find(s string) *Unit {
	for i := range u.Units {
		for _, n := range u.Units[i].Exact {
			if s == n {
				return &u.Units[i]
			}
		}
	}
	for i := range u.Units {
		for _, n := range u.Units[i].Names {
			if strings.EqualFold(s, n) {
				return &u.Units[i]
			}
		}
	}
	return nil
}

// ParseNumber reads a decimal number as benches write it: "3.5", "3,5" (a decimal comma), and
// "1,234.5" (thousands grouped by commas, with a decimal point). "1,234" alone is refused as
// ambiguous unless decimalComma says commas are decimal marks (semicolon-separated files).
// Only digits, signs, one decimal mark and an exponent are accepted: no hex, no Inf or NaN.
func ParseNumber(s string, decimalComma bool) (float64, error) {
	s = trimSpace(s)
	if s == "" {
		return 0, errors.New("no number")
	}
	for i := range len(s) {
		c := s[i]
		if !(c >= '0' && c <= '9' || c == '.' || c == ',' || c == '-' || c == '+' || c == 'e' || c == 'E') {
			return 0, errors.New("not a number")
		}
	}
	if v, ok := plainInteger(s); ok {
		return v, nil
	}
	if n := strings.Count(s, ","); n > 0 {
		switch {
		case decimalComma && n == 1 && !strings.Contains(s, "."):
			s = strings.Replace(s, ",", ".", 1)
		case thousandsGrouped(s):
			if n == 1 && !strings.Contains(s, ".") && !decimalComma {
				return 0, fmt.Errorf("%q is ambiguous (a thousands separator or a decimal comma?): write 1234 or 1.234", s)
			}
			s = strings.ReplaceAll(s, ",", "")
		case n == 1 && !strings.Contains(s, "."):
			s = strings.Replace(s, ",", ".", 1)
		default:
			return 0, errors.New("not a number")
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, errors.New("not a finite number")
	}
	return v, nil
}

// plainInteger reads s when it is only digits, at most 15 of them: every such integer is a
// float64 exactly, so this is what strconv.ParseFloat gives, without its general path.
func plainInteger(s string) (float64, bool) {
	if len(s) == 0 || len(s) > 15 {
		return 0, false
	}
	n := int64(0)
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int64(c-'0')
	}
	return float64(n), true
}

// thousandsGrouped reports whether the integer part of s is grouped by commas in threes
// ("1,234", "12,345,678.9").
func thousandsGrouped(s string) bool {
	intPart, _, _ := strings.Cut(strings.TrimLeft(s, "+-"), ".")
	groups := strings.Split(intPart, ",")
	if len(groups) < 2 || len(groups[0]) == 0 || len(groups[0]) > 3 || strings.Trim(groups[0], "0") == "" {
		return false // "0,045" is a decimal comma: no thousands group starts with zero
	}
	for _, g := range groups[1:] {
		if len(g) != 3 {
			return false
		}
	}
	return true
}

// Quantity parses "3.5 Ah", "3500mAh", "1,2 kWh" into a value in the table's base unit and the
// base unit's name. A bare number takes defaultUnit (a unit from the column header; "" for none).
func Quantity(s string, u UnitTable, defaultUnit string, decimalComma bool) (float64, string, error) {
	return quantityFind(s, u, defaultUnit, decimalComma, nil)
}

// quantityFind is Quantity with the unit found by find (nil: the table's find).
func quantityFind(s string, u UnitTable, defaultUnit string, decimalComma bool,
	find func(UnitTable, string) *Unit) (float64, string, error) {
	s = trimSpace(s)
	if s == "" {
		return 0, "", errors.New("missing value (want a number and a unit: " + u.Want + ")")
	}
	i := 0
	for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.' || s[i] == ',' || s[i] == '-' || s[i] == '+' ||
		(s[i] == 'e' || s[i] == 'E') && i > 0 && i+1 < len(s) && (s[i+1] >= '0' && s[i+1] <= '9' || s[i+1] == '-' || s[i+1] == '+')) {
		i++
	}
	rest := s[i:]
	for len(rest) > 0 && rest[0] == ' ' {
		rest = rest[1:] // the space between number and unit, without TrimSpace's general path
	}
	num, rest := s[:i], trimSpace(rest)
	if num == "" {
		return 0, "", fmt.Errorf("no number (want a number and a unit: %s)", u.Want)
	}
	v, err := ParseNumber(num, decimalComma)
	if err != nil {
		return 0, "", fmt.Errorf("%v (want a number and a unit: %s)", err, u.Want)
	}
	if rest == "" {
		rest = defaultUnit
	}
	var un *Unit
	if find != nil {
		un = find(u, rest)
	} else {
		un = u.find(rest)
	}
	if un == nil {
		if rest == "" {
			return 0, "", fmt.Errorf("no unit (want %s, in the cell or in the column header)", u.Want)
		}
		return 0, "", fmt.Errorf("unknown unit %q (want %s)", Printable(rest, 20), u.Want)
	}
	if !(v > 0) {
		return 0, "", errors.New("must be positive")
	}
	return v * un.Factor, un.Base, nil
}

// ParseMassKg parses a mass with its unit ("1200 kg", "1.2 t", "450 g", "900 lb", "3 oz") into
// kg, accepting a decimal comma.
func ParseMassKg(s string) (float64, error) {
	v, _, err := Quantity(s, MassUnits, "", false)
	return v, err
}
