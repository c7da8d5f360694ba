package cathode

import (
	"errors"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
)

// ErrUnknownLabel is wrapped by the error ParseLabel returns for a label it cannot resolve.
var ErrUnknownLabel = errors.New("unknown chemistry label")

// MaxLabelLen is the longest chemistry label accepted, in bytes.
const MaxLabelLen = 200

// maxBlendParts bounds the components of a blend label.
const maxBlendParts = 8

// Component is one cathode material of a chemistry with its mean share of the cathode active mass.
type Component struct {
	Entry        *Entry
	MassFraction float64
}

// Chemistry is a resolved chemistry label: one material, a family with uncertain member, a blend
// by cathode mass, or the unknown (the prior for the item). Components carry the mean shares;
// Parts and SplitConcentration say how the shares vary (see [Part]). Notes say what was assumed
// while resolving it.
type Chemistry struct {
	Key        string // canonical label: "NMC811", "LMO+NMC532 30/70", "NMC (grade unknown)", "unknown (laptop)", or a formula
	Components []Component
	Unknown    bool
	Kind       Kind
	// Parts groups the components; nil means one fixed component (or fixed shares).
	Parts []Part
	// SplitConcentration is the Dirichlet concentration of the parts' shares (0: the shares
	// are as given).
	SplitConcentration float64
	Notes              []string
}

// unknownWords are the labels that mean "we do not know": they resolve to the prior.
var unknownWords = map[string]bool{
	"": true, "UNKNOWN": true, "LIION": true, "LITHIUMION": true, "LI": true, "?": true,
	"N/A": true, "NA": true, "UNLABELLED": true, "UNLABELED": true, "LIIONBATTERY": true, "LITHIUM": true,
	"BATTERY": true, "BATTERIES": true, "LIIONBATTERIES": true, "LITHIUMIONBATTERY": true,
}

// IsUnknownWord reports whether label is one of the words that mean an unknown chemistry
// ("unknown", "Li-ion", blank ...).
func IsUnknownWord(label string) bool { return unknownWords[normLabel(label)] }

// ParseLabel resolves a chemistry label:
//   - a catalogue key or alias in any case ("nmc811");
//   - a family label ("NMC", "NCM", "layered oxide", "LiPo"): the member is uncertain;
//   - an NMC/NCM ratio in the trade's spellings ("NCM 8:1:1", "nmc-622", "NMC(532)", "NCM955" =
//     90:5:5; NMC lists Ni:Mn:Co and NCM Ni:Co:Mn, and digits that name a catalogued grade only
//     in the other order are read that way, with a note);
//   - a formula typed directly ("LiNi0.9Mn0.05Co0.05O2");
//   - a blend by cathode mass, parts joined by "+", "&", "/" or "and", shares as a trailing
//     ratio ("70/30", "(70:30)") or per part ("70% LMO + 30% NMC"); without shares the split
//     is uncertain;
//   - a word meaning unknown ("Li-ion", blank): the prior of an item of unknown application.
//
// An unresolved label is an error wrapping ErrUnknownLabel that lists the nearest known labels.
func (c *Catalogue) ParseLabel(label string) (Chemistry, error) {
	label = strings.TrimSpace(label)
	if len(label) > MaxLabelLen {
		return Chemistry{}, fmt.Errorf("chemistry label longer than %d characters: %w", MaxLabelLen, ErrUnknownLabel)
	}
	if IsUnknownWord(label) {
		return c.Unknown(""), nil
	}
	if ch, err := c.parseCore(label); err == nil || !errors.Is(err, ErrUnknownLabel) {
		return ch, err
	} else if alt, ok := c.reword(label); ok {
		return alt, nil
	} else {
		return Chemistry{}, err
	}
}

func (c *Catalogue) parseCore(label string) (Chemistry, error) {
	if e := c.Lookup(label); e != nil {
		return single(e, KindCatalogued, nil), nil
	}
	if f := c.labelFamilies[normLabel(label)]; f != nil {
		return c.familyChemistry(f), nil
	}
	if ch, ok, err := c.parseBlend(label); ok || err != nil {
		return ch, err
	}
	e, kind, notes, err := c.material(label)
	if err != nil {
		return Chemistry{}, err
	}
	return single(e, kind, notes), nil
}

