package cathode

import (
	"bytes"
	"fmt"
	"io"
	"io/fs"
	"math"
	"sort"
	"strings"

	"blackmass/data"
)

// Range is a model parameter's spread: minimum, most likely and maximum, in the unit its name
// carries.
type Range struct {
	Min, Mode, Max float64
}

// Valid reports whether Min <= Mode <= Max and all are finite.
func (r Range) Valid() bool {
	return r.Min <= r.Mode && r.Mode <= r.Max && !math.IsInf(r.Min, 0) && !math.IsInf(r.Max, 0)
}

// Entry is one cathode active material in the catalogue.
type Entry struct {
	Key      string // canonical label, e.g. "NMC811"
	Name     string
	Formula  Formula
	Species  Species
	Family   string // layered, spinel, olivine
	Aliases  []string
	VoltageV Range // nominal cell voltage against graphite, V
	// CapacityMAhPerG is the practical reversible specific capacity of the active material.
	CapacityMAhPerG Range
	// SpecificEnergyWhPerKg is the plausible band of cell-level specific energy (Min, Max only).
	SpecificEnergyWhPerKg Range
	Source                string
	// Catalogued is false for a formula typed directly and given its family's defaults.
	Catalogued bool
}

// MolarMassGPerMol returns the molar mass of the material.
func (e *Entry) MolarMassGPerMol() float64 { return e.Formula.MolarMass(e.Formula.Elements()) }

// TheoreticalCapacityMAhPerG returns n·F/(3.6·M) with n the lithium per formula unit.
func (e *Entry) TheoreticalCapacityMAhPerG() float64 {
	return TheoreticalCapacityMAhPerG(e.Formula.Moles("Li"), e.MolarMassGPerMol())
}

// Catalogue holds the known chemistries, the family defaults for formulas typed directly, and
// the prior mix used for unknown cells.
type Catalogue struct {
	es            *Elements // the atomic weights the catalogue's formulas are read with
	entries       []*Entry
	byName        map[string]*Entry // normalised key or alias -> entry
	families      map[string]*Entry // structural family -> defaults (Formula empty)
	prior         map[string][]Component
	priorSrc      string
	apps          map[string]*application
	appOrder      []string
	labelFamilies map[string]*family // normalised family label -> family
	familyOrder   []*family
	others        map[string]*OtherBattery // normalised word -> battery that is not lithium-ion
}

// LoadCatalogue reads chemistries.csv, families.csv, applications.csv, prior.csv and
// label_families.csv from fsys.
func LoadCatalogue(fsys fs.FS) (*Catalogue, error) {
	es, err := LoadElements(fsys)
	if err != nil {
		return nil, err
	}
	c := &Catalogue{es: es, byName: map[string]*Entry{}, families: map[string]*Entry{}}
	b, err := fs.ReadFile(fsys, "chemistries.csv")
	if err != nil {
		return nil, err
	}
	if err := c.Add(bytes.NewReader(b), "chemistries.csv"); err != nil {
		return nil, err
	}
	ft, err := data.ReadTable(fsys, "families.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range ft.Rows {
		e := &Entry{Key: r.Str("family"), Name: r.Str("description"), Family: r.Str("family"), Source: r.Str("source")}
		if err := readRanges(r, e); err != nil {
			return nil, err
		}
		c.families[e.Family] = e
	}
	if err := c.loadPriorTables(fsys); err != nil {
		return nil, err
	}
	if err := c.loadOtherBatteries(fsys); err != nil {
		return nil, err
	}
	return c, nil
}

func readRanges(r data.Row, e *Entry) error {
	var err error
	if e.VoltageV.Min, e.VoltageV.Mode, e.VoltageV.Max, err = r.Range("voltage", "_V"); err != nil {
		return err
	}
	if e.CapacityMAhPerG.Min, e.CapacityMAhPerG.Mode, e.CapacityMAhPerG.Max, err = r.Range("capacity", "_mAh_g"); err != nil {
		return err
	}
	if e.SpecificEnergyWhPerKg.Min, err = r.Float("specific_energy_min_Wh_kg"); err != nil {
		return err
	}
	if e.SpecificEnergyWhPerKg.Max, err = r.Float("specific_energy_max_Wh_kg"); err != nil {
		return err
	}
	e.SpecificEnergyWhPerKg.Mode = (e.SpecificEnergyWhPerKg.Min + e.SpecificEnergyWhPerKg.Max) / 2
	// Physical ranges: lithium-ion cells run from about 1.5 V (titanate anodes) to 5 V (high-voltage
	// spinels); practical cathode capacities from about 50 to 300 mAh/g; cell specific energies
	// from about 20 to 500 Wh/kg (common practice, with margin).
	switch {
	case e.VoltageV.Min < 1 || e.VoltageV.Max > 6:
		return r.Errorf("voltage must lie from 1 to 6 V")
	case e.CapacityMAhPerG.Min < 10 || e.CapacityMAhPerG.Max > 400:
		return r.Errorf("capacity must lie from 10 to 400 mAh/g")
	case e.SpecificEnergyWhPerKg.Min < 10 || e.SpecificEnergyWhPerKg.Max > 1000 || e.SpecificEnergyWhPerKg.Min > e.SpecificEnergyWhPerKg.Max:
		return r.Errorf("specific energy band must lie from 10 to 1000 Wh/kg, ordered")
	}
	return nil
}

