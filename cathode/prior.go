package cathode

import (
	"fmt"
	"io"
	"io/fs"
	"math"
	"slices"
	"strings"

	"blackmass/data"
)

// Bounds on a Dirichlet concentration: below 0.5 the draws pile onto single members (a prior
// that says "one of them, no idea which" more strongly than any scrap stream warrants); above
// 1000 the shares are fixed for every practical purpose.
const (
	minConcentration = 0.5
	maxConcentration = 1000.0
)

// Kind says how a chemistry label was resolved.
type Kind string

const (
	KindCatalogued Kind = "catalogued" // a catalogue key or alias, or a ratio naming a catalogued grade
	KindFamily     Kind = "family"     // a family label (NMC, layered oxide, Li-polymer): the member is uncertain
	KindBlend      Kind = "blend"      // several cathodes by cathode mass, with given or unknown shares
	KindFormula    Kind = "formula"    // a formula or ratio outside the catalogue, with its structure's defaults
	KindUnknown    Kind = "unknown"    // nothing said about the cathode: the prior for the item
)

// Part is a set of components whose shares vary together. Share is the part's mean share of the
// cathode mass; Members index the chemistry's Components; Concentration is the Dirichlet
// concentration of the members' shares within the part (0: fixed at their means). Alternatives
// reports that each item holds one of the members (a family or unknown label) rather than a
// blend of them, so the realised shares of a few items scatter more than those of many.
type Part struct {
	Share         float64
	Members       []int
	Concentration float64
	Alternatives  bool
}

// application is one row of applications.csv: words that name it and how sure its prior is.
type application struct {
	key           string
	words         []string
	concentration float64
	source        string
}

// family is a label naming a family of cathodes with uncertain member.
type family struct {
	key           string
	words         []string // as written in label_families.csv
	members       []Component
	concentration float64
	source        string
}

// loadPriorTables reads applications.csv, prior.csv and label_families.csv.
func (c *Catalogue) loadPriorTables(fsys fs.FS) error {
	at, err := data.ReadTable(fsys, "applications.csv")
	if err != nil {
		return err
	}
	c.apps = map[string]*application{}
	for _, r := range at.Rows {
		a := &application{key: r.Str("application"), source: r.Str("source")}
		if a.concentration, err = r.Float("concentration"); err != nil {
			return err
		}
		if !(a.concentration >= minConcentration && a.concentration <= maxConcentration) {
			return r.Errorf("concentration must lie from %g to %g", minConcentration, maxConcentration)
		}
		for _, w := range strings.Split(r.Str("words"), "|") {
			if w = strings.ToLower(strings.TrimSpace(w)); w != "" {
				a.words = append(a.words, w)
			}
		}
		c.apps[a.key] = a
		c.appOrder = append(c.appOrder, a.key)
	}
	if c.apps["any"] == nil {
		return fmt.Errorf("applications.csv: no row for \"any\"")
	}
	pb, err := fs.ReadFile(fsys, "prior.csv")
	if err != nil {
		return err
	}
	if err := c.SetPrior(strings.NewReader(string(pb)), "prior.csv"); err != nil {
		return err
	}
	ft, err := data.ReadTable(fsys, "label_families.csv")
	if err != nil {
		return err
	}
	c.labelFamilies = map[string]*family{}
	for _, r := range ft.Rows {
		key := r.Str("family")
		f := c.labelFamilyByKey(key)
		if f == nil {
			f = &family{key: key, source: r.Str("source")}
			for _, w := range strings.Split(r.Str("words"), "|") {
				if w = strings.TrimSpace(w); w != "" {
					c.labelFamilies[normLabel(w)] = f
					f.words = append(f.words, w)
				}
			}
			c.familyOrder = append(c.familyOrder, f)
		}
		e := c.Lookup(r.Str("member"))
		if e == nil {
			return r.Errorf("member %q is not in the catalogue", r.Str("member"))
		}
		share, err := r.Float("share")
		if err != nil {
			return err
		}
		if f.concentration, err = r.Float("concentration"); err != nil {
			return err
		}
		if !(share > 0 && share <= 1) || !(f.concentration >= minConcentration && f.concentration <= maxConcentration) {
			return r.Errorf("share must lie in (0, 1] and concentration from %g to %g", minConcentration, maxConcentration)
		}
		f.members = append(f.members, Component{e, share})
	}
	for _, f := range c.familyOrder {
		normalise(f.members)
	}
	return nil
}