// genericWords say that a label is about a lithium-ion battery without naming its cathode
// ("Li-ion NMC", "LFP battery", "NCA cells").
var genericWords = regexp.MustCompile(`(?i)\b(li-?ion|lithium[- ]ion|rechargeable|battery|batteries|cells?|packs?|modules?)\b`)

// parenthetical is a label with a second name in brackets: "LiFePO4 (LFP)", "LFP (lithium iron
// phosphate)".
var parenthetical = regexp.MustCompile(`^\s*([^()]+?)\s*\(([^()]+)\)\s*$`)

// reword tries a label that failed as written in the forms benches write: without the generic
// words around the cathode's name, or by either name of "A (B)" when both agree. It reports
// whether one resolved.
func (c *Catalogue) reword(label string) (Chemistry, bool) {
	if m := parenthetical.FindStringSubmatch(label); m != nil {
		a, errA := c.parseCore(m[1])
		b, errB := c.parseCore(m[2])
		switch {
		case errA == nil && errB == nil && a.Key == b.Key:
			return a, true
		case errA == nil && errB != nil && !strings.ContainsAny(m[2], "0123456789:/"):
			a.Notes = append(a.Notes, fmt.Sprintf("%q: read as %s; the bracket %q was not understood", label, a.Key, m[2]))
			return a, true
		case errB == nil && errA != nil:
			b.Notes = append(b.Notes, fmt.Sprintf("%q: read as %s from the bracket", label, b.Key))
			return b, true
		}
		return Chemistry{}, false
	}
	stripped := strings.TrimSpace(genericWords.ReplaceAllString(label, " "))
	if stripped == "" || stripped == strings.TrimSpace(label) {
		return Chemistry{}, false
	}
	ch, err := c.parseCore(strings.Join(strings.Fields(stripped), " "))
	if err != nil {
		return Chemistry{}, false
	}
	ch.Notes = append(ch.Notes, fmt.Sprintf("%q: read as %s", label, ch.Key))
	return ch, true
}

func single(e *Entry, kind Kind, notes []string) Chemistry {
	return Chemistry{Key: e.Key, Components: []Component{{e, 1}}, Kind: kind, Notes: notes}
}

var (
	// trailingShares is a ratio at the end of a blend label: " 70/30", " (70:30)", " 70%/30%".
	trailingShares = regexp.MustCompile(`[\s(]\(?\s*(\d+(?:\.\d+)?\s*%?(?:\s*[:/]\s*\d+(?:\.\d+)?\s*%?)+)\s*\)?\s*$`)
	shareSplit     = regexp.MustCompile(`\s*[:/]\s*`)
	hardSeparators = regexp.MustCompile(`\s*(?:\+|&|\s(?i:and|with)\s)\s*`)
	leadingPct     = regexp.MustCompile(`^(\d+(?:\.\d+)?)\s*%\s*(.+)$`)
	trailingPct    = regexp.MustCompile(`^(.+?)\s*\(?\s*(\d+(?:\.\d+)?)\s*%\s*\)?$`)
)

