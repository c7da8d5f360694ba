package feed

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"blackmass/cathode"
	"blackmass/data"
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

var formatWords = map[string]Format{
	"cylindrical": Cylindrical, "cylinder": Cylindrical, "cyl": Cylindrical, "round": Cylindrical,
	"18650": Cylindrical, "21700": Cylindrical, "26650": Cylindrical, "32700": Cylindrical, "4680": Cylindrical,
	"pouch": Pouch, "polymer": Pouch, "soft": Pouch, "lipo": Pouch,
	"prismatic": Prismatic, "prism": Prismatic, "can": Prismatic,
	"pack": Pack, "battery pack": Pack, "packs": Pack,
	"module": Module, "modules": Module,
}

// ParseFormat accepts the format names and their synonyms, case-insensitively.
func ParseFormat(s string) (Format, error) {
	if f, ok := formatWords[strings.ToLower(strings.TrimSpace(s))]; ok {
		return f, nil
	}
	return FormatInvalid, fmt.Errorf("unknown format (want cylindrical, pouch, prismatic, pack or module)")
}

// Line is one parsed manifest line. Energies and masses are per item (a cell, or a whole pack
// or module); Count items were received.
type Line struct {
	Num            int // input line number (1-based)
	ID             string
	Description    string
	ChemistryLabel string
	Chemistry      *cathode.Chemistry
	Format         Format
	EnergyWh       float64 // per item; 0 if only charge is known
	ChargeAh       float64 // per item, when capacity was in Ah/mAh with no voltage
	CapacityText   string  // as typed
	CellsPerItem   int     // 1 for loose cells; from cells_per_pack for packs (0: not given)
	Count          int
	MassKg         float64 // measured mass per item; 0 if not given
	Notes          string
	UnknownAsked   bool // the label was unresolved and --unknown prior turned it into the prior mix
}

// ManifestOptions controls manifest reading.
type ManifestOptions struct {
	Catalogue *cathode.Catalogue
	// UnknownAsPrior treats unresolvable chemistry labels as the explicit unknown (prior mix)
	// instead of refusing them.
	UnknownAsPrior bool
}

// column names and their synonyms.
var columnSynonyms = map[string]string{
	"id": "id", "line_id": "id", "item": "id", "ref": "id", "reference": "id",
	"description": "description", "desc": "description", "name": "description",
	"chemistry": "chemistry", "chem": "chemistry", "cathode": "chemistry", "type": "chemistry",
	"format": "format", "form": "format", "shape": "format",
	"capacity": "capacity", "nameplate": "capacity", "rated_capacity": "capacity", "energy": "capacity",
	"capacity_basis": "capacity_basis", "basis": "capacity_basis",
	"voltage": "voltage", "nominal_voltage": "voltage", "v_nom": "voltage",
	"cells_per_pack": "cells_per_pack", "cells": "cells_per_pack", "layout": "cells_per_pack", "configuration": "cells_per_pack",
	"count": "count", "qty": "count", "quantity": "count", "pieces": "count", "pcs": "count",
	"mass": "mass", "weight": "mass", "mass_each": "mass",
	"notes": "notes", "note": "notes", "comment": "notes", "comments": "notes",
}

var requiredColumns = []string{"chemistry", "format", "capacity", "count"}

// ManifestError is a bad manifest value: file, line, column and the value as typed.
type ManifestError struct {
	File   string
	Line   int
	Column string
	Value  string
	Reason string
}

func (e *ManifestError) Error() string {
	switch {
	case e.Line == 0:
		return fmt.Sprintf("%s: %s", e.File, e.Reason)
	case e.Column == "":
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Reason)
	}
	return fmt.Sprintf("%s:%d: %s %q: %s", e.File, e.Line, e.Column, e.Value, e.Reason)
}

// rowSource yields manifest records: a header first, then data rows with their line numbers.
type rowSource interface {
	next() (rec []string, line int, err error) // io.EOF at the end
}