func (c *Catalogue) labelFamilyByKey(key string) *family {
	for _, f := range c.familyOrder {
		if f.key == key {
			return f
		}
	}
	return nil
}

func normalise(comps []Component) {
	sum := 0.0
	for _, x := range comps {
		sum += x.MassFraction
	}
	for i := range comps {
		comps[i].MassFraction /= sum
	}
}

// Tolerances on the sum of an application's prior shares: fractions rounded to two places sum
// to 1 within about 0.01 (three thirds as 0.33 sum to 0.99), percentages to 100 within about 1.
const (
	priorSumTolerance    = 0.015
	priorSumTolerancePct = 1.5
)

// SetPrior reads the chemistry shares assumed for items of unknown chemistry: columns
// application (optional: rows without one apply to every application), chemistry, share (or
// mass_fraction), source. Each application's shares must be finite, non-negative and sum to 1
// (fractions) or 100 (percentages) within rounding; a sum of 0.6 or 60 says a row is missing and
// is refused, not scaled up. A chemistry is listed once per application. A file replaces the
// prior of every application it names; rows without an application replace them all.
func (c *Catalogue) SetPrior(r io.Reader, name string) error {
	t, err := data.ParseTable(r, name)
	if err != nil {
		return err
	}
	shareCol := "share"
	if !t.Has(shareCol) {
		shareCol = "mass_fraction"
	}
	if !t.Has("chemistry") || !t.Has(shareCol) {
		return fmt.Errorf("%s: want columns application, chemistry, share, source", name)
	}
	got := map[string][]Component{}
	var order []string
	seen := map[[2]string]int{}
	for _, row := range t.Rows {
		app := row.Str("application")
		if app == "" {
			app = "*"
		}
		if app != "*" && c.apps[app] == nil {
			return row.Errorf("application %q is not one of %s", app, strings.Join(c.appOrder, ", "))
		}
		e := c.Lookup(row.Str("chemistry"))
		if e == nil {
			return row.Errorf("prior names %q, which is not in the catalogue", row.Str("chemistry"))
		}
		if first, dup := seen[[2]string{app, e.Key}]; dup {
			return row.Errorf("%s is listed twice for %s (first on line %d)", e.Key, priorAppName(app), first)
		}
		seen[[2]string{app, e.Key}] = row.Line
		w, err := row.Float(shareCol)
		if err != nil {
			return err
		}
		if w < 0 || w > 100 {
			return row.Errorf("%s must lie from 0 to 1 (or 0 to 100 as percentages)", shareCol)
		}
		if _, ok := got[app]; !ok {
			order = append(order, app)
		}
		got[app] = append(got[app], Component{e, w})
	}
	if c.prior == nil {
		c.prior = map[string][]Component{}
	}
	for _, app := range order {
		comps := got[app]
		sum := 0.0
		for _, x := range comps {
			sum += x.MassFraction
		}
		switch {
		case math.Abs(sum-1) <= priorSumTolerance:
		case math.Abs(sum-100) <= priorSumTolerancePct:
		default:
			return fmt.Errorf("%s: the shares of %s sum to %.4g; want 1 (fractions) or 100 (percentages): is a row missing?", name, priorAppName(app), sum)
		}
		normalise(comps) // takes out the rounding, or the percentages' factor of 100
		if app == "*" {
			for _, k := range c.appOrder {
				c.prior[k] = slices.Clone(comps)
			}
			continue
		}
		c.prior[app] = comps
	}
	for _, k := range c.appOrder {
		if len(c.prior[k]) == 0 {
			return fmt.Errorf("%s: no prior shares for %s", name, k)
		}
	}
	c.priorSrc = name
	return nil
}

