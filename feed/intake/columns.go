package intake

import (
	"fmt"
	"slices"
	"sort"
	"strings"
	"unicode"

	"blackmass/cathode"
	"blackmass/feed/manifest"
)

// Column identifies a manifest column.
type Column int

const (
	ColID Column = iota
	ColDescription
	ColChemistry
	ColFormat
	ColApplication
	ColCapacity
	ColBasis
	ColVoltage
	ColCellsPerPack
	ColSeries
	ColParallel
	ColCount
	ColMass
	ColTotalMass
	ColNotes
	numColumns
)

// columnSpec is a column's canonical name, the names benches write for it (normalised: lower
// case, words joined by "_"), and the unit table of its values (nil for text).
type columnSpec struct {
	name     string
	synonyms []string
	units    *UnitTable
	help     string
}

var columns = [numColumns]columnSpec{
	ColID:          {"id", []string{"id", "line_id", "item_id", "item", "ref", "reference", "line_no", "no", "sku", "tag", "barcode", "serial", "serial_no", "lot_line"}, nil, "your reference for the line"},
	ColDescription: {"description", []string{"description", "desc", "name", "model", "product", "part", "part_no", "part_number", "item_description", "device_model"}, nil, "free text"},
	ColChemistry:   {"chemistry", []string{"chemistry", "chem", "cathode", "type", "cell_type", "battery_type", "chemistry_label", "cell_chemistry", "battery_chemistry", "cathode_chemistry", "material"}, nil, "cathode label: NMC811, LFP, LMO+NMC532 70/30, NMC, Li-ion ..."},
	ColFormat:      {"format", []string{"format", "form", "shape", "form_factor", "cell_format", "cell_form", "housing", "kind"}, nil, "cylindrical, pouch, prismatic, pack or module"},
	ColApplication: {"application", []string{"application", "device", "device_type", "use", "usage", "end_use", "equipment", "item_type", "category", "product_type", "app", "source_device"}, nil, "phone, laptop, power tool, e-bike, vehicle, storage"},
	ColCapacity:    {"capacity", []string{"capacity", "nameplate", "rated_capacity", "energy", "nominal_capacity", "rated_energy", "nameplate_capacity", "nameplate_energy", "capacity_rated", "energy_content", "rating"}, &CapacityUnits, "nameplate Wh, kWh, Ah or mAh per item (or per cell)"},
	ColBasis:       {"capacity_basis", []string{"capacity_basis", "basis", "capacity_per", "per", "rated_per"}, nil, "cell or pack: what the capacity is of"},
	ColVoltage:     {"voltage", []string{"voltage", "volts", "volt", "v", "nominal_voltage", "v_nom", "vnom", "nominal_v", "rated_voltage", "nom_voltage", "voltage_nominal", "cell_v", "cell_voltage", "pack_v", "pack_voltage", "module_voltage"}, &VoltUnits, "nominal V of what the capacity is of"},
	ColCellsPerPack: {"cells_per_pack", []string{"cells_per_pack", "cells", "layout", "configuration", "config", "s_p", "sp", "s_p_config", "series_parallel",
		"cell_count", "cells_per_item", "cells_per_module", "topology", "cells_pack", "cells_in_pack", "arrangement"}, nil, "a number of cells or a series-parallel tag such as 13s4p"},
	ColSeries:    {"series", []string{"series", "s_count", "cells_in_series", "series_cells", "n_series", "in_series"}, nil, "cells in series (with parallel: cells per pack = series × parallel)"},
	ColParallel:  {"parallel", []string{"parallel", "p_count", "cells_in_parallel", "parallel_cells", "n_parallel", "in_parallel"}, nil, "cells in parallel"},
	ColCount:     {"count", []string{"count", "qty", "quantity", "pieces", "pcs", "units", "no_of_items", "num", "n", "qty_pcs", "quantity_pcs", "number_of_items", "items", "nr", "ea"}, nil, "items received"},
	ColMass:      {"mass", []string{"mass", "weight", "mass_each", "weight_each", "unit_weight", "unit_mass", "mass_per_item", "weight_per_item", "each", "item_weight", "item_mass", "wt", "mass_per_unit", "weight_per_unit", "weight_per_pack", "weight_per_cell"}, &MassUnits, "measured mass of one item"},
	ColTotalMass: {"total_mass", []string{"total_mass", "total_weight", "line_weight", "line_mass", "weight_total", "mass_total", "total_wt"}, &MassUnits, "measured mass of all the line's items"},
	ColNotes:     {"notes", []string{"notes", "note", "comment", "comments", "remarks", "remark", "observations"}, nil, "free text"},
}

