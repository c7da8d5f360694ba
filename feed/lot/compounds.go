package lot

import (
	"blackmass/cathode"
	"strings"
)

// compounds indexes the black-mass compounds and their element mass fractions.
type compounds struct {
	names     []string
	formulas  []string
	entries   []*cathode.Entry // nil for fixed compounds
	fractions [][]float64      // [compound][element]
	elements  []string
	elIdx     map[string]int
	byEntry   map[string]int
}

func newCompounds() *compounds {
	c := &compounds{elIdx: map[string]int{}, byEntry: map[string]int{}}
	for _, fc := range fixedCompounds {
		f, err := cathode.ParseFormula(fc.formula)
		if err != nil {
			panic("feed: " + err.Error())
		}
		c.add(fc.name, f, nil)
	}
	return c
}

func (c *compounds) n() int { return len(c.names) }

func (c *compounds) add(name string, f cathode.Formula, e *cathode.Entry) int {
	fr := make([]float64, len(c.elements))
	for _, t := range f.MassFractions(f.Elements()) {
		i, ok := c.elIdx[t.Symbol]
		if !ok {
			i = len(c.elements)
			c.elIdx[t.Symbol] = i
			c.elements = append(c.elements, t.Symbol)
			for k := range c.fractions {
				c.fractions[k] = append(c.fractions[k], 0)
			}
			fr = append(fr, 0)
		}
		fr[i] = t.Amount
	}
	c.names = append(c.names, name)
	c.formulas = append(c.formulas, f.String())
	c.entries = append(c.entries, e)
	c.fractions = append(c.fractions, fr)
	return len(c.names) - 1
}

// cathode returns the index of a cathode material, adding it on first use.
func (c *compounds) cathode(e *cathode.Entry) int {
	if i, ok := c.byEntry[e.Key]; ok {
		return i
	}
	name := e.Key
	if !strings.Contains(name, e.Formula.String()) {
		name += " (" + e.Formula.String() + ")"
	}
	i := c.add(name, e.Formula, e)
	c.byEntry[e.Key] = i
	return i
}
