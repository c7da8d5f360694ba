package intake

import (
	"errors"
	"fmt"
	"strings"
)

// censorable is an assay value as read: a value in wt%, or a value below the detection limit.
type censorable struct {
	wtPct      float64
	censored   bool
	limitWtPct float64
	factor     float64 // wt% per unit of the row's unit, for its uncertainty
}

// cellError names the assay column a value failed in.
type cellError struct{ col, val, reason string }

// belowDetectionWords are the ways labs write "below the detection limit" without the limit.
var belowDetectionWords = map[string]bool{"nd": true, "n.d.": true, "n.d": true, "n/d": true, "bdl": true, "b.d.l.": true,
	"<lod": true, "<loq": true, "<dl": true, "<mdl": true, "<rl": true, "not detected": true, "below detection": true,
	"below detection limit": true, "below lod": true, "<": true}

// readCensorable reads an assay value with its unit (from the unit column, or the cell's own)
// and the detection limit column: "3.6", "< 0.05", "<50 ppm", "n.d." with a limit.
func readCensorable(value, unit, lod string) (censorable, *cellError) {
	if u := normUnit(unit); u != "" {
		if _, ok := assayUnits[u]; !ok {
			return censorable{}, &cellError{"unit", unit, "unknown unit (want wt%, g/kg, mg/kg or ppm)"}
		}
	}
	v := trimSpace(value)
	low := strings.ToLower(strings.ReplaceAll(v, " ", ""))
	low = strings.ReplaceAll(low, "&lt;", "<")
	switch {
	case belowDetectionWords[low] || belowDetectionWords[strings.ToLower(v)]:
		if trimSpace(lod) == "" {
			return censorable{}, &cellError{"value", value, "below the detection limit, but no limit given: write it as <0.05 (in the row's unit) or give the LOD column"}
		}
		lim, f, err := assayQuantity(lod, unit)
		if err != nil {
			return censorable{}, &cellError{"lod", lod, err.Error()}
		}
		return censorLimit(lim, f, "lod", lod)
	case strings.HasPrefix(low, "<") || strings.HasPrefix(v, "≤"):
		rest := strings.TrimPrefix(strings.TrimPrefix(strings.TrimPrefix(v, "≤"), "<"), "&lt;")
		lim, f, err := assayQuantity(rest, unit)
		if err != nil {
			return censorable{}, &cellError{"value", value, err.Error()}
		}
		return censorLimit(lim, f, "value", value)
	}
	x, f, err := assayQuantity(v, unit)
	if err != nil {
		return censorable{}, &cellError{"value", value, err.Error()}
	}
	switch {
	case x < 0:
		return censorable{}, &cellError{"value", value, "negative"}
	case x > 0 && x*f < minAssayWtPct:
		return censorable{}, &cellError{"value", value, fmt.Sprintf("below %g wt%% (0.01 ppm), under any lab's reporting limit: give 0", minAssayWtPct)}
	case x*f > 100:
		return censorable{}, &cellError{"value", value, "more than 100 wt%"}
	}
	return censorable{wtPct: x * f, factor: f}, nil
}

// censorLimit checks a detection limit (in the row's unit, f wt% per unit).
func censorLimit(lim, f float64, col, text string) (censorable, *cellError) {
	if !(lim > 0) || lim*f > 100 || lim*f < minAssayWtPct {
		return censorable{}, &cellError{col, text, "want a detection limit above 0.01 ppm and at most 100 wt%"}
	}
	return censorable{censored: true, limitWtPct: lim * f, factor: f}, nil
}

// assayQuantity reads a number with an optional unit of its own ("50 ppm"); the unit column's
// unit applies to a bare number, and a cell's unit that differs from it is refused.
func assayQuantity(s, unitCol string) (float64, float64, error) {
	s = trimSpace(s)
	i := 0
	for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.' || s[i] == ',' || s[i] == '-' || s[i] == '+' ||
		(s[i] == 'e' || s[i] == 'E') && i > 0 && i+1 < len(s) && (s[i+1] >= '0' && s[i+1] <= '9' || s[i+1] == '-' || s[i+1] == '+')) {
		i++
	}
	num, own := s[:i], normUnit(s[i:])
	if strings.Trim(num, "+-.,") == "" && own != "" {
		if _, ok := assayUnits[own]; !ok { // "abc", "N/A": no number, and no unit either
			return 0, 0, errors.New("not a number (below detection is written <0.05, n.d. or BDL; leave out the row of an element not analysed)")
		}
	}
	col := normUnit(unitCol)
	unit := col
	switch {
	case own != "" && col != "" && own != col:
		f1, ok1 := assayUnits[own]
		f2, ok2 := assayUnits[col]
		if !ok1 || !ok2 || f1 != f2 {
			return 0, 0, fmt.Errorf("its unit %q disagrees with the unit column's %q", Printable(trimSpace(s[i:]), 20), Printable(unitCol, 20))
		}
	case own != "":
		unit = own
	}
	f, ok := assayUnits[unit]
	if !ok {
		if unit == "" {
			return 0, 0, fmt.Errorf("no unit (want wt%%, g/kg, mg/kg or ppm, in the unit column or the cell)")
		}
		return 0, 0, fmt.Errorf("unknown unit %q (want wt%%, g/kg, mg/kg or ppm)", Printable(unit, 20))
	}
	v, err := ParseNumber(num, false)
	if err != nil {
		return 0, 0, err
	}
	return v, f, nil
}

// normUnit lowers a unit and drops its spaces ("mg / kg" is mg/kg).
func normUnit(s string) string {
	return strings.ToLower(strings.ReplaceAll(trimSpace(s), " ", ""))
}