var synonymIndex = func() map[string]Column {
	m := map[string]Column{}
	for c, s := range columns {
		for _, n := range s.synonyms {
			if _, dup := m[n]; dup {
				panic("intake: synonym listed twice: " + n)
			}
			m[n] = Column(c)
		}
	}
	return m
}()

func (c Column) String() string { return columns[c].name }

// Columns describes the accepted columns: canonical name, synonyms and what each holds.
func Columns() []string {
	var out []string
	for _, s := range columns {
		out = append(out, fmt.Sprintf("%s (%s): %s", s.name, strings.Join(s.synonyms[1:], ", "), s.help))
	}
	return out
}

// headerCell is one recognised header cell: its column and the unit written in the header.
type headerCell struct {
	col  Column
	unit string // as written, "" for none
}

// normaliseHeader splits a header into its words (lower case) and a unit found in brackets or
// as a leading or trailing word.
func normaliseHeader(h string) (key, unit string) {
	h = strings.ToLower(trimSpace(h))
	// A unit in brackets: "capacity (ah)", "mass [lb]", "weight (kg each)".
	for _, br := range [][2]string{{"(", ")"}, {"[", "]"}, {"{", "}"}} {
		i := strings.Index(h, br[0])
		if i < 0 {
			continue
		}
		j := strings.Index(h[i:], br[1])
		if j <= 0 {
			continue
		}
		inner := strings.Fields(h[i+1 : i+j])
		var u string
		onlyFiller := true
		for _, w := range inner {
			switch {
			case isUnitWord(w) && u == "":
				u = w
			case !fillerWords[w]:
				onlyFiller = false
			}
		}
		if onlyFiller {
			unit = u
			h = h[:i] + " " + h[i+j+1:]
		}
	}
	words := strings.FieldsFunc(h, func(r rune) bool { return !unicode.IsLetter(r) && !unicode.IsDigit(r) })
	if unit == "" && len(words) > 0 {
		switch {
		case isUnitWord(words[len(words)-1]):
			unit, words = words[len(words)-1], words[:len(words)-1]
		case len(words) > 1 && isUnitWord(words[0]):
			unit, words = words[0], words[1:]
		}
	}
	// "in" before a trailing unit: "weight in kg".
	if len(words) > 1 && words[len(words)-1] == "in" && unit != "" {
		words = words[:len(words)-1]
	}
	return strings.Join(words, "_"), unit
}

// fillerWords say nothing about which column a header names.
var fillerWords = map[string]bool{"each": true, "ea": true, "per": true, "item": true, "piece": true, "pieces": true, "pcs": true, "unit": true, "in": true}

func isUnitWord(s string) bool {
	return CapacityUnits.find(s) != nil || MassUnits.find(s) != nil || VoltUnits.find(s) != nil
}

// recogniseHeader maps one header cell to a column. A header that is only a unit ("Wh", "kg",
// "V") names the column its unit belongs to; "#" names the id.
func recogniseHeader(h string) (headerCell, bool) {
	if trimSpace(h) == "#" {
		return headerCell{col: ColID}, true
	}
	key, unit := normaliseHeader(h)
	if key == "" {
		switch {
		case unit == "":
			return headerCell{}, false
		case CapacityUnits.find(unit) != nil:
			return headerCell{ColCapacity, unit}, true
		case MassUnits.find(unit) != nil:
			return headerCell{ColMass, unit}, true
		case VoltUnits.find(unit) != nil:
			return headerCell{ColVoltage, ""}, true
		}
	}
	c, ok := synonymIndex[key]
	if !ok {
		// Drop filler words: "weight each", "qty pcs".
		var kept []string
		for _, w := range strings.Split(key, "_") {
			if !fillerWords[w] {
				kept = append(kept, w)
			}
		}
		if k := strings.Join(kept, "_"); k != key && k != "" {
			c, ok = synonymIndex[k]
		}
	}
	if !ok && unit != "" {
		// The unit word may belong to the name ("cell v"): try the words with it.
		if c2, ok2 := synonymIndex[key+"_"+unit]; ok2 {
			return headerCell{col: c2}, true
		}
	}
	if !ok {
		return headerCell{}, false
	}
	return headerCell{c, unit}, true
}

// derived are the computed columns the intake workbook writes beside the manifest's own; a
// workbook read back as a manifest leaves them out.
var derived = func() map[string]bool {
	m := map[string]bool{}
	for _, h := range manifest.ComputedLineColumns() {
		k, _ := normaliseHeader(h)
		m[k] = true
	}
	return m
}()

