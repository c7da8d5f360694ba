package intake

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
	"unsafe"

	"blackmass/cathode"
	"blackmass/feed/manifest"
)

// Options controls manifest reading.
type Options struct {
	Catalogue *cathode.Catalogue
	// UnknownAsPrior treats unresolvable chemistry labels as unknown (the prior for the item)
	// instead of refusing them; each such label is listed in the report.
	UnknownAsPrior bool
	// IgnoreColumns names header cells to leave out of the reading (as typed, or normalised).
	IgnoreColumns []string
	// Sheet is the sheet of an .xlsx workbook to read ("" chooses; see ReadXLSX).
	Sheet string
	// TempDir receives the temporary files of a large .xlsx part ("" for the system's).
	TempDir string
}

// Info says what was read: which sheet, where the header was, which columns were left out.
type Info struct {
	Sheet          string   `json:"sheet,omitempty"`
	Sheets         []string `json:"sheets,omitempty"`
	HeaderLine     int      `json:"header_line"`
	IgnoredColumns []string `json:"ignored_columns,omitempty"`
	Lines          int      `json:"lines"`
	// columns is the 0-based position of each column in the header (-1: none).
	columns [numColumns]int
	// Notes say which rows were read past (totals, free text, the end of the table) and what
	// was assumed of a line (a bag weighed whole, a capacity given as volts and charge).
	Notes []string `json:"notes,omitempty"`
}

// Limits on what a manifest may hold; beyond them the input is refused, not truncated.
const (
	MaxHeaderSearchRows = 20        // title and note rows allowed above the header
	MaxLineBytes        = 64 << 10  // one CSV line (a manifest line is a few hundred bytes)
	MaxColumns          = 256       // columns in a row
	MaxTextBytes        = 4 << 10   // an id, description or notes cell
	MaxLines            = 5_000_000 // manifest lines
	maxCount            = 10_000_000
	maxCellsPerItem     = 20_000
	// Physical ranges of one item. The smallest lithium-ion cells (hearing-aid and coin cells)
	// hold about 0.1 Wh and weigh about 1 g; the largest packs and storage modules hold a few
	// hundred kWh and weigh a few tonnes (common practice).
	minItemWh     = 0.01
	maxCellWh     = 2_000
	maxAssemblyWh = 500_000
	minItemAh     = 0.001
	minItemKg     = 1e-4
	maxItemKg     = 5_000
	minVoltageV   = 1    // below any lithium-ion cell
	maxVoltageV   = 1500 // above any traction or storage pack
	maxCellV      = 5    // above any lithium-ion cell's nominal voltage
	// assumedMaxCellV is the highest nominal cell voltage, used to bound a line given in Ah only.
	assumedMaxCellV = 4.5
)

// rowSource yields manifest records with their line numbers; io.EOF at the end.
type rowSource interface {
	next() (rec []string, line int, err error)
}

// rawLiner is a row source that can give the text a record was split from (and each field's
// offset in it), so alike lines are found without re-encoding their fields; "" when it cannot.
type rawLiner interface {
	rawLine() (raw string, starts []int)
}

