package main

import (
	"fmt"
	"math"
	"strings"
)

// massUnit picks the unit that reads well for masses of the size of refKg: g for a bench
// sample, kg for a lot, t for a large one.
func massUnit(refKg float64) (name string, perKg float64) {
	switch a := math.Abs(refKg); {
	case a > 0 && a < 1:
		return "g", 1000
	case a >= 10_000:
		return "t", 0.001
	}
	return "kg", 1
}

// fmtMass prints a mass with three significant figures in the unit that suits it.
func fmtMass(kg float64) string {
	u, f := massUnit(kg)
	return num(kg*f) + " " + u
}

// volumeUnit picks mL, L or m³ for volumes of the size of refL.
func volumeUnit(refL float64) (name string, perL float64) {
	switch a := math.Abs(refL); {
	case a > 0 && a < 1:
		return "mL", 1000
	case a >= 10_000:
		return "m³", 0.001
	}
	return "L", 1
}

// fmtVolume prints a volume with three significant figures in the unit that suits it.
func fmtVolume(l float64) string {
	u, f := volumeUnit(l)
	return num(l*f) + " " + u
}

// fmtEnergy prints an energy in Wh, kWh or MWh with three significant figures.
func fmtEnergy(kWh float64) string {
	switch a := math.Abs(kWh); {
	case a > 0 && a < 1:
		return num(kWh*1000) + " Wh"
	case a >= 10_000:
		return num(kWh/1000) + " MWh"
	}
	return num(kWh) + " kWh"
}

// num prints a number with three significant figures, without exponent notation; anything
// smaller than a billionth prints as 0 (never "-0.000").
func num(v float64) string {
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
