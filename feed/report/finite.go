package report

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"

	"blackmass/feed/lot"
)

// CheckFinite returns an error naming the first number of the report that is NaN or infinite
// (by its JSON path), so that no output is written with one. Inputs are range-checked where they
// enter; this is the last guard. Its message says where the number came from: an input (the
// lot's totals, a line's values as read) or the model, which from finite inputs must give
// finite numbers, so that one is a fault of the program to be reported with the seed.
func (r *Report) CheckFinite() error {
	path, ok := firstNonFinite(reflect.ValueOf(r), "report")
	if ok {
		return nil
	}
	if inputPath(path) {
		return fmt.Errorf("a non-finite number at %s: an input is out of its physical range (file %s); nothing was written", path, r.Inputs.File)
	}
	return fmt.Errorf("the model produced a non-finite number at %s from finite inputs (file %s, seed %d, %d samples): a fault in the program, not in the file; nothing was written", path, r.Inputs.File, r.Inputs.Seed, r.Inputs.Samples)
}

// inputLineFields are the JSON names of a line's values as read from the manifest.
var inputLineFields = []string{"voltage_V", "energy_Wh_per_item", "charge_Ah_per_item", "measured_mass_kg_per_item", "measured_Wh_per_kg"}

// inputPath says whether a report path holds an input (or a plain sum of inputs) rather than a
// result of the model.
func inputPath(path string) bool {
	if strings.HasPrefix(path, "report.inputs") || strings.HasPrefix(path, "report.lot.") {
		return true
	}
	if !strings.HasPrefix(path, "report.lines[") {
		return false
	}
	_, field, _ := strings.Cut(path, "].")
	return slices.Contains(inputLineFields, field)
}

// firstNonFinite walks v and returns the JSON path of its first NaN or infinity (ok false), or
// ok true when every number is finite. The path is built only on the way back from a find, and
// field names come from a per-type cache, so a report of a million lines is walked without
// formatting a million paths.
func firstNonFinite(v reflect.Value, path string) (string, bool) {
	w := finiteWalker{names: map[reflect.Type][]string{}}
	segs, found := w.walk(v)
	if !found {
		return "", true
	}
	var b strings.Builder
	b.WriteString(path)
	for i := len(segs) - 1; i >= 0; i-- {
		b.WriteString(segs[i])
	}
	return b.String(), false
}

type finiteWalker struct {
	names map[reflect.Type][]string
}

// fieldNames returns the JSON names of a struct type's fields ("" for unexported ones).
func (w finiteWalker) fieldNames(t reflect.Type) []string {
	if n, ok := w.names[t]; ok {
		return n
	}
	n := make([]string, t.NumField())
	for i := range n {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if name == "" {
			name = f.Name
		}
		if f.Type == reflect.TypeFor[*lot.Lines]() {
			name = "lines" // a report's kept lines are its lines
		}
		n[i] = name
	}
	w.names[t] = n
	return n
}

// walk returns, innermost first, the path segments to the first non-finite number.
func (w finiteWalker) walk(v reflect.Value) ([]string, bool) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil, false
		}
		if ls, ok := v.Interface().(*lot.Lines); ok { // each line's detail, made as it is read
			for i, l := range ls.All() {
				if segs, found := w.walk(reflect.ValueOf(&l).Elem()); found {
					return append(segs, fmt.Sprintf("[%d]", i)), true
				}
			}
			return nil, false
		}
		return w.walk(v.Elem())
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return nil, true
		}
	case reflect.Struct:
		names := w.fieldNames(v.Type())
		for i, name := range names {
			if name == "" {
				continue
			}
			if segs, found := w.walk(v.Field(i)); found {
				return append(segs, "."+name), true
			}
		}
	case reflect.Slice, reflect.Array:
		if k := v.Type().Elem().Kind(); k == reflect.String || k == reflect.Int || k == reflect.Bool {
			return nil, false
		}
		for i := range v.Len() {
			if segs, found := w.walk(v.Index(i)); found {
				return append(segs, fmt.Sprintf("[%d]", i)), true
			}
		}
	case reflect.Map:
		iter := v.MapRange()
		for iter.Next() {
			if segs, found := w.walk(iter.Value()); found {
				return append(segs, fmt.Sprintf(".%v", iter.Key())), true
			}
		}
	}
	return nil, false
}