// readRows finds the header, then parses every line and hands it to fn.
func readRows(src rowSource, name string, opt Options, decimalComma bool, fn func(manifest.Line) error) (Info, error) {
	var info Info
	var hdr *header
	var first []string
	firstLine := 0
	for seen := 0; hdr == nil; {
		rec, line, err := src.next()
		if errors.Is(err, io.EOF) {
			if seen == 0 {
				return info, &Error{File: name, Reason: "empty file (no header, no lines)"}
			}
			return info, &Error{File: name, Line: firstLine, Reason: fmt.Sprintf("no recognisable header in the first %d rows (the first held %s); want columns such as %s",
				MaxHeaderSearchRows, quoteCells(first), strings.Join(columnNames(), ", "))}
		}
		if err != nil {
			return info, err
		}
		if blank(rec) || comment(rec) {
			continue
		}
		if seen == 0 {
			first, firstLine = slices.Clone(rec), line
		}
		seen++
		if knownCells(rec) >= 2 {
			if hdr, err = parseHeader(rec, opt.IgnoreColumns, name, line); err != nil {
				return info, err
			}
			info.HeaderLine = line
			info.columns = hdr.pos
			for _, i := range hdr.ignored {
				if t := strings.TrimSpace(rec[i]); t != "" {
					info.IgnoredColumns = append(info.IgnoredColumns, t)
				}
			}
			break
		}
		if seen >= MaxHeaderSearchRows {
			return info, &Error{File: name, Line: firstLine, Reason: fmt.Sprintf("no recognisable header in the first %d rows (the first held %s); want columns such as %s",
				MaxHeaderSearchRows, quoteCells(first), strings.Join(columnNames(), ", "))}
		}
	}
	p := newLineParser(name, opt, decimalComma, hdr)
	rl, _ := src.(rawLiner)
	tr := trailer{lastLine: info.HeaderLine}
	for {
		rec, line, err := src.next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return info, err
		}
		if blank(rec) || comment(rec) || p.onlyIgnored(rec) {
			continue
		}
		p.load(rec)
		if skip, err := tr.skip(p, rec, line, &info); skip || err != nil {
			if err != nil {
				return info, err
			}
			continue
		}
		if info.Lines >= MaxLines {
			return info, &Error{File: name, Line: line, Reason: fmt.Sprintf("more than %d lines: split the manifest", MaxLines)}
		}
		var raw string
		var starts []int
		if rl != nil {
			raw, starts = rl.rawLine()
		}
		l, err := p.parseAlike(rec, line, raw, starts)
		if err != nil {
			return info, commentHint(err, rec)
		}
		tr.add(&l, &info)
		info.Lines++
		if err := fn(l); err != nil {
			var ie *Error
			if errors.As(err, &ie) {
				return info, err
			}
			return info, &Error{File: name, Line: line, Reason: err.Error()}
		}
	}
	if info.Lines == 0 {
		return info, &Error{File: name, Line: info.HeaderLine, Reason: "header but no lines"}
	}
	tr.finish(&info)
	return info, nil
}

func quoteCells(rec []string) string {
	var q []string
	for _, c := range rec {
		if c = strings.TrimSpace(c); c != "" {
			q = append(q, strconv.Quote(Printable(c, 30)))
		}
		if len(q) == 6 {
			q = append(q, "…")
			break
		}
	}
	return strings.Join(q, ", ")
}

// comment reports whether rec is a comment line: its first field starts with '#' and no other
// field holds anything. A '#' line with more values is a manifest line (an id may start with
// '#', "#12"), so no line is dropped unread; "#" as a header cell names the id column.
func comment(rec []string) bool {
	if len(rec) == 0 || !strings.HasPrefix(strings.TrimSpace(rec[0]), "#") {
		return false
	}
	return blank(rec[1:])
}

// commentHint adds to the error of a line that starts with '#' that it was read as a line.
func commentHint(err error, rec []string) error {
	var ie *Error
	if len(rec) > 0 && strings.HasPrefix(strings.TrimSpace(rec[0]), "#") && errors.As(err, &ie) {
		e := *ie
		e.Reason += " (a line starting with # is a comment only when it holds no other field; this one was read as a manifest line)"
		return &e
	}
	return err
}

func blank(rec []string) bool {
	for _, f := range rec {
		if strings.TrimSpace(f) != "" {
			return false
		}
	}
	return true
}

// labelKey caches a label's resolution for an application.
type labelKey struct{ label, app string }