// ReadManifestCSV streams a CSV manifest (comma or semicolon separated; with semicolons a decimal
// comma is accepted) to fn, one Line at a time. name is the file name for error messages.
func ReadManifestCSV(r io.Reader, name string, opt ManifestOptions, fn func(Line) error) error {
	br := data.SkipBOM(r)
	sep, err := sniffSeparator(br)
	if err != nil {
		return &ManifestError{File: name, Reason: err.Error()}
	}
	cr := data.NewCSVReader(br, sep)
	cr.ReuseRecord = true
	cr.FieldsPerRecord = 0
	src := &csvSource{cr: cr, name: name}
	return readRows(src, name, opt, sep == ';', fn)
}

type csvSource struct {
	cr   *csv.Reader
	name string
}

func (s *csvSource) next() ([]string, int, error) {
	rec, err := s.cr.Read()
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			reason := pe.Err.Error()
			if errors.Is(pe.Err, csv.ErrFieldCount) {
				reason = "wrong number of fields (ragged row)"
			}
			return nil, pe.Line, &ManifestError{File: s.name, Line: pe.Line, Reason: reason}
		}
		return nil, 0, err
	}
	line, _ := s.cr.FieldPos(0)
	return rec, line, nil
}

// sniffSeparator looks at the first non-comment line: a semicolon-separated header wins if it has
// more semicolons than commas.
func sniffSeparator(br *bufio.Reader) (rune, error) {
	for n := 4096; ; n *= 4 {
		b, err := br.Peek(n)
		if len(b) == 0 && err != nil {
			if errors.Is(err, io.EOF) {
				return 0, errors.New("empty file")
			}
			return 0, err
		}
		for _, ln := range bytes.Split(b, []byte("\n")) {
			t := bytes.TrimSpace(ln)
			if len(t) == 0 || t[0] == '#' {
				continue
			}
			if bytes.Count(t, []byte(";")) > bytes.Count(t, []byte(",")) {
				return ';', nil
			}
			return ',', nil
		}
		if err != nil || n > 1<<20 {
			return ',', nil
		}
	}
}

func readRows(src rowSource, name string, opt ManifestOptions, decimalComma bool, fn func(Line) error) error {
	header, hline, err := src.next()
	if errors.Is(err, io.EOF) {
		return &ManifestError{File: name, Reason: "empty file (no header, no lines)"}
	}
	if err != nil {
		return err
	}
	idx := map[string]int{}
	for i, h := range header {
		if !utf8.ValidString(h) {
			return &ManifestError{File: name, Line: hline, Reason: "header is not valid UTF-8"}
		}
		k := strings.ToLower(strings.TrimSpace(h))
		k = strings.NewReplacer(" ", "_", "-", "_").Replace(k)
		canon, ok := columnSynonyms[k]
		if !ok {
			continue // extra columns are kept out of the model
		}
		if _, dup := idx[canon]; dup {
			return &ManifestError{File: name, Line: hline, Reason: fmt.Sprintf("duplicate column %q (same as %q)", h, canon)}
		}
		idx[canon] = i
	}
	var missing []string
	for _, c := range requiredColumns {
		if _, ok := idx[c]; !ok {
			missing = append(missing, c)
		}
	}
	if len(missing) == len(requiredColumns) {
		return &ManifestError{File: name, Line: hline, Reason: fmt.Sprintf("no recognisable header: want columns %s (and optionally id, description, capacity_basis, voltage, cells_per_pack, mass, notes)", strings.Join(requiredColumns, ", "))}
	}
	if len(missing) > 0 {
		return &ManifestError{File: name, Line: hline, Reason: fmt.Sprintf("missing required column(s) %s", strings.Join(missing, ", "))}
	}
	p := lineParser{name: name, opt: opt, decimalComma: decimalComma, chem: map[string]*cathode.Chemistry{}, formats: map[string]Format{}, layouts: map[string]int{}}
	for i, c := range columnIDs {
		p.cols[i] = -1
		if j, ok := idx[c]; ok {
			p.cols[i] = j
		}
	}
	n := 0
	for {
		rec, line, err := src.next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return err
		}
		if blank(rec) {
			continue
		}
		l, err := p.parse(rec, line)
		if err != nil {
			return err
		}
		n++
		if err := fn(l); err != nil {
			return err
		}
	}
	if n == 0 {
		return &ManifestError{File: name, Line: hline, Reason: "header but no lines"}
	}
	return nil
}

