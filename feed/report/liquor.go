package report

import (
	"fmt"
	"reflect"

	"blackmass/feed/recover"
	"blackmass/feed/value"
)

// LiquorReport is the recovery plan of a measured liquor.
type LiquorReport struct {
	Inputs   Inputs            `json:"inputs"`
	Liquor   *recover.Measured `json:"liquor"`
	Recovery *recover.Report   `json:"recovery"`
	// Order is the recovery's reagents to order, each to its P90 as bought.
	Order *value.OrderSheet `json:"order,omitempty"`
}

// CheckFinite returns an error naming the first number that is NaN or infinite.
func (r *LiquorReport) CheckFinite() error {
	if path, ok := firstNonFinite(reflect.ValueOf(r), "report"); !ok {
		return fmt.Errorf("the model produced a non-finite number at %s from a finite liquor (file %s, seed %d): "+
			"a fault in the program; nothing was written", path, r.Inputs.File, r.Inputs.Seed)
	}
	return nil
}
