package intake

import (
	"fmt"
	"math"
	"regexp"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/manifest"
)

// maxNotes bounds the notes kept of one manifest; further ones are counted.
const maxNotes = 50

// trailer reads past the rows benches write under a manifest's table: totals (checked against
// the lines above), free text, and everything after a blank row followed by text (the end of the
// table). It also sums the lines for the totals check and notes what was assumed of a line.
type trailer struct {
	lastLine int     // the row read last (a gap before the next is a blank or comment row)
	ended    bool    // a blank row followed by text ended the table
	endLine  int     // the text row that ended it
	after    int     // rows read past after the end
	items    int     // Σ count of the lines so far (bags weighed whole left out)
	massKg   float64 // Σ count × mass of the lines so far
	massAll  bool    // every line so far gave a mass
	lines    int
	dropped  int // notes beyond maxNotes
}

// totalWords start a totals row.
var totalWords = regexp.MustCompile(`(?i)^(grand\s+|sub-?\s*)?(total|totals|sum)\b`)

// mayBeTotal is the cheap test before totalWords: its words start with g, s or t.
func mayBeTotal(s string) bool {
	if s == "" {
		return false
	}
	switch s[0] {
	case 'g', 'G', 's', 'S', 't', 'T':
		return true
	}
	return false
}

// skip reports whether a row is read past (a totals row, free text, a row after the table's
// end), noting why; a manifest line after the end of the table is an error. row is what a
// parser found of the row alone (rowFacts); p, which may be another parser, reads a totals row.
func (t *trailer) skip(p *lineParser, rec []string, line int, row *parsedRow, info *Info) (bool, error) {
	gap := line > t.lastLine+1
	t.lastLine = line
	if t.ended {
		if row.err == nil {
			return true, &Error{File: p.name, Line: line, Reason: fmt.Sprintf("a manifest line after the end of the table "+
				"(the blank row above line %d and the text on it end the table): remove that text or the blank row", t.endLine)}
		}
		t.after++
		return true, nil
	}
	if row.totalWords {
		if row.err == nil {
			return false, nil // a line whose id happens to start with "sum"
		}
		t.note(info, t.totals(p, rec, line))
		return true, nil
	}
	if !row.text {
		return false, nil
	}
	if gap && t.lines > 0 {
		t.ended, t.endLine = true, line
		t.note(info, fmt.Sprintf("line %d: text below a blank row (%s) ends the table; the rows after it are read as notes", line, quoteCells(rec)))
		return true, nil
	}
	t.note(info, fmt.Sprintf("line %d: free text, not a manifest line, read past (%s)", line, quoteCells(rec)))
	return true, nil
}

// add counts a line read, and notes what was assumed of it.
func (t *trailer) add(l *manifest.Line, info *Info) {
	if t.lines == 0 {
		t.massAll = true
	}
	t.lines++
	if l.CountUnknown {
		t.note(info, fmt.Sprintf("line %d: no count: the total mass, %.4g kg, is read as one bag weighed whole "+
			"(count unknown; energy from the chemistry's Wh/kg band)", l.Num, l.MassKg))
		t.massKg += l.MassKg
	} else {
		t.items += l.Count
		t.massKg += float64(l.Count) * l.MassKg
	}
	if l.MassKg == 0 {
		t.massAll = false
	}
	if l.VoltageV > 0 && isVoltsCharge(l.CapacityText) {
		t.note(info, fmt.Sprintf("line %d: capacity %q read as %g V and %s (energy = V × Ah): %.4g Wh per item",
			l.Num, Printable(l.CapacityText, 40), l.VoltageV, l.CapacityGiven(), l.EnergyWh))
	}
}

// finish adds the last notes.
func (t *trailer) finish(info *Info) {
	if t.after > 0 {
		t.note(info, fmt.Sprintf("%d rows after the end of the table (line %d) read as notes", t.after, t.endLine))
	}
	if t.dropped > 0 {
		info.Notes = append(info.Notes, fmt.Sprintf("%d further notes left out", t.dropped))
	}
}

func (t *trailer) note(info *Info, s string) {
	if len(info.Notes) >= maxNotes {
		t.dropped++
		return
	}
	info.Notes = append(info.Notes, s)
}

// totals checks a totals row's count and mass against the lines above and says what it found.
func (t *trailer) totals(p *lineParser, rec []string, line int) string {
	var found []string
	if cs := p.get(rec, ColCount); cs != "" {
		if v, err := ParseNumber(cs, p.decimalComma); err == nil {
			if int(v) == t.items && v == math.Trunc(v) {
				found = append(found, fmt.Sprintf("count %s matches the lines above", cs))
			} else {
				found = append(found, fmt.Sprintf("count %s, but the lines above hold %d items: check for a missing or doubled line", cs, t.items))
			}
		}
	}
	for _, c := range []Column{ColTotalMass, ColMass} {
		ms := p.get(rec, c)
		if ms == "" {
			continue
		}
		q := p.quantity(c, ms, MassUnits, p.hdr.unit[c])
		switch {
		case q.err != nil:
		case !t.massAll:
			found = append(found, fmt.Sprintf("%s %s not checked: not every line above gives a mass", c, ms))
		case math.Abs(q.v-t.massKg) <= math.Max(0.005*t.massKg, 0.001):
			found = append(found, fmt.Sprintf("%s %s matches the lines above", c, ms))
		default:
			found = append(found, fmt.Sprintf("%s %s, but the lines above weigh %.4g kg", c, ms, t.massKg))
		}
	}
	s := fmt.Sprintf("line %d: a totals row, read past", line)
	if len(found) > 0 {
		s += " (" + strings.Join(found, "; ") + ")"
	}
	return s
}