func blank(rec []string) bool {
	for _, f := range rec {
		if strings.TrimSpace(f) != "" {
			return false
		}
	}
	return true
}

// columnIDs lists the canonical columns in the order of the col* constants; lineParser keeps
// their positions in an array so a line costs no map lookups.
var columnIDs = []string{"id", "description", "chemistry", "format", "capacity", "capacity_basis", "voltage", "cells_per_pack", "count", "mass", "notes"}

const (
	colID = iota
	colDescription
	colChemistry
	colFormat
	colCapacity
	colBasis
	colVoltage
	colCellsPerPack
	colCount
	colMass
	colNotes
)

type lineParser struct {
	name         string
	cols         [16]int // position of each columnIDs entry, -1 if absent
	opt          ManifestOptions
	decimalComma bool
	chem         map[string]*cathode.Chemistry // resolved labels, so a label is parsed once
	formats      map[string]Format
	layouts      map[string]int // cells_per_pack text -> cells
}

func (p *lineParser) get(rec []string, col int) string {
	i := p.cols[col]
	if i < 0 || i >= len(rec) {
		return ""
	}
	return strings.TrimSpace(rec[i])
}

func (p *lineParser) fail(line int, col, val, reason string) error {
	return &ManifestError{File: p.name, Line: line, Column: col, Value: val, Reason: reason}
}

// Limits beyond which a value is refused as absurd.
const (
	maxCount        = 10_000_000
	maxCellWh       = 2_000   // a single cell
	maxAssemblyWh   = 250_000 // a pack or module
	maxItemKg       = 3_000
	maxCellsPerItem = 20_000
)