// nearestColumns suggests up to n canonical column names for an unrecognised header.
func nearestColumns(h string, n int) []string {
	key, _ := normaliseHeader(h)
	best := map[string]int{}
	for syn, c := range synonymIndex {
		d := cathode.EditDistance(key, syn)
		if old, ok := best[columns[c].name]; !ok || d < old {
			best[columns[c].name] = d
		}
	}
	names := make([]string, 0, len(best))
	for k := range best {
		names = append(names, k)
	}
	sort.Slice(names, func(i, j int) bool {
		if best[names[i]] != best[names[j]] {
			return best[names[i]] < best[names[j]]
		}
		return names[i] < names[j]
	})
	return names[:min(n, len(names))]
}

// header is a recognised header row: the position of each column (-1 if absent), the units
// written in the header, and the positions of ignored columns.
type header struct {
	pos     [numColumns]int
	unit    [numColumns]string
	ignored []int        // positions of columns the user asked to ignore, or with a blank header
	named   map[int]bool // positions ignored at the user's request
	width   int
}

// knownCells counts the cells of rec that name a known column.
func knownCells(rec []string) int {
	n := 0
	for _, h := range rec {
		if _, ok := recogniseHeader(h); ok {
			n++
		}
	}
	return n
}

// parseHeader recognises every cell of a header row. An unrecognised, non-blank cell is an error
// unless ignore names it.
func parseHeader(rec []string, ignore []string, file string, line int) (*header, error) {
	h := &header{width: len(rec), named: map[int]bool{}}
	for i := range h.pos {
		h.pos[i] = -1
	}
	ignoreKeys := map[string]bool{}
	for _, g := range ignore {
		k, _ := normaliseHeader(g)
		ignoreKeys[strings.ToLower(trimSpace(g))] = true
		ignoreKeys[k] = true
	}
	var unknown []string
	for i, raw := range rec {
		t := trimSpace(raw)
		k, _ := normaliseHeader(t)
		if t == "" || ignoreKeys[strings.ToLower(t)] || (k != "" && ignoreKeys[k]) {
			h.ignored = append(h.ignored, i)
			h.named[i] = t != ""
			continue
		}
		if derived[k] {
			h.ignored = append(h.ignored, i)
			h.named[i] = true
			continue
		}
		hc, ok := recogniseHeader(t)
		if !ok {
			unknown = append(unknown, fmt.Sprintf("%q (did you mean %s?)", Printable(t, 40), strings.Join(nearestColumns(t, 2), " or ")))
			continue
		}
		if j := h.pos[hc.col]; j >= 0 {
			return nil, &Error{File: file, Line: line, Reason: fmt.Sprintf("columns %q and %q both read as %s", Printable(rec[j], 40), Printable(t, 40), hc.col)}
		}
		if hc.unit != "" && columns[hc.col].units == nil {
			// "qty (kg)", "Pieces [lb]": a mass under a count's name would be read as a count.
			return nil, &Error{File: file, Line: line, Column: "column", Value: t,
				Reason: fmt.Sprintf("reads as %s, which holds no quantity with a unit (%s); for a mass, head the column mass (per item) or total_mass", hc.col, hc.unit)}
		}
		if hc.unit != "" && columns[hc.col].units.find(hc.unit) == nil {
			return nil, &Error{File: file, Line: line, Reason: fmt.Sprintf("column %q: %q is not a unit of %s (want %s)", Printable(t, 40), hc.unit, hc.col, columns[hc.col].units.Want)}
		}
		h.pos[hc.col], h.unit[hc.col] = i, hc.unit
	}
	if len(unknown) > 0 {
		if len(unknown) > 8 {
			unknown = append(unknown[:8], fmt.Sprintf("and %d more", len(unknown)-8))
		}
		return nil, &Error{File: file, Line: line, Reason: fmt.Sprintf("unrecognised column(s) %s; rename them, or leave them out with --ignore-column NAME (known columns: %s)",
			strings.Join(unknown, ", "), strings.Join(columnNames(), ", "))}
	}
	var missing []string
	if h.pos[ColCount] < 0 {
		missing = append(missing, "count")
	}
	if h.pos[ColFormat] < 0 {
		missing = append(missing, "format")
	}
	if h.pos[ColCapacity] < 0 && h.pos[ColMass] < 0 && h.pos[ColTotalMass] < 0 {
		missing = append(missing, "capacity (or mass, for lines known by weight only)")
	}
	if len(missing) > 0 {
		return nil, &Error{File: file, Line: line, Reason: fmt.Sprintf("missing required column(s) %s", strings.Join(missing, ", "))}
	}
	return h, nil
}

func columnNames() []string {
	out := make([]string, 0, numColumns)
	for _, s := range columns {
		out = append(out, s.name)
	}
	return slices.Clip(out)
}
