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

// Component is one cathode material of a chemistry with its share of the cathode active mass.
type Component struct {
	Entry        *Entry
	MassFraction float64
}

// Chemistry is a resolved chemistry label: one material, a blend by cathode mass, or the explicit
// unknown (the prior mix). Notes say what was assumed while resolving it.
type Chemistry struct {
	Key        string // canonical label: "NMC811", "LMO+NMC532 30/70", "unknown", or a formula
	Components []Component
	Unknown    bool
	Notes      []string
}

// unknownWords are the labels that mean "we do not know": they resolve to the prior mix.
var unknownWords = map[string]bool{
	"": true, "UNKNOWN": true, "LIION": true, "LITHIUMION": true, "LI": true, "?": true,
	"N/A": true, "NA": true, "UNLABELLED": true, "UNLABELED": true, "LIPO": true,
}

// IsUnknownWord reports whether label is one of the words that mean an unknown chemistry
// ("unknown", "Li-ion", blank ...).
func IsUnknownWord(label string) bool { return unknownWords[normLabel(label)] }

var blendWeights = regexp.MustCompile(`\s+(\d+(?:\.\d+)?(?:\s*[/:]\s*\d+(?:\.\d+)?)+)\s*%?\s*$`)

// ParseLabel resolves a chemistry label: a catalogue key or alias in any case ("nmc811"),
// an NMC/NCM ratio in the common spellings ("NCM 8:1:1", "nmc-622", "NMC(532)", "NMC333"; NCM
// lists Ni:Co:Mn, NMC lists Ni:Mn:Co), a formula typed directly ("LiNi0.9Mn0.05Co0.05O2"), a
// blend by cathode mass ("LMO+NMC532 70/30"), or a word meaning unknown ("Li-ion", blank). An
// unresolved label is an error wrapping ErrUnknownLabel that lists the nearest known labels.
func (c *Catalogue) ParseLabel(label string) (Chemistry, error) {
	label = strings.TrimSpace(label)
	if len(label) > 200 {
		return Chemistry{}, fmt.Errorf("chemistry label longer than 200 characters: %w", ErrUnknownLabel)
	}
	if IsUnknownWord(label) {
		return Chemistry{Key: "unknown", Components: c.Prior(), Unknown: true,
			Notes: []string{"chemistry unknown: the prior mix from " + c.priorSrc + " is assumed"}}, nil
	}
	if strings.Contains(label, "+") {
		return c.parseBlend(label)
	}
	e, notes, err := c.single(label)
	if err != nil {
		return Chemistry{}, err
	}
	return Chemistry{Key: e.Key, Components: []Component{{e, 1}}, Notes: notes}, nil
}

func (c *Catalogue) parseBlend(label string) (Chemistry, error) {
	body := label
	var weights []float64
	if m := blendWeights.FindStringSubmatchIndex(label); m != nil {
		body = label[:m[0]]
		for _, w := range regexp.MustCompile(`[/:]`).Split(label[m[2]:m[3]], -1) {
			v, err := strconv.ParseFloat(strings.TrimSpace(w), 64)
			if err != nil || v <= 0 || math.IsInf(v, 0) {
				return Chemistry{}, fmt.Errorf("blend %q: weight %q must be a positive number", label, w)
			}
			weights = append(weights, v)
		}
	}
	parts := strings.Split(body, "+")
	if len(parts) > 8 {
		return Chemistry{}, fmt.Errorf("blend %q: at most 8 components", label)
	}
	ch := Chemistry{}
	if weights == nil {
		for range parts {
			weights = append(weights, 1)
		}
		ch.Notes = append(ch.Notes, fmt.Sprintf("blend %q gives no weights: equal cathode-mass shares assumed", label))
	}
	if len(weights) != len(parts) {
		return Chemistry{}, fmt.Errorf("blend %q: %d components but %d weights", label, len(parts), len(weights))
	}
	sum := 0.0
	for _, w := range weights {
		sum += w
	}
	if weights != nil && math.Abs(sum-100) > 0.5 && math.Abs(sum-1) > 0.005 && len(ch.Notes) == 0 {
		ch.Notes = append(ch.Notes, fmt.Sprintf("blend %q: weights sum to %g, normalised", label, sum))
	}
	var keys []string
	for i, p := range parts {
		p = strings.TrimSpace(p)
		if p == "" || IsUnknownWord(p) {
			return Chemistry{}, fmt.Errorf("blend %q: component %d is empty or unknown", label, i+1)
		}
		e, notes, err := c.single(p)
		if err != nil {
			return Chemistry{}, fmt.Errorf("blend %q: %w", label, err)
		}
		ch.Notes = append(ch.Notes, notes...)
		for j := range ch.Components {
			if ch.Components[j].Entry == e {
				return Chemistry{}, fmt.Errorf("blend %q: %s appears twice", label, e.Key)
			}
		}
		ch.Components = append(ch.Components, Component{e, weights[i] / sum})
		keys = append(keys, e.Key)
	}
	ws := make([]string, len(weights))
	for i, w := range weights {
		ws[i] = strconv.FormatFloat(100*w/sum, 'g', 4, 64)
	}
	if len(ch.Components) == 1 {
		ch.Key = keys[0]
		return ch, nil
	}
	ch.Key = strings.Join(keys, "+") + " " + strings.Join(ws, "/")
	return ch, nil
}

