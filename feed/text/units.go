package text

import (
	"fmt"
	"math"
	"strings"
)

// unitLadder is a unit with the units a thousand times smaller and larger: a quantity is shown
// in the smaller one below 1 and in the larger one from largeFrom (in the base unit).
type unitLadder struct {
	small, base, large string
	largeFrom          float64
}

// Masses and volumes of a tonne or a cubic metre and more read in t and m³; energy keeps kWh
// to 10,000.
var (
	massUnits   = unitLadder{"g", "kg", "t", 1000}
	volumeUnits = unitLadder{"mL", "L", "m³", 1000}
	energyUnits = unitLadder{"Wh", "kWh", "MWh", 10_000}
)

// pick returns the unit that reads well for quantities of the size of ref (in the base unit)
// and how many of it make one base unit.
func (l unitLadder) pick(ref float64) (name string, perBase float64) {
	switch a := math.Abs(ref); {
	case a > 0 && a < 1:
		return l.small, 1000
	case a >= l.largeFrom:
		return l.large, 0.001
	}
	return l.base, 1
}

// format prints v (in the base unit) with three significant figures in the unit that suits it.
func (l unitLadder) format(v float64) string {
	u, f := l.pick(v)
	return Num(v*f) + " " + u
}

// massUnit picks g for a bench sample, kg for a lot, t for a large one.
func massUnit(refKg float64) (name string, perKg float64) { return massUnits.pick(refKg) }

func FmtMass(kg float64) string    { return massUnits.format(kg) }
func fmtVolume(l float64) string   { return volumeUnits.format(l) }
func fmtEnergy(kWh float64) string { return energyUnits.format(kWh) }

// Num prints a number with three significant figures, without exponent notation; anything
// smaller than a billionth prints as 0 (never "-0.000").
func Num(v float64) string {
	switch a := math.Abs(v); {
	case a < 1e-9:
		return "0"
	case a >= 100:
		return fmt.Sprintf("%.0f", v)
	case a >= 10:
		return fmt.Sprintf("%.1f", v)
	case a >= 1:
		return fmt.Sprintf("%.2f", v)
	}
	s := fmt.Sprintf("%.3g", v)
	if strings.Contains(s, "e") {
		s = strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.9f", v), "0"), ".")
	}
	return s
}