// priorAppName names a prior's application in messages ("*": rows without an application).
func priorAppName(app string) string {
	if app == "*" {
		return "every application (rows without one)"
	}
	return app
}

// Applications lists the application keys (and format fall-backs) the prior knows.
func (c *Catalogue) Applications() []string { return slices.Clone(c.appOrder) }

// Application finds the application named by text (an application column, a description or
// notes): the first application whose word or phrase appears as whole words. It returns "" when
// none does.
func (c *Catalogue) Application(text string) string {
	words := strings.FieldsFunc(strings.ToLower(text), func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '-' || r == '_')
	})
	if len(words) == 0 {
		return ""
	}
	joined := " " + strings.Join(words, " ") + " "
	for _, k := range c.appOrder {
		if strings.ReplaceAll(joined, "_", " ") == " "+strings.ReplaceAll(k, "_", " ")+" " {
			return k
		}
		for _, w := range c.apps[k].words {
			if strings.Contains(joined, " "+w+" ") {
				return k
			}
		}
	}
	return ""
}

// Unknown returns the chemistry of an item whose label says nothing, for the application (or
// format) key app; an empty or unlisted key uses "any". Its shares are uncertain with the
// application's concentration.
func (c *Catalogue) Unknown(app string) Chemistry {
	a := c.apps[app]
	if a == nil {
		a = c.apps["any"]
	}
	comps := slices.Clone(c.prior[a.key])
	key := "unknown"
	if a.key != "any" {
		key = "unknown (" + strings.ReplaceAll(a.key, "_", " ") + ")"
	}
	return Chemistry{Key: key, Components: comps, Unknown: true, Kind: KindUnknown,
		Parts: []Part{{Share: 1, Members: indices(len(comps)), Concentration: a.concentration, Alternatives: true}},
		Notes: []string{fmt.Sprintf("chemistry unknown (%s): shares from %s, drawn with concentration %g (%s)", strings.ReplaceAll(a.key, "_", " "), c.priorSrc, a.concentration, a.source)}}
}

func (c *Catalogue) familyChemistry(f *family) Chemistry {
	comps := slices.Clone(f.members)
	return Chemistry{Key: f.key, Components: comps, Kind: KindFamily,
		Parts: []Part{{Share: 1, Members: indices(len(comps)), Concentration: f.concentration, Alternatives: true}},
		Notes: []string{fmt.Sprintf("%s: the member is uncertain, shares drawn around label_families.csv (%s)", f.key, f.source)}}
}

func indices(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}

// MeanShares returns the components' mean shares of the cathode mass.
func (ch *Chemistry) MeanShares() []float64 {
	out := make([]float64, len(ch.Components))
	for i, x := range ch.Components {
		out[i] = x.MassFraction
	}
	return out
}

// Uncertain reports whether the components' shares vary between Monte Carlo samples.
func (ch *Chemistry) Uncertain() bool {
	if ch.SplitConcentration > 0 {
		return true
	}
	for _, p := range ch.Parts {
		if p.Concentration > 0 && len(p.Members) > 1 {
			return true
		}
	}
	return false
}

// checkShares reports whether shares are finite, non-negative and sum to 1.
func checkShares(comps []Component) bool {
	sum := 0.0
	for _, x := range comps {
		if !(x.MassFraction >= 0) || math.IsInf(x.MassFraction, 0) {
			return false
		}
		sum += x.MassFraction
	}
	return math.Abs(sum-1) < 1e-9
}

// FamilyLabel is a family label and the words that name it.
type FamilyLabel struct {
	Key   string   `json:"family"`
	Words []string `json:"words"`
}

// FamilyLabels lists the family labels.
func (c *Catalogue) FamilyLabels() []FamilyLabel {
	var out []FamilyLabel
	for _, f := range c.familyOrder {
		out = append(out, FamilyLabel{Key: f.key, Words: slices.Clone(f.words)})
	}
	return out
}
