package intake

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"blackmass/feed/manifest"
)

// The line parser's fields: format, chemistry, count, cells per pack, mass and capacity.

func (p *lineParser) format(l *manifest.Line, rec []string, line int) error {
	fs := p.get(rec, ColFormat)
	if f, ok := p.lastFormat.get(fs); ok {
		l.Format = f
		return nil
	}
	f, ok := p.formats[fs]
	if !ok {
		var err error
		if f, err = ParseFormat(fs); err != nil {
			return p.fail(line, ColFormat, fs, err.Error())
		}
		p.formats[fs] = f
	}
	p.lastFormat.put(fs, f)
	l.Format = f
	return nil
}

// chemistry resolves the label; a label that says nothing about the cathode takes the prior of
// the item's application (named in its own column, or by a word of the description or notes) or
// else of its format.
func (p *lineParser) chemistry(l *manifest.Line, rec []string, line int) error {
	l.ChemistryLabel = p.get(rec, ColChemistry)
	if l.NonLithium = p.otherBattery(l.ChemistryLabel); l.NonLithium != nil {
		return nil
	}
	appText := p.get(rec, ColApplication)
	if appText != "" {
		app, ok := p.apps[appText]
		if !ok {
			app = p.opt.Catalogue.Application(appText)
			p.apps[appText] = app
		}
		if app == "" {
			return p.fail(line, ColApplication, appText, "not a known application (want phone, laptop, power tool, e-bike, vehicle or storage; or leave it blank)")
		}
		l.Application = app
	}
	// Every line names its application when its description or notes do, whether or not its
	// label needs it, so that a line reads the same however the lines are spread over parsers.
	if l.Application == "" && (l.Description != "" || l.Notes != "") {
		l.Application = p.describedApplication(l.Description, l.Notes)
	}
	// A label resolved once is reused; only a label that says nothing about the cathode needs
	// the item's application (from its column, or a word of the description or notes).
	if r, ok := p.lastChem.get(l.ChemistryLabel); ok {
		l.Chemistry = r.chem
		return nil
	}
	if r, ok := p.chem[labelKey{l.ChemistryLabel, ""}]; ok && !r.chem.Unknown {
		p.lastChem.put(l.ChemistryLabel, r)
		l.Chemistry = r.chem
		return nil
	}
	priorKey := l.Application
	if priorKey == "" {
		priorKey = l.Format.String()
	}
	k := labelKey{l.ChemistryLabel, priorKey}
	r, ok := p.chem[k]
	if !ok {
		c, err := p.opt.Catalogue.ParseLabel(l.ChemistryLabel)
		r = &resolved{}
		switch {
		case err != nil && !p.opt.UnknownAsPrior:
			return p.fail(line, ColChemistry, l.ChemistryLabel, err.Error()+" (or run with --unknown prior to treat it as unknown)")
		case err != nil:
			c = p.opt.Catalogue.Unknown(priorKey) // the report lists the label with its lines and energy
			r.unresolved = true
		case c.Unknown:
			c = p.opt.Catalogue.Unknown(priorKey)
		default:
			k.app = ""
		}
		r.chem = &c
		p.chem[k] = r
	}
	l.Chemistry, l.LabelUnresolved = r.chem, r.unresolved
	return nil
}

func (p *lineParser) count(l *manifest.Line, rec []string, line int) error {
	cs := p.get(rec, ColCount)
	if cs == "" && p.get(rec, ColMass) == "" && p.get(rec, ColTotalMass) != "" {
		l.Count, l.CountUnknown = 1, true // a bag weighed whole
		return nil
	}
	if n, err := strconv.Atoi(cs); err == nil && n >= 1 && n <= maxCount && cs[0] != '+' {
		l.Count = n // the common case: a plain whole number
		return nil
	}
	if strings.Contains(cs, ".") && (p.decimalComma || dotGroupsThousands(cs)) {
		// In a decimal-comma file "1.000" is a thousand; elsewhere a count has no decimals.
		return p.fail(line, ColCount, cs, "ambiguous: a dot may group thousands (1.000 = 1000) or mark decimals; write the count without separators")
	}
	v, err := ParseNumber(cs, p.decimalComma)
	if err != nil || v != math.Trunc(v) || v < 1 || v > maxCount {
		return p.fail(line, ColCount, cs, fmt.Sprintf("want a whole number from 1 to %d", maxCount))
	}
	l.Count = int(v)
	return nil
}

// dotGroupsThousands reports whether s has a dot followed by exactly three digits and no more
// ("1.000", "12.500"): the form of a thousands group in decimal-comma locales.
func dotGroupsThousands(s string) bool {
	_, frac, ok := strings.Cut(s, ".")
	if !ok || len(frac) < 3 {
		return false
	}
	for _, g := range strings.Split(frac, ".") {
		if len(g) != 3 || strings.Trim(g, "0123456789") != "" {
			return false
		}
	}
	return true
}

