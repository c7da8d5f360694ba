package report

import (
	"fmt"
	"math"
	"reflect"
	"strings"
)

// CheckFinite returns an error naming the first number of the report that is NaN or infinite
// (by its JSON path), so that no output is written with one. Inputs are range-checked where they
// enter; this is the last guard.
func (r *Report) CheckFinite() error {
	if path, ok := firstNonFinite(reflect.ValueOf(r), "report"); !ok {
		return fmt.Errorf("the estimate produced a non-finite number at %s: an input is out of its physical range (file %s); nothing was written", path, r.Inputs.File)
	}
	return nil
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