// rowFacts finds what the trailer asks of a row that does not depend on the rows before it:
// whether its first cell starts a totals row, and whether it holds text only. p has loaded rec.
func (p *lineParser) rowFacts(rec []string, row *parsedRow) {
	first := firstCell(rec)
	row.totalWords = mayBeTotal(first) && totalWords.MatchString(first)
	row.text = !row.totalWords && p.isText(rec)
}

// firstCell is a row's first non-blank cell.
func firstCell(rec []string) string {
	for _, c := range rec {
		if c = trimSpace(c); c != "" {
			return c
		}
	}
	return ""
}

// isText reports whether a row holds no manifest values: no format, and no number where a count,
// capacity or mass would be.
func (p *lineParser) isText(rec []string) bool {
	for _, c := range []Column{ColCount, ColCapacity, ColMass, ColTotalMass} {
		if s := p.get(rec, c); s != "" && s[0] >= '0' && s[0] <= '9' {
			return false
		}
	}
	fs := p.get(rec, ColFormat)
	if _, ok := p.formats[fs]; ok && fs != "" {
		return false
	}
	_, err := ParseFormat(fs)
	return err != nil
}

// decimalCommaHint suggests, for a row with values beyond the header, that a decimal comma split
// a number: a field of digits followed by one starting with digits ("3" and "5 Ah").
func (p *lineParser) decimalCommaHint(rec []string) string {
	if p.decimalComma {
		return ""
	}
	return decimalCommaSplit(rec)
}

// decimalCommaSplit is the hint for a comma-separated row with a field too many: the first two
// neighbouring fields that read as the two halves of a number with a decimal comma.
func decimalCommaSplit(rec []string) string {
	for j := 0; j+1 < len(rec); j++ {
		a, b := trimSpace(rec[j]), strings.TrimLeft(rec[j+1], " ")
		if a != "" && b != "" && strings.Trim(a, "0123456789+-") == "" && b[0] >= '0' && b[0] <= '9' {
			return fmt.Sprintf(`; columns %d and %d hold %q and %q: a number written with a decimal comma ("%s,%s") is split by `+
				`the file's commas: quote it, write a decimal point, or save the file with semicolons as separators`,
				j+1, j+2, Printable(a, 20), Printable(b, 20), Printable(a, 20), Printable(b, 20))
		}
	}
	return ""
}

// maxCachedLabels bounds the labels otherBattery remembers.
const maxCachedLabels = 4096

// otherCache remembers which labels name a battery that is not lithium-ion (nil: none).
type otherCache map[string]*cathode.OtherBattery

// otherBattery returns the battery that is not lithium-ion a label names (nil: none), once per label.
func (p *lineParser) otherBattery(label string) *cathode.OtherBattery {
	if b, ok := p.lastOther.get(label); ok { // lines mostly repeat a few labels
		return b
	}
	b, ok := p.others[label]
	if !ok {
		b = p.opt.Catalogue.OtherBattery(label)
		if len(p.others) < maxCachedLabels {
			p.others[label] = b
		}
	}
	p.lastOther.put(label, b)
	return b
}

// voltsCharge matches a capacity written as volts and charge, either way round: "18V 5Ah",
// "5Ah 18V", "3.7V 2000mAh", "36 V / 10.4 Ah".
var (
	voltsFirst  = regexp.MustCompile(`(?i)^([0-9]+(?:[.,][0-9]+)?)\s*V\s*[/,;x×]?\s*([0-9]+(?:[.,][0-9]+)?\s*m?Ah)$`)
	chargeFirst = regexp.MustCompile(`(?i)^([0-9]+(?:[.,][0-9]+)?\s*m?Ah)\s*[/,;x×]?\s*([0-9]+(?:[.,][0-9]+)?)\s*V$`)
)

// splitVoltsCharge splits a capacity written as volts and charge into its charge and its volts.
func splitVoltsCharge(s string) (charge, volts string, ok bool) {
	s = trimSpace(s)
	// Both forms name the volts: most capacities skip the patterns.
	if strings.IndexByte(s, 'v') < 0 && strings.IndexByte(s, 'V') < 0 {
		return s, "", false
	}
	if m := voltsFirst.FindStringSubmatch(s); m != nil {
		return m[2], m[1], true
	}
	if m := chargeFirst.FindStringSubmatch(s); m != nil {
		return m[1], m[2], true
	}
	return s, "", false
}

// isVoltsCharge reports whether a capacity is written as volts and charge.
func isVoltsCharge(s string) bool {
	_, _, ok := splitVoltsCharge(s)
	return ok
}

// voltsAndCharge returns the capacity and the voltage to read: a capacity of volts and charge
// gives both, and a voltage column that disagrees with it is an error.
func (p *lineParser) voltsAndCharge(capText, voltText string, line int) (string, string, error) {
	charge, volts, ok := splitVoltsCharge(capText)
	if !ok {
		return capText, voltText, nil
	}
	if voltText != "" {
		a, err1 := ParseNumber(strings.TrimSuffix(trimSpace(strings.TrimSuffix(strings.ToUpper(voltText), "V")), " "), p.decimalComma)
		b, err2 := ParseNumber(volts, p.decimalComma)
		if err1 == nil && err2 == nil && math.Abs(a-b) > 1e-9*math.Max(a, b) {
			return "", "", p.fail(line, ColVoltage, voltText, fmt.Sprintf("disagrees with the capacity's %s V", volts))
		}
	}
	return charge, volts + " V", nil
}