// parseBlend resolves a blend label. ok is false when the label does not read as a blend (one
// part, or a "/" split whose parts are not labels, as in a formula), so the caller tries it as
// one material.
func (c *Catalogue) parseBlend(label string) (Chemistry, bool, error) {
	body := label
	var weights []float64
	if m := trailingShares.FindStringSubmatchIndex(label); m != nil {
		body = strings.TrimSpace(label[:m[0]+1])
		body = strings.TrimRight(body, " (")
		for _, w := range shareSplit.Split(strings.ReplaceAll(label[m[2]:m[3]], "%", ""), -1) {
			v, err := strconv.ParseFloat(strings.TrimSpace(w), 64)
			if err != nil || !(v > 0) || v > 1e6 {
				return Chemistry{}, true, fmt.Errorf("blend %q: share %q must be a positive number: %w", label, w, ErrUnknownLabel)
			}
			weights = append(weights, v)
		}
	}
	parts := hardSeparators.Split(body, -1)
	soft := false
	if len(parts) < 2 {
		parts, soft = strings.Split(body, "/"), true
	}
	if len(parts) < 2 {
		return Chemistry{}, false, nil
	}
	if len(parts) > maxBlendParts {
		return Chemistry{}, true, fmt.Errorf("blend %q: at most %d components: %w", label, maxBlendParts, ErrUnknownLabel)
	}
	var perPart []float64
	resolved := make([]Chemistry, len(parts))
	for i, p := range parts {
		p = strings.TrimSpace(p)
		if m := leadingPct.FindStringSubmatch(p); m != nil {
			p = m[2]
			perPart = append(perPart, mustFloat(m[1]))
		} else if m := trailingPct.FindStringSubmatch(p); m != nil {
			p = m[1]
			perPart = append(perPart, mustFloat(m[2]))
		}
		ch, err := c.blendPart(p)
		if err != nil {
			if soft {
				return Chemistry{}, false, nil
			}
			return Chemistry{}, true, fmt.Errorf("blend %q: component %d: %w", label, i+1, err)
		}
		resolved[i] = ch
	}
	for _, w := range perPart {
		if !(w > 0) || w > 1e6 {
			return Chemistry{}, true, fmt.Errorf("blend %q: share %g %% must be a positive number: %w", label, w, ErrUnknownLabel)
		}
	}
	switch {
	case len(perPart) > 0 && len(perPart) != len(parts):
		return Chemistry{}, true, fmt.Errorf("blend %q: give a share for every component or for none: %w", label, ErrUnknownLabel)
	case len(perPart) > 0 && weights != nil:
		return Chemistry{}, true, fmt.Errorf("blend %q: shares given twice: %w", label, ErrUnknownLabel)
	case len(perPart) > 0:
		weights = perPart
	}
	if weights != nil && len(weights) != len(parts) {
		return Chemistry{}, true, fmt.Errorf("blend %q: %d components but %d shares: %w", label, len(parts), len(weights), ErrUnknownLabel)
	}
	return c.assembleBlend(label, resolved, weights)
}

func mustFloat(s string) float64 {
	v, _ := strconv.ParseFloat(s, 64) // the pattern admits only digits and a point
	return v
}

// blendPart resolves one component of a blend: a material or a family.
func (c *Catalogue) blendPart(p string) (Chemistry, error) {
	if p == "" || IsUnknownWord(p) {
		return Chemistry{}, fmt.Errorf("empty or unknown component %q: %w", p, ErrUnknownLabel)
	}
	if e := c.Lookup(p); e != nil {
		return single(e, KindCatalogued, nil), nil
	}
	if f := c.labelFamilies[normLabel(p)]; f != nil {
		return c.familyChemistry(f), nil
	}
	e, kind, notes, err := c.material(p)
	if err != nil {
		return Chemistry{}, err
	}
	return single(e, kind, notes), nil
}

// assembleBlend joins resolved parts with their shares (nil: an uncertain split, uniform over
// the possible splits).
func (c *Catalogue) assembleBlend(label string, parts []Chemistry, weights []float64) (Chemistry, bool, error) {
	ch := Chemistry{Kind: KindBlend}
	if weights == nil {
		weights = make([]float64, len(parts))
		for i := range weights {
			weights[i] = 1
		}
		// Dirichlet(1, ..., 1): every split equally likely.
		ch.SplitConcentration = float64(len(parts))
		ch.Notes = append(ch.Notes, fmt.Sprintf("blend %q gives no shares: the split is uncertain (every split equally likely)", label))
	}
	sum := 0.0
	for _, w := range weights {
		sum += w
	}
	if ch.SplitConcentration == 0 && math.Abs(sum-100) > 0.5 && math.Abs(sum-1) > 0.005 {
		ch.Notes = append(ch.Notes, fmt.Sprintf("blend %q: shares sum to %g, normalised", label, sum))
	}
	var keys, ws []string
	for i, p := range parts {
		w := weights[i] / sum
		part := Part{Share: w}
		if len(p.Parts) > 0 {
			part.Concentration, part.Alternatives = p.Parts[0].Concentration, p.Parts[0].Alternatives
		}
		for _, m := range p.Components {
			for _, have := range ch.Components {
				if have.Entry.Key == m.Entry.Key {
					return Chemistry{}, true, fmt.Errorf("blend %q: %s appears twice: %w", label, m.Entry.Key, ErrUnknownLabel)
				}
			}
			part.Members = append(part.Members, len(ch.Components))
			ch.Components = append(ch.Components, Component{m.Entry, w * m.MassFraction})
		}
		ch.Parts = append(ch.Parts, part)
		ch.Notes = append(ch.Notes, p.Notes...)
		keys = append(keys, p.Key)
		ws = append(ws, strconv.FormatFloat(100*w, 'g', 4, 64))
	}
	ch.Key = strings.Join(keys, "+") + " " + strings.Join(ws, "/")
	if ch.SplitConcentration > 0 {
		ch.Key = strings.Join(keys, "+") + " (split unknown)"
	}
	return ch, true, nil
}