// single resolves one material: key/alias, NMC ratio, or formula.
func (c *Catalogue) single(label string) (*Entry, []string, error) {
	if e := c.Lookup(label); e != nil {
		return e, nil, nil
	}
	if e, notes, ok, err := c.ratio(label); ok || err != nil {
		return e, notes, err
	}
	if f, err := ParseFormula(label); err == nil {
		return c.fromFormula(label, f)
	}
	return nil, nil, fmt.Errorf("%w %q; nearest known: %s", ErrUnknownLabel, label, strings.Join(c.nearest(label, 3), ", "))
}

var ratioPrefix = regexp.MustCompile(`(?i)^\s*(NMC|NCM)\s*[-_ ]?\s*\(?\s*([0-9.:/\-_ ,]+?)\s*\)?\s*$`)

// ratio parses NMC/NCM labels with a ratio. ok reports whether the label looked like one.
func (c *Catalogue) ratio(label string) (*Entry, []string, bool, error) {
	m := ratioPrefix.FindStringSubmatch(label)
	if m == nil {
		return nil, nil, false, nil
	}
	kind, body := strings.ToUpper(m[1]), m[2]
	var nums []float64
	if len(body) == 3 && isDigit(body[0]) && isDigit(body[1]) && isDigit(body[2]) {
		for i := range 3 {
			nums = append(nums, float64(body[i]-'0'))
		}
	} else {
		for _, f := range regexp.MustCompile(`[:/\-_ ,]+`).Split(body, -1) {
			v, err := strconv.ParseFloat(f, 64)
			if err != nil || v < 0 || math.IsInf(v, 0) {
				return nil, nil, true, fmt.Errorf("%w %q: ratio part %q is not a number", ErrUnknownLabel, label, f)
			}
			nums = append(nums, v)
		}
	}
	if len(nums) != 3 {
		return nil, nil, true, fmt.Errorf("%w %q: an %s ratio needs three parts (Ni, %s)", ErrUnknownLabel, label, kind,
			map[string]string{"NMC": "Mn, Co", "NCM": "Co, Mn"}[kind])
	}
	sum := nums[0] + nums[1] + nums[2]
	if sum <= 0 {
		return nil, nil, true, fmt.Errorf("%w %q: ratio sums to zero", ErrUnknownLabel, label)
	}
	ni, mn, co := nums[0]/sum, nums[1]/sum, nums[2]/sum
	if kind == "NCM" {
		mn, co = co, mn
	}
	for _, e := range c.entries {
		f := e.Formula
		if e.Family == "layered" && f.Moles("Al") == 0 && near(f.Moles("Ni"), ni) && near(f.Moles("Mn"), mn) && near(f.Moles("Co"), co) {
			return e, nil, true, nil
		}
	}
	text := "Li"
	for _, t := range []Term{{"Ni", ni}, {"Mn", mn}, {"Co", co}} {
		if t.Amount > 0 {
			text += t.Symbol + strconv.FormatFloat(t.Amount, 'g', 6, 64)
		}
	}
	f, err := ParseFormula(text + "O2")
	if err != nil {
		return nil, nil, true, err
	}
	e, notes, err := c.fromFormula(label, f)
	return e, notes, true, err
}

func near(a, b float64) bool { return math.Abs(a-b) < 0.005 }

// fromFormula returns the catalogue entry with the same composition, or a new uncatalogued entry
// with its structural family's defaults.
func (c *Catalogue) fromFormula(label string, f Formula) (*Entry, []string, error) {
	for _, e := range c.entries {
		if sameComposition(e.Formula, f) {
			return e, nil, nil
		}
	}
	sp, err := NewSpecies(f)
	if err != nil {
		return nil, nil, fmt.Errorf("%w %q: %v", ErrUnknownLabel, label, err)
	}
	fam := classify(f)
	d := c.families[fam]
	if d == nil {
		return nil, nil, fmt.Errorf("%w %q: formula %s is not a layered LiMO2, spinel LiM2O4 or olivine LiMPO4 cathode",
			ErrUnknownLabel, label, f.Canonical())
	}
	e := *d
	e.Key, e.Name, e.Formula, e.Species, e.Family, e.Catalogued = f.Canonical(), d.Name, f, sp, fam, false
	note := fmt.Sprintf("%s is not in the catalogue: %s defaults assumed (%s)", f.Canonical(), d.Name, d.Source)
	return &e, []string{note}, nil
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
