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

// firstNonFinite returns the JSON path (from path) of the first NaN or infinite number under v,
// and false; true when there is none.
func firstNonFinite(v reflect.Value, path string) (string, bool) {
	var rev []string
	if finiteValue(v, &rev) {
		return "", true
	}
	for i := len(rev) - 1; i >= 0; i-- {
		path += rev[i]
	}
	return path, false
}

// finiteValue says whether every number under v is finite; when not, it appends the path to the
// first bad one to rev, innermost part first (the path is built only then, so a large finite
// report costs no string formatting).
func finiteValue(v reflect.Value, rev *[]string) bool {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return true
		}
		return finiteValue(v.Elem(), rev)
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return false
		}
	case reflect.Struct:
		t := v.Type()
		for i := range t.NumField() {
			if !t.Field(i).IsExported() {
				continue
			}
			if !finiteValue(v.Field(i), rev) {
				name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
				if name == "" {
					name = t.Field(i).Name
				}
				*rev = append(*rev, "."+name)
				return false
			}
		}
	case reflect.Slice, reflect.Array:
		if t := v.Type().Elem(); t.Kind() == reflect.Float64 {
			for i := range v.Len() {
				if f := v.Index(i).Float(); math.IsNaN(f) || math.IsInf(f, 0) {
					*rev = append(*rev, fmt.Sprintf("[%d]", i))
					return false
				}
			}
			return true
		}
		for i := range v.Len() {
			if !finiteValue(v.Index(i), rev) {
				*rev = append(*rev, fmt.Sprintf("[%d]", i))
				return false
			}
		}
	case reflect.Map:
		iter := v.MapRange()
		for iter.Next() {
			if !finiteValue(iter.Value(), rev) {
				*rev = append(*rev, fmt.Sprintf(".%v", iter.Key()))
				return false
			}
		}
	}
	return true
}