type lineParser struct {
	name         string
	opt          Options
	decimalComma bool
	hdr          *header
	chem         map[labelKey]*resolved
	formats      map[string]manifest.Format
	layouts      map[string]int
	apps         map[string]string        // application text -> key
	lastQty      [numColumns]lastQuantity // per column, the last quantity parsed, so runs of one value parse once
	alike        map[string]manifest.Line // parsed lines by their fields other than the id (parseAlike)
	alikeRaw     map[string]manifest.Line // parsed lines by their text without the id (parseAlike)
	keyBuf       []byte                   // parseAlike's alone: its key may view this buffer until the line is remembered
	alikeTries   int                      // lookups in parseAlike's current run of alikeProbe
	alikeHits    int                      // of them, the lines found
	alikeSkip    int                      // lines to parse without looking up
	// vals are the trimmed values of the record readRows is on (loaded), found once for the many
	// reads of its columns; get knows the record by its first field's address and its length.
	vals       [numColumns]string
	loaded     bool
	loadedAt   *string
	loadedLen  int
	others     otherCache                    // label -> battery that is not lithium-ion (nil: lithium-ion)
	lastOther  recent[*cathode.OtherBattery] // the labels others answered last
	lastFormat recent[manifest.Format]       // the format texts read last
	lastChem   recent[*resolved]             // the labels resolved last without an application
}

// quantity is a parsed quantity, or the error it gave, with its text in the base unit.
type quantity struct {
	v    float64
	unit string
	err  error
}

// lastQuantity is a column's last quantity text and its parse.
type lastQuantity struct {
	text string
	q    quantity
	ok   bool
	// units are the unit texts found last and their units: a column holds a few.
	units recent[*Unit]
	table *Unit // the first unit of the table units were found in
}

// findUnit finds a unit of u, remembering the few found last.
func (c *lastQuantity) findUnit(u UnitTable, s string) *Unit {
	if len(u.Units) == 0 {
		return u.find(s)
	}
	if c.table != &u.Units[0] {
		c.units, c.table = recent[*Unit]{}, &u.Units[0]
	}
	if un, ok := c.units.get(s); ok {
		return un
	}
	un := u.find(s)
	if un != nil {
		c.units.put(s, un)
	}
	return un
}

// recentN is how many answers a recent cache holds.
const recentN = 8

// recent holds a few answers looked up lately, found by comparing their keys, which is cheaper
// than hashing for the handful of values a manifest's column repeats. Its keys are record
// fields, whose text is never written over once given.
type recent[V any] struct {
	keys [recentN]string
	vals [recentN]V
	n    int
	next int
}

func (r *recent[V]) get(k string) (V, bool) {
	for i := 0; i < r.n; i++ {
		if r.keys[i] == k {
			return r.vals[i], true
		}
	}
	var zero V
	return zero, false
}

func (r *recent[V]) put(k string, v V) {
	r.keys[r.next], r.vals[r.next] = k, v
	r.next = (r.next + 1) % recentN
	r.n = min(r.n+1, recentN)
}

// quantity parses s from column c with the column's units. The column's last parse is kept: a
// manifest repeats a value down a run of lines, and a cache of more values costs more in
// lookups than it saves once the values are all distinct (whole lines that repeat are
// remembered by parseAlike).
func (p *lineParser) quantity(c Column, s string, u UnitTable, defaultUnit string) quantity {
	last := &p.lastQty[c]
	if last.ok && last.text == s {
		return last.q
	}
	v, unit, err := quantityFind(s, u, defaultUnit, p.decimalComma, last.findUnit)
	q := quantity{v: v, unit: unit, err: err}
	// s is a field of the record: the row sources never write over a field's text once given
	// (the splitter's arena only grows; encoding/csv and the workbook make new strings), so it is
	// kept without a copy.
	last.text, last.q, last.ok = s, q, true
	return q
}

// resolved is a label's chemistry and whether the label was recognised.
type resolved struct {
	chem       *cathode.Chemistry
	unresolved bool
}

func newLineParser(name string, opt Options, decimalComma bool, hdr *header) *lineParser {
	return &lineParser{name: name, opt: opt, decimalComma: decimalComma, hdr: hdr,
		chem: map[labelKey]*resolved{}, formats: map[string]manifest.Format{}, layouts: map[string]int{}, apps: map[string]string{},
		alike: map[string]manifest.Line{}, alikeRaw: map[string]manifest.Line{}, others: otherCache{}}
}