func (p *lineParser) parse(rec []string, line int) (Line, error) {
	// Text kept as typed must be valid UTF-8; the other fields are parsed strictly anyway.
	for _, c := range []int{colID, colDescription, colChemistry, colNotes} {
		if !utf8.ValidString(p.get(rec, c)) {
			return Line{}, p.fail(line, columnIDs[c], "", "not valid UTF-8")
		}
	}
	l := Line{Num: line, ID: p.get(rec, colID), Description: p.get(rec, colDescription), Notes: p.get(rec, colNotes)}
	// chemistry
	l.ChemistryLabel = p.get(rec, colChemistry)
	ch, ok := p.chem[l.ChemistryLabel]
	if !ok {
		c, err := p.opt.Catalogue.ParseLabel(l.ChemistryLabel)
		if err != nil {
			if !p.opt.UnknownAsPrior {
				return l, p.fail(line, "chemistry", l.ChemistryLabel, err.Error()+" (or run with --unknown prior to treat it as unknown)")
			}
			c, _ = p.opt.Catalogue.ParseLabel("unknown")
			c.Notes = []string{fmt.Sprintf("label %q not recognised: treated as unknown (prior mix)", l.ChemistryLabel)}
		}
		ch = &c
		p.chem[l.ChemistryLabel] = ch
	}
	l.Chemistry = ch
	// format
	fs := p.get(rec, colFormat)
	f, ok := p.formats[fs]
	if !ok {
		var err error
		if f, err = ParseFormat(fs); err != nil {
			return l, p.fail(line, "format", fs, err.Error())
		}
		p.formats[fs] = f
	}
	l.Format = f
	// count
	cs := p.get(rec, colCount)
	cnt, err := p.integer(cs)
	if err != nil || cnt < 1 || cnt > maxCount {
		return l, p.fail(line, "count", cs, fmt.Sprintf("want a whole number from 1 to %d", maxCount))
	}
	l.Count = cnt
	// cells per pack
	l.CellsPerItem = 1
	if cp := p.get(rec, colCellsPerPack); cp != "" {
		n, ok := p.layouts[cp]
		if !ok {
			var err error
			if n, err = parseCellsPerPack(cp); err != nil {
				return l, p.fail(line, "cells_per_pack", cp, err.Error())
			}
			p.layouts[cp] = n
		}
		if !f.IsAssembly() && n != 1 {
			return l, p.fail(line, "cells_per_pack", cp, fmt.Sprintf("a %s line is one cell per item; use format pack or module", f))
		}
		l.CellsPerItem = n
	} else if f.IsAssembly() {
		l.CellsPerItem = 0
	}
	// capacity and basis
	l.CapacityText = p.get(rec, colCapacity)
	val, unit, err := p.quantity(l.CapacityText, capacityUnits)
	if err != nil {
		return l, p.fail(line, "capacity", l.CapacityText, err.Error())
	}
	basis := strings.ToLower(p.get(rec, colBasis))
	switch basis {
	case "":
		basis = "cell"
		if f.IsAssembly() {
			basis = "pack"
		}
	case "cell", "per cell", "each cell":
		basis = "cell"
	case "pack", "module", "per pack", "item", "whole":
		basis = "pack"
	default:
		return l, p.fail(line, "capacity_basis", basis, "want cell or pack")
	}
	mult := 1.0
	if basis == "cell" && f.IsAssembly() {
		if l.CellsPerItem == 0 {
			return l, p.fail(line, "cells_per_pack", "", "capacity is per cell, so cells_per_pack is needed to get the pack's capacity")
		}
		mult = float64(l.CellsPerItem)
	}
	switch unit {
	case "Wh":
		l.EnergyWh = val * mult
	case "Ah":
		vs := p.get(rec, colVoltage)
		if vs != "" {
			v, _, err := p.quantity(vs, voltUnits)
			if err != nil || v < 1 || v > 1000 {
				return l, p.fail(line, "voltage", vs, "want a nominal voltage from 1 to 1000 V")
			}
			if basis == "cell" && v > 5 {
				return l, p.fail(line, "voltage", vs, "capacity is per cell but the voltage is above any cell's (give the cell voltage or capacity_basis pack)")
			}
			l.EnergyWh = val * v * mult
		} else {
			l.ChargeAh = val * mult
		}
	}
	perItemWh := l.EnergyWh
	if perItemWh == 0 {
		perItemWh = l.ChargeAh * 4.5 // upper bound of a cell voltage, for the sanity limit only
	}
	limit := float64(maxCellWh)
	if f.IsAssembly() {
		limit = maxAssemblyWh
	}
	if perItemWh > limit {
		return l, p.fail(line, "capacity", l.CapacityText, fmt.Sprintf("%.0f Wh per item is absurd for a %s (limit %.0f Wh)", perItemWh, f, limit))
	}
	// mass
	if ms := p.get(rec, colMass); ms != "" {
		v, _, err := p.quantity(ms, massUnits)
		if err != nil {
			return l, p.fail(line, "mass", ms, err.Error())
		}
		if v > maxItemKg {
			return l, p.fail(line, "mass", ms, fmt.Sprintf("more than %d kg per item is absurd", maxItemKg))
		}
		l.MassKg = v
	}
	return l, nil
}

func (p *lineParser) number(s string) (float64, error) {
	if p.decimalComma {
		s = strings.Replace(s, ",", ".", 1)
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, errors.New("not a number")
	}
	return v, nil
}

func (p *lineParser) integer(s string) (int, error) {
	if n, err := strconv.Atoi(s); err == nil {
		return n, nil
	}
	v, err := p.number(s)
	if err != nil || v != math.Trunc(v) || v > math.MaxInt32 {
		return 0, errors.New("not a whole number")
	}
	return int(v), nil
}

// unit is one accepted unit: its spelling (matched case-insensitively), the factor to the base
// unit and the base unit's name.
type unit struct {
	name   string
	factor float64
	base   string
}

type unitTable struct {
	units []unit
	want  string
}

var capacityUnits = unitTable{units: []unit{{"wh", 1, "Wh"}, {"kwh", 1000, "Wh"}, {"ah", 1, "Ah"}, {"mah", 0.001, "Ah"}}, want: "Wh, kWh, Ah or mAh"}

var massUnits = unitTable{units: []unit{{"g", 0.001, "kg"}, {"kg", 1, "kg"}, {"lb", 0.45359237, "kg"}, {"lbs", 0.45359237, "kg"}}, want: "g, kg or lb"}

