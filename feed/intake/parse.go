package intake

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
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
	// shape spreads the reading over parsers (zero: defaultShape); tests vary it.
	shape pipeShape
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
				if t := trimSpace(rec[i]); t != "" {
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
	shape := opt.shape
	if shape.parsers < 1 || shape.rows < 1 {
		shape = defaultShape()
	}
	if err := readLines(src, name, opt, decimalComma, hdr, &info, shape, fn); err != nil {
		return info, err
	}
	return info, nil
}

func quoteCells(rec []string) string {
	var q []string
	for _, c := range rec {
		if c = trimSpace(c); c != "" {
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
	if len(rec) == 0 || !strings.HasPrefix(trimSpace(rec[0]), "#") {
		return false
	}
	return blank(rec[1:])
}

// commentHint adds to the error of a line that starts with '#' that it was read as a line.
func commentHint(err error, rec []string) error {
	var ie *Error
	if len(rec) > 0 && strings.HasPrefix(trimSpace(rec[0]), "#") && errors.As(err, &ie) {
		e := *ie
		e.Reason += " (a line starting with # is a comment only when it holds no other field; this one was read as a manifest line)"
		return &e
	}
	return err
}

func blank(rec []string) bool {
	for _, f := range rec {
		if trimSpace(f) != "" {
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
	vals          [numColumns]string
	loaded        bool
	loadedAt      *string
	loadedLen     int
	others        otherCache                    // label -> battery that is not lithium-ion (nil: lithium-ion)
	lastOther     recent[*cathode.OtherBattery] // the labels others answered last
	lastFormat    recent[manifest.Format]       // the format texts read last
	lastChem      recent[*resolved]             // the labels resolved last without an application
	lastDescribed describedApp                  // the previous line's application from its description and notes
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
	return trimSpace(rec[i])
}

// load finds the trimmed value of each column of rec once; get answers from them while rec is
// the record loaded (rec is not changed while it is read).
func (p *lineParser) load(rec []string) {
	for c, i := range p.hdr.pos {
		if i < 0 || i >= len(rec) {
			p.vals[c] = ""
		} else {
			p.vals[c] = trimSpace(rec[i])
		}
	}
	p.loaded, p.loadedLen = len(rec) > 0, len(rec)
	if p.loaded {
		p.loadedAt = &rec[0]
	}
}

// trimSpace is strings.TrimSpace, answering at once for a value that starts and ends with a
// printable ASCII byte (most values): no white space of any kind can be trimmed from it.
func trimSpace(s string) string {
	if n := len(s); n == 0 || s[0] > ' ' && s[0] < utf8.RuneSelf && s[n-1] > ' ' && s[n-1] < utf8.RuneSelf {
		return s
	}
	return strings.TrimSpace(s)
}

func (p *lineParser) fail(line int, c Column, val, reason string) error {
	return &Error{File: p.name, Line: line, Column: c.String(), Value: val, Reason: reason}
}

// parse reads rec into l, which is the zero Line.
func (p *lineParser) parse(l *manifest.Line, rec []string, line int) error {
	if len(rec) > MaxColumns {
		return &Error{File: p.name, Line: line, Reason: fmt.Sprintf("more than %d columns", MaxColumns)}
	}
	for i := p.hdr.width; i < len(rec); i++ {
		if trimSpace(rec[i]) != "" {
			return &Error{File: p.name, Line: line, Reason: fmt.Sprintf("a value in column %d, beyond the header's %d columns", i+1, p.hdr.width) + p.decimalCommaHint(rec)}
		}
	}
	for _, i := range p.hdr.ignored {
		if i < len(rec) && trimSpace(rec[i]) != "" && i < p.hdr.width && !p.ignoredByName(i) {
			return &Error{File: p.name, Line: line, Reason: fmt.Sprintf("a value in column %d, which has no header", i+1)}
		}
	}
	for _, c := range textColumns {
		if err := p.checkText(c, p.get(rec, c), line); err != nil {
			return err
		}
	}
	l.Num, l.ID, l.Description, l.Notes = line, p.get(rec, ColID), p.get(rec, ColDescription), p.get(rec, ColNotes)
	if err := p.format(l, rec, line); err != nil {
		return err
	}
	if err := p.chemistry(l, rec, line); err != nil {
		return err
	}
	if err := p.count(l, rec, line); err != nil {
		return err
	}
	if err := p.cellsPerPack(l, rec, line); err != nil {
		return err
	}
	if err := p.mass(l, rec, line); err != nil {
		return err
	}
	if l.NonLithium != nil || l.CountUnknown { // counted apart, or energy from the bag's weight
		l.CapacityText = p.get(rec, ColCapacity)
		return nil
	}
	if err := p.capacity(l, rec, line); err != nil {
		return err
	}
	return nil
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

// parseAlike parses a record into l (the zero Line), or reuses the parse of an earlier record
// whose every field but the id was the same: a manifest lists many alike items under their own
// ids, and everything a line holds besides its number and id follows from those fields alone. Only lines that parsed are
// remembered, so every error is found by parse itself.
//
// When the record was split from raw (starts: each field's offset in it), the key is raw with
// the id's text cut out, the separators kept: equal keys split into equal fields but the id. With
// the id first that is a substring, and looking it up copies nothing. Otherwise the key encodes
// each field with its length.
func (p *lineParser) parseAlike(l *manifest.Line, rec []string, line int, raw string, starts []int) error {
	idPos := p.hdr.pos[ColID]
	if idPos < 0 {
		return p.parse(l, rec, line)
	}
	if p.alikeSkip > 0 { // lines have been distinct of late: the lookup costs more than it saves
		p.alikeSkip--
		return p.parse(l, rec, line)
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
	if m, ok := memo[key]; ok {
		p.alikeHits++
		id := p.get(rec, ColID)
		if err := p.checkText(ColID, id, line); err != nil {
			return err
		}
		*l = m
		l.Num, l.ID = line, id
		return nil
	}
	err := p.parse(l, rec, line)
	if err == nil && len(memo) < maxRememberedLines {
		// The key shares memory with the arena or the key buffer: the map keeps a copy.
		memo[strings.Clone(key)] = *l
	}
	return err
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
		if trimSpace(v) != "" && !p.hdr.named[i] {
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