func (p *lineParser) get(rec []string, c Column) string {
	if p.loaded && len(rec) == p.loadedLen && &rec[0] == p.loadedAt {
		return p.vals[c]
	}
	i := p.hdr.pos[c]
	if i < 0 || i >= len(rec) {
		return ""
	}
	return strings.TrimSpace(rec[i])
}

// load finds the trimmed value of each column of rec once; get answers from them while rec is
// the record loaded (rec is not changed while it is read).
func (p *lineParser) load(rec []string) {
	p.loaded = false
	for c := range p.vals {
		p.vals[c] = p.get(rec, Column(c))
	}
	p.loaded, p.loadedLen = len(rec) > 0, len(rec)
	if p.loaded {
		p.loadedAt = &rec[0]
	}
}

func (p *lineParser) fail(line int, c Column, val, reason string) error {
	return &Error{File: p.name, Line: line, Column: c.String(), Value: val, Reason: reason}
}

func (p *lineParser) parse(rec []string, line int) (manifest.Line, error) {
	if len(rec) > MaxColumns {
		return manifest.Line{}, &Error{File: p.name, Line: line, Reason: fmt.Sprintf("more than %d columns", MaxColumns)}
	}
	for i := p.hdr.width; i < len(rec); i++ {
		if strings.TrimSpace(rec[i]) != "" {
			return manifest.Line{}, &Error{File: p.name, Line: line, Reason: fmt.Sprintf("a value in column %d, beyond the header's %d columns", i+1, p.hdr.width) + p.decimalCommaHint(rec)}
		}
	}
	for _, i := range p.hdr.ignored {
		if i < len(rec) && strings.TrimSpace(rec[i]) != "" && i < p.hdr.width && !p.ignoredByName(i) {
			return manifest.Line{}, &Error{File: p.name, Line: line, Reason: fmt.Sprintf("a value in column %d, which has no header", i+1)}
		}
	}
	for _, c := range textColumns {
		if err := p.checkText(c, p.get(rec, c), line); err != nil {
			return manifest.Line{}, err
		}
	}
	l := manifest.Line{Num: line, ID: p.get(rec, ColID), Description: p.get(rec, ColDescription), Notes: p.get(rec, ColNotes)}
	if err := p.format(&l, rec, line); err != nil {
		return l, err
	}
	if err := p.chemistry(&l, rec, line); err != nil {
		return l, err
	}
	if err := p.count(&l, rec, line); err != nil {
		return l, err
	}
	if err := p.cellsPerPack(&l, rec, line); err != nil {
		return l, err
	}
	if err := p.mass(&l, rec, line); err != nil {
		return l, err
	}
	if l.NonLithium != nil || l.CountUnknown { // counted apart, or energy from the bag's weight
		l.CapacityText = p.get(rec, ColCapacity)
		return l, nil
	}
	if err := p.capacity(&l, rec, line); err != nil {
		return l, err
	}
	return l, nil
}

// checkText refuses text that is not UTF-8, too long, or holds a control character.
func (p *lineParser) checkText(c Column, v string, line int) error {
	if plainASCII(v) && len(v) <= MaxTextBytes {
		return nil // the common case, checked in one pass
	}
	if !utf8.ValidString(v) {
		return p.fail(line, c, "", "not valid UTF-8")
	}
	if len(v) > MaxTextBytes {
		return p.fail(line, c, v, fmt.Sprintf("longer than %d bytes", MaxTextBytes))
	}
	if i := strings.IndexFunc(v, badControl); i >= 0 {
		r, _ := utf8.DecodeRuneInString(v[i:])
		return p.fail(line, c, v, fmt.Sprintf("holds a control character (U+%04X) that a workbook cannot keep", r))
	}
	return nil
}

// maxRememberedLines bounds the lines parseAlike remembers.
const maxRememberedLines = 4096

// parseAlike looks lines up in runs of alikeProbe; when fewer than one in eight of a run was
// found and no more lines can be remembered, it parses the next alikeRest lines without looking,
// then looks again. The parse is the same either way: only the time differs.
const (
	alikeProbe = 4096
	alikeRest  = 16 * alikeProbe
)