// Add reads catalogue rows (the columns of chemistries.csv) from r. A key already in the
// catalogue (a built-in chemistry, or an earlier row) is refused: replacing it would change every
// line labelled with it without a word; give the entry a key of its own. name is used in error
// messages.
func (c *Catalogue) Add(r io.Reader, name string) error {
	t, err := data.ParseTable(r, name)
	if err != nil {
		return err
	}
	for _, col := range []string{"key", "formula", "family", "voltage_mode_V", "capacity_mode_mAh_g"} {
		if !t.Has(col) {
			return fmt.Errorf("%s: missing column %q", name, col)
		}
	}
	for _, row := range t.Rows {
		key := row.Str("key")
		if key == "" {
			return row.Errorf("empty key")
		}
		f, err := c.elements().ParseFormula(row.Str("formula"))
		if err != nil {
			return row.Errorf("%v", err)
		}
		sp, err := NewSpecies(f)
		if err != nil {
			return row.Errorf("%v", err)
		}
		if f.Moles("Li") <= 0 {
			return row.Errorf("formula %s holds no lithium", f)
		}
		if fam := classify(f); fam == "" {
			return row.Errorf("formula %s is not a layered LiMO2, spinel LiM2O4 or olivine LiMPO4 cathode", f.Canonical())
		}
		if IsUnknownWord(key) || strings.ContainsAny(key, "+&/") {
			return row.Errorf("key %q could never be reached: it reads as an unknown chemistry or a blend", key)
		}
		e := &Entry{Key: key, Name: row.Str("name"), Formula: f, Species: sp, Family: row.Str("family"), Source: row.Str("source"), Catalogued: true}
		if err := readRanges(row, e); err != nil {
			return err
		}
		for _, a := range strings.Split(row.Str("aliases"), "|") {
			if a = strings.TrimSpace(a); a != "" {
				e.Aliases = append(e.Aliases, a)
			}
		}
		for _, a := range e.Aliases {
			if other := c.byName[normLabel(a)]; other != nil && other.Key != key {
				return row.Errorf("alias %q already names %s: an alias may not take over another chemistry's label", a, other.Key)
			}
			if IsUnknownWord(a) || c.labelFamilies[normLabel(a)] != nil {
				return row.Errorf("alias %q is a word for an unknown or family label and would never be reached", a)
			}
		}
		if other := c.byName[normLabel(key)]; other != nil && other.Key != key {
			return row.Errorf("key %q is already an alias of %s", key, other.Key)
		}
		if old := c.byName[normLabel(key)]; old != nil {
			return row.Errorf("key %q is already in the catalogue (%s, %s): give your entry a key of its own, such as %s-own, and label its lines with it", key, old.Key, old.Name, key)
		}
		c.entries = append(c.entries, e)
		for _, n := range append([]string{key}, e.Aliases...) {
			c.byName[normLabel(n)] = e
		}
	}
	return nil
}

// elements returns the catalogue's atomic-weight table.
func (c *Catalogue) elements() *Elements {
	if c.es != nil {
		return c.es
	}
	return DefaultElements()
}

// Entries returns the catalogue entries in file order.
func (c *Catalogue) Entries() []*Entry { return append([]*Entry(nil), c.entries...) }

// Lookup returns the entry for a key or alias, or nil.
func (c *Catalogue) Lookup(label string) *Entry { return c.byName[normLabel(label)] }

// Family returns the defaults for a family (layered, spinel, olivine), or nil.
func (c *Catalogue) Family(name string) *Entry { return c.families[name] }

// normLabel folds case and drops spaces, dashes, underscores and brackets.
func normLabel(s string) string {
	var b strings.Builder
	for _, r := range strings.ToUpper(s) {
		switch r {
		case ' ', '-', '_', '(', ')', '\t':
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// nearest returns up to n catalogue keys closest to label by edit distance over keys and aliases.
func (c *Catalogue) nearest(label string, n int) []string {
	q := normLabel(label)
	best := map[string]int{}
	for name, e := range c.byName {
		d := EditDistance(q, name)
		if old, ok := best[e.Key]; !ok || d < old {
			best[e.Key] = d
		}
	}
	keys := make([]string, 0, len(best))
	for k := range best {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if best[keys[i]] != best[keys[j]] {
			return best[keys[i]] < best[keys[j]]
		}
		return keys[i] < keys[j]
	})
	if len(keys) > n {
		keys = keys[:n]
	}
	return keys
}

// EditDistance is the Levenshtein distance between a and b, in runes (the first 64 of a).
func EditDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	if len(ra) > 64 {
		ra = ra[:64] // a label or header is short; a long one costs no more than this
	}
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// DefaultCatalogue reads the embedded catalogue afresh, safe to extend with Add: a command reads
// it once at the top and passes it down.
func DefaultCatalogue() (*Catalogue, error) { return LoadCatalogue(data.FS) }
