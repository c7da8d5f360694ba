package cathode

import (
	"fmt"
	"io/fs"
	"regexp"
	"strings"

	"blackmass/data"
)

// OtherBattery is a kind of battery that is not lithium-ion (nickel-metal hydride,
// nickel-cadmium, lead-acid, alkaline, zinc-carbon, zinc-air): it holds no lithium-ion cathode,
// so it stays out of the black mass, and what it would bring into the lot is said.
type OtherBattery struct {
	Kind   string `json:"kind"`
	Name   string `json:"name"`
	Brings string `json:"brings"`
	Hazard string `json:"hazard"`
	Source string `json:"source"`
}

// Warning says what the battery brings into a lithium-ion lot if shredded with it, and where
// those numbers come from.
func (b *OtherBattery) Warning() string {
	return fmt.Sprintf("%s cells are not lithium-ion: kept out of the black mass. Shredded with the lot they would bring %s: %s (%s)",
		b.Name, b.Brings, b.Hazard, b.Source)
}

// otherWords strip the words around a battery's name ("NiMH battery", "AA alkaline cells").
var otherWords = regexp.MustCompile(`(?i)\b(rechargeable|primary|battery|batteries|cells?|packs?|button|AAA|AA|9V)\b`)

// loadOtherBatteries reads other_batteries.csv.
func (c *Catalogue) loadOtherBatteries(fsys fs.FS) error {
	t, err := data.ReadTable(fsys, "other_batteries.csv")
	if err != nil {
		return err
	}
	c.others = map[string]*OtherBattery{}
	for _, r := range t.Rows {
		b := &OtherBattery{Kind: r.Str("kind"), Name: r.Str("name"), Brings: r.Str("brings"), Hazard: r.Str("hazard"), Source: r.Str("source")}
		if b.Kind == "" || b.Name == "" || b.Brings == "" || b.Hazard == "" || b.Source == "" {
			return r.Errorf("kind, name, brings, hazard and source are needed")
		}
		for _, w := range append(strings.Split(r.Str("words"), "|"), b.Kind) {
			k := normLabel(w)
			if k == "" {
				continue
			}
			if prev, dup := c.others[k]; dup && prev.Kind != b.Kind {
				return r.Errorf("word %q names both %s and %s", w, prev.Kind, b.Kind)
			}
			if c.byName[k] != nil {
				return r.Errorf("word %q is a lithium-ion chemistry of the catalogue", w)
			}
			c.others[k] = b
		}
	}
	return nil
}

// OtherBattery returns the battery that is not lithium-ion a label names ("NiMH", "Ni-Cd
// battery", "AA alkaline", "SLA"), or nil when it names none.
func (c *Catalogue) OtherBattery(label string) *OtherBattery {
	if len(label) > MaxLabelLen {
		return nil
	}
	if b := c.others[normLabel(label)]; b != nil {
		return b
	}
	return c.others[normLabel(otherWords.ReplaceAllString(label, " "))]
}