// material resolves one cathode material: key/alias, NMC ratio, or formula.
func (c *Catalogue) material(label string) (*Entry, Kind, []string, error) {
	if e := c.Lookup(label); e != nil {
		return e, KindCatalogued, nil, nil
	}
	if e, kind, notes, ok, err := c.ratio(label); ok || err != nil {
		return e, kind, notes, err
	}
	if f, err := c.elements().ParseFormula(label); err == nil {
		return c.fromFormula(label, f)
	}
	return nil, "", nil, &unknownLabelError{label: label, c: c}
}

// unknownLabelError is an unresolved label. The nearest known labels are searched only when the
// message is read: a lot of many unknown labels read as unknown never pays for the search.
type unknownLabelError struct {
	label string
	c     *Catalogue
}

func (e *unknownLabelError) Error() string {
	return fmt.Sprintf("%v %q; nearest known: %s", ErrUnknownLabel, e.label, strings.Join(e.c.nearest(e.label, 3), ", "))
}

func (e *unknownLabelError) Unwrap() error { return ErrUnknownLabel }

var (
	ratioPrefix = regexp.MustCompile(`(?i)^\s*(NMC|NCM)\s*[-_ ]?\s*\(?\s*([0-9.:/\-_ ,]+?)\s*\)?\s*$`)
	ratioSplit  = regexp.MustCompile(`[:/\-_ ,]+`)
)

// ratio parses NMC/NCM labels with a ratio. ok reports whether the label looked like one.
func (c *Catalogue) ratio(label string) (*Entry, Kind, []string, bool, error) {
	m := ratioPrefix.FindStringSubmatch(label)
	if m == nil {
		return nil, "", nil, false, nil
	}
	kind, body := strings.ToUpper(m[1]), m[2]
	nums, err := ratioDigits(body)
	if err != nil {
		return nil, "", nil, true, fmt.Errorf("%w %q: %v", ErrUnknownLabel, label, err)
	}
	if len(nums) != 3 {
		return nil, "", nil, true, fmt.Errorf("%w %q: an %s ratio needs three parts (Ni, %s)", ErrUnknownLabel, label, kind,
			map[string]string{"NMC": "Mn, Co", "NCM": "Co, Mn"}[kind])
	}
	sum := nums[0] + nums[1] + nums[2]
	if !(sum > 0) || math.IsInf(sum, 0) {
		return nil, "", nil, true, fmt.Errorf("%w %q: ratio sums to zero", ErrUnknownLabel, label)
	}
	ni, second, third := nums[0]/sum, nums[1]/sum, nums[2]/sum
	mn, co := second, third
	if kind == "NCM" {
		mn, co = third, second
	}
	if e := c.layeredGrade(ni, mn, co); e != nil {
		return e, KindCatalogued, nil, true, nil
	}
	// Digits that name a catalogued grade only when read in the other letter order: the trade
	// writes the grade's digits whichever letters it uses (NMC 523 for Ni5 Co2 Mn3).
	if e := c.layeredGrade(ni, co, mn); e != nil {
		other := map[string]string{"NMC": "Ni:Co:Mn", "NCM": "Ni:Mn:Co"}[kind]
		note := fmt.Sprintf("%q: the letters and the digits disagree; read as %s, i.e. %s (catalogued)", label, other, e.Key)
		return e, KindCatalogued, []string{note}, true, nil
	}
	text := "Li"
	for _, t := range []Term{{"Ni", ni}, {"Mn", mn}, {"Co", co}} {
		if t.Amount > 0 {
			text += t.Symbol + strconv.FormatFloat(t.Amount, 'g', 6, 64)
		}
	}
	f, err := c.elements().ParseFormula(text + "O2")
	if err != nil {
		return nil, "", nil, true, err
	}
	e, k, notes, err := c.fromFormula(label, f)
	return e, k, notes, true, err
}