// parseAlike parses a record, or reuses the parse of an earlier record whose every field but the
// id was the same: a manifest lists many alike items under their own ids, and everything a line
// holds besides its number and id follows from those fields alone. Only lines that parsed are
// remembered, so every error is found by parse itself.
//
// When the record was split from raw (starts: each field's offset in it), the key is raw with
// the id's text cut out, the separators kept: equal keys split into equal fields but the id. With
// the id first that is a substring, and looking it up copies nothing. Otherwise the key encodes
// each field with its length.
func (p *lineParser) parseAlike(rec []string, line int, raw string, starts []int) (manifest.Line, error) {
	idPos := p.hdr.pos[ColID]
	if idPos < 0 {
		return p.parse(rec, line)
	}
	if p.alikeSkip > 0 { // lines have been distinct of late: the lookup costs more than it saves
		p.alikeSkip--
		return p.parse(rec, line)
	}
	memo, key := p.alike, ""
	switch {
	case raw != "" && idPos < len(rec) && len(starts) == len(rec):
		memo = p.alikeRaw
		st, en := starts[idPos], starts[idPos]+len(rec[idPos])
		if st == 0 {
			key = raw[en:]
		} else {
			p.keyBuf = append(append(p.keyBuf[:0], raw[:st]...), raw[en:]...)
			key = unsafeString(p.keyBuf)
		}
	default:
		p.keyBuf = p.keyBuf[:0]
		for i, f := range rec {
			if i == idPos {
				f = ""
			}
			p.keyBuf = binary.AppendUvarint(p.keyBuf, uint64(len(f)))
			p.keyBuf = append(p.keyBuf, f...)
		}
		key = unsafeString(p.keyBuf)
	}
	p.alikeTries++
	if p.alikeTries == alikeProbe {
		if p.alikeHits*8 < p.alikeTries && len(memo) >= maxRememberedLines {
			p.alikeSkip = alikeRest
		}
		p.alikeTries, p.alikeHits = 0, 0
	}
	if l, ok := memo[key]; ok {
		p.alikeHits++
		id := p.get(rec, ColID)
		if err := p.checkText(ColID, id, line); err != nil {
			return manifest.Line{}, err
		}
		l.Num, l.ID = line, id
		return l, nil
	}
	l, err := p.parse(rec, line)
	if err == nil && len(memo) < maxRememberedLines {
		// The key shares memory with the arena or the key buffer: the map keeps a copy.
		memo[strings.Clone(key)] = l
	}
	return l, err
}

// unsafeString views b as a string for a map lookup; the caller neither keeps it nor lets b
// change while it is in use.
func unsafeString(b []byte) string {
	if len(b) == 0 {
		return ""
	}
	return unsafe.String(&b[0], len(b))
}

// onlyIgnored reports whether a row holds values in left-out columns only (a totals row of the
// intake workbook, say): it is no manifest line.
func (p *lineParser) onlyIgnored(rec []string) bool {
	for i, v := range rec {
		if strings.TrimSpace(v) != "" && !p.hdr.named[i] {
			return false
		}
	}
	return true
}

// textColumns are the columns kept as typed.
var textColumns = []Column{ColID, ColDescription, ColChemistry, ColNotes, ColApplication}

// plainASCII reports whether s is printable ASCII (tab allowed): nothing to check further.
func plainASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if b := s[i]; b >= 0x7f || (b < 0x20 && b != '\t') {
			return false
		}
	}
	return true
}

// badControl reports the control characters refused in text: all but tab, which a workbook keeps.
func badControl(r rune) bool { return unicode.IsControl(r) && r != '\t' }

// ignoredByName reports whether column i was ignored at the user's request (its values are
// then not checked), rather than for a blank header.
func (p *lineParser) ignoredByName(i int) bool { return p.hdr.named[i] }

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
	if l.Application == "" && (l.Description != "" || l.Notes != "") {
		l.Application = p.opt.Catalogue.Application(l.Description + " " + l.Notes)
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
	if f, ok := formatWords[strings.ToLower(strings.TrimSpace(s))]; ok {
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
		if t != strings.TrimSpace(s) {
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