func (p *lineParser) cellsPerPack(l *manifest.Line, rec []string, line int) error {
	l.CellsPerItem = 1
	cp := p.get(rec, ColCellsPerPack)
	if ss, ps := p.get(rec, ColSeries), p.get(rec, ColParallel); ss != "" || ps != "" {
		tag, err := seriesParallel(ss, ps)
		if err != nil {
			return p.fail(line, ColSeries, ss+"/"+ps, err.Error())
		}
		if cp != "" {
			n1, err1 := parseCellsPerPack(cp)
			n2, _ := parseCellsPerPack(tag)
			if err1 == nil && n1 != n2 {
				return p.fail(line, ColCellsPerPack, cp, fmt.Sprintf("disagrees with series × parallel = %d", n2))
			}
		}
		cp = tag
	}
	if cp == "" {
		if l.Format.IsAssembly() {
			l.CellsPerItem = 0
		}
		return nil
	}
	n, ok := p.layouts[cp]
	if !ok {
		var err error
		if n, err = parseCellsPerPack(cp); err != nil {
			return p.fail(line, ColCellsPerPack, cp, err.Error())
		}
		p.layouts[cp] = n
	}
	if !l.Format.IsAssembly() && n != 1 {
		return p.fail(line, ColCellsPerPack, cp, fmt.Sprintf("a %s line is one cell per item; use format pack or module", l.Format))
	}
	l.CellsPerItem = n
	return nil
}

func (p *lineParser) mass(l *manifest.Line, rec []string, line int) error {
	col := ColMass
	ms := p.get(rec, ColMass)
	if ms == "" {
		col, ms = ColTotalMass, p.get(rec, ColTotalMass)
	}
	if ms == "" {
		return nil
	}
	q := p.quantity(col, ms, MassUnits, p.hdr.unit[col])
	if q.err != nil {
		return p.fail(line, col, ms, q.err.Error())
	}
	v := q.v
	if col == ColTotalMass {
		v /= float64(l.Count)
	} else if err := p.totalAgrees(l, rec, line, v); err != nil {
		return err
	}
	if v < minItemKg || v > maxItemKg {
		return p.fail(line, col, ms, fmt.Sprintf("%.4g kg per item is outside %g to %g kg", v, minItemKg, float64(maxItemKg)))
	}
	l.MassKg = v
	return nil
}

// totalAgrees checks a line that gives both a per-item mass and a total mass: count × mass must
// be the total within half a per cent (the totals row's tolerance), else the line is refused.
func (p *lineParser) totalAgrees(l *manifest.Line, rec []string, line int, itemKg float64) error {
	ts := p.get(rec, ColTotalMass)
	if ts == "" {
		return nil
	}
	q := p.quantity(ColTotalMass, ts, MassUnits, p.hdr.unit[ColTotalMass])
	if q.err != nil {
		return p.fail(line, ColTotalMass, ts, q.err.Error())
	}
	if lineKg := float64(l.Count) * itemKg; math.Abs(q.v-lineKg) > 0.005*lineKg {
		return p.fail(line, ColTotalMass, ts, fmt.Sprintf("disagrees with count × mass = %d × %.4g kg = %.4g kg; give one of the two",
			l.Count, itemKg, lineKg))
	}
	return nil
}