// ratioDigits reads the ratio part of an NMC/NCM label. Separated numbers are read as written.
// A bare run of digits follows the trade: three digits summing to 10 are tenths (811, 532), equal
// digits are equal parts (111, 333), a first digit in tenths and two in hundredths summing to 1
// are read so (955 = 0.9:0.05:0.05); six digits are three two-digit percentages (900505).
func ratioDigits(body string) ([]float64, error) {
	allDigits := body != ""
	for i := range len(body) {
		allDigits = allDigits && isDigit(body[i])
	}
	if !allDigits {
		var nums []float64
		for _, f := range ratioSplit.Split(strings.TrimSpace(body), -1) {
			v, err := strconv.ParseFloat(f, 64)
			if err != nil || v < 0 || math.IsInf(v, 0) {
				return nil, fmt.Errorf("ratio part %q is not a number", f)
			}
			nums = append(nums, v)
		}
		return nums, nil
	}
	d := make([]float64, len(body))
	for i := range len(body) {
		d[i] = float64(body[i] - '0')
	}
	switch len(body) {
	case 3:
		switch {
		case d[0]+d[1]+d[2] == 10:
			return d, nil
		case d[0] == d[1] && d[1] == d[2]:
			return d, nil
		case 10*d[0]+d[1]+d[2] == 100:
			return []float64{10 * d[0], d[1], d[2]}, nil
		}
	case 6:
		p := []float64{10*d[0] + d[1], 10*d[2] + d[3], 10*d[4] + d[5]}
		if p[0]+p[1]+p[2] == 100 {
			return p, nil
		}
	}
	return nil, fmt.Errorf("digits %q do not read as a ratio (write it with separators, e.g. 8:1:1)", body)
}

// layeredGrade returns the catalogued layered oxide without Al of composition (ni, mn, co).
func (c *Catalogue) layeredGrade(ni, mn, co float64) *Entry {
	for _, e := range c.entries {
		f := e.Formula
		if e.Family == "layered" && f.Moles("Al") == 0 && near(f.Moles("Ni"), ni) && near(f.Moles("Mn"), mn) && near(f.Moles("Co"), co) {
			return e
		}
	}
	return nil
}

func near(a, b float64) bool { return math.Abs(a-b) < 0.005 }

// fromFormula returns the catalogue entry with the same composition, or a new uncatalogued entry
// with its structural family's defaults.
func (c *Catalogue) fromFormula(label string, f Formula) (*Entry, Kind, []string, error) {
	for _, e := range c.entries {
		if sameComposition(e.Formula, f) {
			return e, KindCatalogued, nil, nil
		}
	}
	sp, err := NewSpecies(f)
	if err != nil {
		return nil, "", nil, fmt.Errorf("%w %q: %v", ErrUnknownLabel, label, err)
	}
	fam := classify(f)
	d := c.families[fam]
	if d == nil {
		return nil, "", nil, fmt.Errorf("%w %q: formula %s is not a layered LiMO2, spinel LiM2O4 or olivine LiMPO4 cathode",
			ErrUnknownLabel, label, f.Canonical())
	}
	e := *d
	e.Key, e.Name, e.Formula, e.Species, e.Family, e.Catalogued = f.Canonical(), d.Name, f, sp, fam, false
	note := fmt.Sprintf("%s is not in the catalogue: %s defaults assumed (%s)", f.Canonical(), d.Name, d.Source)
	return &e, KindFormula, []string{note}, nil
}

func sameComposition(a, b Formula) bool {
	if len(a.terms) != len(b.terms) {
		return false
	}
	for _, t := range a.terms {
		if math.Abs(b.Moles(t.Symbol)-t.Amount) > 1e-6 {
			return false
		}
	}
	return true
}

// classify names the structural family of a lithium cathode formula, or "".
func classify(f Formula) string {
	li, o, p := f.Moles("Li"), f.Moles("O"), f.Moles("P")
	metals := 0.0
	for _, t := range f.terms {
		if IsMetal(t.Symbol) && t.Symbol != "Li" {
			metals += t.Amount
		}
	}
	tm := 0.0
	for s := range variableState {
		tm += f.Moles(s)
	}
	switch {
	case li < 0.5 || li > 1.3 || tm == 0: // no redox-active metal: not a cathode
		return ""
	case math.Abs(p-1) < 0.05 && math.Abs(o-4) < 0.1 && math.Abs(metals-1) < 0.1:
		return "olivine"
	case p == 0 && math.Abs(o-2) < 0.1 && math.Abs(metals-1) < 0.1:
		return "layered"
	case p == 0 && math.Abs(o-4) < 0.1 && math.Abs(metals-2) < 0.1:
		return "spinel"
	}
	return ""
}
