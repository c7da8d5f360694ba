package main

import (
	"fmt"
	"strconv"

	"github.com/spf13/pflag"

	"blackmass/feed/intake"
)

// numberValue is a float flag that reads a decimal comma ("1,5") as benches type it, refuses
// non-finite values, and holds its value to a physical range given with the reason.
type numberValue struct {
	p        *float64
	min, max float64
	why      string
}

func (v *numberValue) String() string { return strconv.FormatFloat(*v.p, 'g', -1, 64) }
func (v *numberValue) Type() string   { return "number" }

func (v *numberValue) Set(s string) error {
	x, err := intake.ParseNumber(s, false)
	if err != nil {
		return err
	}
	if x < v.min || x > v.max {
		return fmt.Errorf("%s is outside %g to %g (%s)", s, v.min, v.max, v.why)
	}
	*v.p = x
	return nil
}

// numberVar binds a numberValue flag with default def and the range [min, max].
func numberVar(fl *pflag.FlagSet, p *float64, name string, def, min, max float64, why, usage string) {
	*p = def
	fl.Var(&numberValue{p: p, min: min, max: max, why: why}, name, usage)
}

// intValue is an int flag held to a range.
type intValue struct {
	p        *int
	min, max int
	why      string
}

func (v *intValue) String() string { return strconv.Itoa(*v.p) }
func (v *intValue) Type() string   { return "int" }

func (v *intValue) Set(s string) error {
	x, err := strconv.Atoi(s)
	if err != nil {
		return fmt.Errorf("%q is not a whole number", intake.Printable(s, 20))
	}
	if x < v.min || x > v.max {
		return fmt.Errorf("%d is outside %d to %d (%s)", x, v.min, v.max, v.why)
	}
	*v.p = x
	return nil
}

func intVar(fl *pflag.FlagSet, p *int, name string, def, min, max int, why, usage string) {
	*p = def
	fl.Var(&intValue{p: p, min: min, max: max, why: why}, name, usage)
}