func (p *lineParser) capacity(l *manifest.Line, rec []string, line int) error {
	l.CapacityText = p.get(rec, ColCapacity)
	if l.CapacityText == "" {
		if l.MassKg > 0 {
			return nil // energy from the chemistry's Wh/kg band (manifest.Line.MassOnly)
		}
		return p.fail(line, ColCapacity, "", "give a capacity, or a mass for a line known by weight only")
	}
	capText, voltText, err := p.voltsAndCharge(l.CapacityText, p.get(rec, ColVoltage), line)
	if err != nil {
		return err
	}
	q := p.quantity(ColCapacity, capText, CapacityUnits, p.hdr.unit[ColCapacity])
	if q.err != nil {
		return p.fail(line, ColCapacity, l.CapacityText, q.err.Error())
	}
	val, unit := q.v, q.unit
	basis := strings.ToLower(p.get(rec, ColBasis))
	switch basis {
	case "":
		basis = "cell"
		if l.Format.IsAssembly() {
			basis = "pack"
		}
	case "cell", "per cell", "each cell":
		basis = "cell"
	case "pack", "module", "per pack", "item", "whole":
		basis = "pack"
	default:
		return p.fail(line, ColBasis, basis, "want cell or pack")
	}
	l.CapacityBasis, l.CapacityValue, l.CapacityUnit = basis, q.v, q.unit
	mult := 1.0
	if basis == "cell" && l.Format.IsAssembly() {
		if l.CellsPerItem == 0 {
			return p.fail(line, ColCellsPerPack, "", "capacity is per cell, so cells_per_pack is needed to get the pack's capacity")
		}
		mult = float64(l.CellsPerItem)
	}
	switch unit {
	case "Wh":
		l.EnergyWh = val * mult
	case "Ah":
		if vs := voltText; vs != "" {
			vq := p.quantity(ColVoltage, vs, VoltUnits, "V")
			v := vq.v
			if vq.err != nil || v < minVoltageV || v > maxVoltageV {
				return p.fail(line, ColVoltage, vs, fmt.Sprintf("want a nominal voltage from %g to %g V", float64(minVoltageV), float64(maxVoltageV)))
			}
			if basis == "cell" && v > maxCellV {
				return p.fail(line, ColVoltage, vs, "capacity is per cell but the voltage is above any cell's (give the cell voltage or capacity_basis pack)")
			}
			l.VoltageV = v
			l.EnergyWh = val * v * mult
		} else {
			l.ChargeAh = val * mult
			if val*mult < minItemAh {
				return p.fail(line, ColCapacity, l.CapacityText, fmt.Sprintf("less than %g Ah per item is below any lithium-ion cell", minItemAh))
			}
		}
	}
	perItemWh := l.EnergyWh
	if perItemWh == 0 {
		perItemWh = l.ChargeAh * assumedMaxCellV
	}
	limit := float64(maxCellWh)
	if l.Format.IsAssembly() {
		limit = maxAssemblyWh
	}
	if perItemWh > limit {
		return p.fail(line, ColCapacity, l.CapacityText, fmt.Sprintf("%.4g Wh per item is absurd for a %s (limit %.0f Wh)", perItemWh, l.Format, limit))
	}
	if l.EnergyWh > 0 && l.EnergyWh < minItemWh {
		return p.fail(line, ColCapacity, l.CapacityText, fmt.Sprintf("less than %g Wh per item is below any lithium-ion cell", minItemWh))
	}
	return nil
}

var formatWords = map[string]manifest.Format{
	"cylindrical": manifest.Cylindrical, "cylinder": manifest.Cylindrical, "cyl": manifest.Cylindrical, "round": manifest.Cylindrical,
	"18650": manifest.Cylindrical, "21700": manifest.Cylindrical, "26650": manifest.Cylindrical, "32700": manifest.Cylindrical, "4680": manifest.Cylindrical, "14500": manifest.Cylindrical,
	"pouch": manifest.Pouch, "polymer": manifest.Pouch, "soft": manifest.Pouch, "lipo": manifest.Pouch, "soft pack": manifest.Pouch,
	"prismatic": manifest.Prismatic, "prism": manifest.Prismatic, "can": manifest.Prismatic,
	"pack": manifest.Pack, "battery pack": manifest.Pack, "packs": manifest.Pack, "battery": manifest.Pack,
	"module": manifest.Module, "modules": manifest.Module,
}

// ParseFormat accepts the format names and their synonyms, case-insensitively.
func ParseFormat(s string) (manifest.Format, error) {
	if f, ok := formatWords[strings.ToLower(trimSpace(s))]; ok {
		return f, nil
	}
	return manifest.FormatInvalid, fmt.Errorf("unknown format (want cylindrical, pouch, prismatic, pack or module)")
}

// seriesParallel makes a series-parallel tag of separate series and parallel counts.
func seriesParallel(series, parallel string) (string, error) {
	if series == "" {
		return "", errors.New("a parallel count needs the series count too")
	}
	for _, v := range []string{series, parallel} {
		if v == "" {
			continue
		}
		if n, err := strconv.Atoi(v); err != nil || n < 1 || n > maxCellsPerItem {
			return "", fmt.Errorf("want whole numbers of cells from 1 to %d", maxCellsPerItem)
		}
	}
	if parallel == "" {
		parallel = "1"
	}
	return series + "s" + parallel + "p", nil
}

// parseCellsPerPack accepts a whole number ("52") or a series-parallel tag ("13s4p", "10S3P",
// "4p13s", "13S-4P"), returning the number of cells.
func parseCellsPerPack(s string) (int, error) {
	t := strings.ToLower(strings.NewReplacer(" ", "", "-", "", "x", "").Replace(s))
	if n, err := strconv.Atoi(t); err == nil {
		if t != trimSpace(s) {
			// "4x3", "13-4", "2 3": joined they would read as 43, 134, 23 cells.
			return 0, errors.New("two numbers without s and p: write the number of cells (12) or a series-parallel tag (4s3p)")
		}
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

// describedApplication is the application a line's description and notes name, "" for none;
// the previous line's answer is reused when they are the same (a manifest repeats them). It is
// asked only with a description or notes, so the empty memo matches nothing.
func (p *lineParser) describedApplication(description, notes string) string {
	m := &p.lastDescribed
	if m.description != description || m.notes != notes {
		*m = describedApp{description: description, notes: notes, app: p.opt.Catalogue.Application(description + " " + notes)}
	}
	return m.app
}

// describedApp is the application found in a description and notes.
type describedApp struct{ description, notes, app string }