var voltUnits = unitTable{units: []unit{{"v", 1, "V"}, {"", 1, "V"}}, want: "V"}

// quantity parses "3.5 Ah", "3500mAh", "1,2 kWh" (decimal comma files) into a positive value in
// the table's base unit.
func (p *lineParser) quantity(s string, u unitTable) (float64, string, error) {
	if s == "" {
		return 0, "", errors.New("missing value (want a number and a unit: " + u.want + ")")
	}
	i := 0
	for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.' || s[i] == ',' || s[i] == '-' || s[i] == '+' || s[i] == 'e' && i > 0 && i+1 < len(s) && (s[i+1] >= '0' && s[i+1] <= '9' || s[i+1] == '-')) {
		i++
	}
	num, rest := s[:i], s[i:]
	for len(rest) > 0 && (rest[0] == ' ' || rest[0] == '\t') {
		rest = rest[1:]
	}
	if num == "" {
		return 0, "", fmt.Errorf("no number (want a number and a unit: %s)", u.want)
	}
	v, err := p.number(num)
	if err != nil {
		return 0, "", fmt.Errorf("not a number (want a number and a unit: %s)", u.want)
	}
	k := -1
	for j, un := range u.units {
		if len(un.name) == len(rest) && strings.EqualFold(rest, un.name) {
			k = j
			break
		}
	}
	if k < 0 {
		if rest == "" {
			return 0, "", fmt.Errorf("no unit (want %s)", u.want)
		}
		return 0, "", fmt.Errorf("unknown unit (want %s)", u.want)
	}
	if v <= 0 {
		return 0, "", errors.New("must be positive")
	}
	return v * u.units[k].factor, u.units[k].base, nil
}

// parseCellsPerPack accepts a whole number ("52") or a series-parallel tag ("13s4p", "10S3P",
// "4p13s"), returning the number of cells.
func parseCellsPerPack(s string) (int, error) {
	t := strings.ToLower(strings.ReplaceAll(s, " ", ""))
	if n, err := strconv.Atoi(t); err == nil {
		if n < 1 || n > maxCellsPerItem {
			return 0, fmt.Errorf("want 1 to %d cells", maxCellsPerItem)
		}
		return n, nil
	}
	var s1, p1 int
	rest := t
	for rest != "" {
		j := 0
		for j < len(rest) && rest[j] >= '0' && rest[j] <= '9' {
			j++
		}
		if j == 0 || j == len(rest) || j > 5 {
			return 0, errors.New("want a number of cells or a series-parallel tag such as 13s4p")
		}
		n, _ := strconv.Atoi(rest[:j])
		switch rest[j] {
		case 's':
			if s1 != 0 {
				return 0, errors.New("series count given twice")
			}
			s1 = n
		case 'p':
			if p1 != 0 {
				return 0, errors.New("parallel count given twice")
			}
			p1 = n
		default:
			return 0, errors.New("want a number of cells or a series-parallel tag such as 13s4p")
		}
		rest = rest[j+1:]
	}
	if s1 == 0 {
		return 0, errors.New("a series-parallel tag needs a non-zero series count (e.g. 13s4p)")
	}
	if p1 == 0 {
		if strings.Contains(t, "p") {
			return 0, errors.New("parallel count must be at least 1")
		}
		p1 = 1
	}
	if s1*p1 > maxCellsPerItem {
		return 0, fmt.Errorf("more than %d cells per item", maxCellsPerItem)
	}
	return s1 * p1, nil
}

// ParseMassKg parses a mass with its unit ("1200 kg", "1.2 t", "450 g", "900 lb") into kg.
func ParseMassKg(s string) (float64, error) {
	var p lineParser
	t := strings.TrimSpace(s)
	if strings.HasSuffix(t, "t") && !strings.HasSuffix(strings.ToLower(t), "ct") {
		v, _, err := p.quantity(strings.TrimSpace(strings.TrimSuffix(t, "t"))+" kg", massUnits)
		return v * 1000, err
	}
	v, _, err := p.quantity(t, massUnits)
	return v, err
}
