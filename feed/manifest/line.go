package manifest

import (
	"blackmass/cathode"
	"strconv"
)

// Format is the physical form of a manifest line.
type Format int

const (
	FormatInvalid Format = iota
	Cylindrical          // round cells in a steel can (18650, 21700, 26650, 32700 ...)
	Pouch                // laminate pouch cells
	Prismatic            // cells in a rectangular aluminium can
	Pack                 // a small pack: consumer, power-tool, e-bike
	Module               // a vehicle or storage module
)

var formatNames = []string{"", "cylindrical", "pouch", "prismatic", "pack", "module"}

func (f Format) String() string {
	if f > FormatInvalid && int(f) < len(formatNames) {
		return formatNames[f]
	}
	return "invalid"
}

// Formats lists the valid formats.
func Formats() []Format { return []Format{Cylindrical, Pouch, Prismatic, Pack, Module} }

// IsAssembly reports whether the format holds several cells and an overhead (pack, module).
func (f Format) IsAssembly() bool { return f == Pack || f == Module }

// Line is one parsed manifest line. Energies and masses are per item (a cell, or a whole pack
// or module); Count items were received. At least one of EnergyWh, ChargeAh and MassKg is
// positive; a line with a mass only takes its energy from the chemistry's Wh/kg band.
type Line struct {
	Num            int // input line number (1-based)
	ID             string
	Description    string
	ChemistryLabel string
	Chemistry      *cathode.Chemistry
	Format         Format
	Application    string  // application key the prior used for an unknown chemistry ("" if none named)
	EnergyWh       float64 // per item; 0 if only charge or mass is known
	ChargeAh       float64 // per item, when capacity was in Ah/mAh with no voltage
	VoltageV       float64 // nominal voltage as given (0: not given)
	CapacityText   string  // as typed
	CapacityValue  float64 // the capacity as read, in CapacityUnit, of what the basis says (0 for weight only)
	CapacityUnit   string  // "Wh" or "Ah"
	CapacityBasis  string  // "cell" or "pack": what the capacity is of
	CellsPerItem   int     // 1 for loose cells; from cells_per_pack for packs (0: not given)
	Count          int
	MassKg         float64 // measured mass per item; 0 if not given
	Notes          string
	// NonLithium is the battery that is not lithium-ion the label names (NiMH, NiCd, lead-acid,
	// alkaline, zinc-carbon, zinc-air); nil for a lithium-ion line. Such a line has no
	// Chemistry and no capacity read: the lot counts and weighs it apart from the black mass.
	NonLithium *cathode.OtherBattery
	// CountUnknown marks a bag weighed whole: Count is 1 and MassKg the whole bag's mass.
	CountUnknown bool
	// LabelUnresolved reports that the label was not recognised and was read as unknown at the
	// user's request (--unknown prior).
	LabelUnresolved bool
}

// MassOnly reports whether the line gives a mass but no capacity.
func (ln Line) MassOnly() bool { return ln.EnergyWh == 0 && ln.ChargeAh == 0 && ln.MassKg > 0 }

// LinesSheetName is the sheet of the intake workbook that holds the manifest lines; the
// workbook can be read back as a manifest from it.
const LinesSheetName = "Lines"

// DerivedLineColumns are the headers of the computed columns the intake workbook writes beside
// a line's own; reading the workbook back as a manifest leaves them out.
var DerivedLineColumns = []string{"line", "chemistry resolved", "energy per item (Wh)", "modelled mass per item (kg)",
	"measured Wh/kg", "cathode active, most likely (kg)", "black mass, most likely (kg)", "flags"}

// formerDerivedLineColumns are computed-column headers of earlier workbooks, still read past.
var formerDerivedLineColumns = []string{"cathode active (kg)", "black mass (kg)"}

// ComputedLineColumns lists every header of a computed column, current and former.
func ComputedLineColumns() []string {
	return append(append([]string(nil), DerivedLineColumns...), formerDerivedLineColumns...)
}

// CapacityGiven is the capacity as read in its base unit, "4.4 Ah" ("" for a line known by
// weight only). It is formatted when asked, not for every line read.
func (l *Line) CapacityGiven() string {
	if l.CapacityUnit == "" {
		return ""
	}
	return strconv.FormatFloat(l.CapacityValue, 'g', 6, 64) + " " + l.CapacityUnit
}
