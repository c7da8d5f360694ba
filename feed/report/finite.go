package report

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"
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

func firstNonFinite(v reflect.Value, path string) (string, bool) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return "", true
		}
		return firstNonFinite(v.Elem(), path)
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return path, false
		}
	case reflect.Struct:
		t := v.Type()
		for i := range t.NumField() {
			if !t.Field(i).IsExported() {
				continue
			}
			name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
			if name == "" {
				name = t.Field(i).Name
			}
			if p, ok := firstNonFinite(v.Field(i), path+"."+name); !ok {
				return p, false
			}
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			if p, ok := firstNonFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i)); !ok {
				return p, false
			}
		}
	case reflect.Map:
		iter := v.MapRange()
		for iter.Next() {
			if p, ok := firstNonFinite(iter.Value(), fmt.Sprintf("%s.%v", path, iter.Key())); !ok {
				return p, false
			}
		}
	}
	return "", true
}
