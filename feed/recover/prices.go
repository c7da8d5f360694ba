package recover

import (
	"fmt"
	"strings"

	"blackmass/feed/dist"
)

// ReagentPrices are the recovery reagents' prices per kg as bought, by the reagent's name in
// recover_reagents.csv (NaOH, Na2CO3, KMnO4 ...), from a file: Line gives each price's line.
type ReagentPrices struct {
	File     string
	Currency string
	PerKg    map[string]float64
	Line     map[string]int
}

// ReagentCost is what the recovery's reagents cost at the prices given.
type ReagentCost struct {
	Currency string    `json:"currency"`
	Items    []Flow    `json:"items"` // Kg carries money here
	Total    dist.Stat `json:"total"`
	Unpriced []string  `json:"unpriced,omitempty"`
	// Net is the products' value less the reagents' cost, when both are priced.
	Net *dist.Stat `json:"net,omitempty"`
}

// check refuses a price of a reagent the tables do not know, or a currency unlike the products'.
func (rp *ReagentPrices) check(t *Tables, products *ProductPrices) error {
	for _, name := range sortedKeys(rp.PerKg) {
		if _, ok := t.reagents[name]; !ok {
			return &FlowsheetError{File: rp.File, Line: rp.Line[name], Field: "reagent",
				Err: fmt.Errorf("%q is not a recovery reagent (want one of %v)", name, sortedKeys(t.reagents))}
		}
	}
	if products != nil && products.Currency != "" && rp.Currency != "" && products.Currency != rp.Currency {
		return &FlowsheetError{File: rp.File, Field: "currency", Err: fmt.Errorf("%s, but the product prices are in %s",
			rp.Currency, products.Currency)}
	}
	return nil
}

// cost prices every reagent, added up over the stages, sample by sample.
func (p *planner) cost(rp *ReagentPrices, tallies []*tally, value []float64) *ReagentCost {
	if rp == nil {
		return nil
	}
	mol := map[string][]float64{}
	for _, tl := range tallies {
		for name, v := range tl.reagentMol {
			m := col(mol, name, p.n)
			for i := range v {
				m[i] += v[i]
			}
		}
	}
	rc := &ReagentCost{Currency: rp.Currency}
	total := make([]float64, p.n)
	for _, name := range sortedKeys(mol) {
		price, ok := rp.PerKg[name]
		if !ok {
			rc.Unpriced = append(rc.Unpriced, name)
			continue
		}
		rg := p.t.reagents[name]
		money := scale(mol[name], p.t.molarMass(rg.Formula)/1000*100/rg.WtPct*price)
		for i := range total {
			total[i] += money[i]
		}
		rc.Items = append(rc.Items, Flow{Name: name, Kg: dist.Summarise(money)})
	}
	rc.Total = dist.Summarise(total)
	if value != nil {
		net := make([]float64, p.n)
		for i := range net {
			net[i] = value[i] - total[i]
		}
		s := dist.Summarise(net)
		rc.Net = &s
	}
	return rc
}

// ProductItem is a product (or cake) the planner can make that a prices file may price: its
// key (the product's name in the report, or the cake's main phase) and the other names it is
// known by.
type ProductItem struct {
	Key   string
	Names []string
}

// ProductItems are the items a prices file may price by formula or name: every product of the
// stages (electrowon metal, hydroxide, carbonate, oxalate and sulfate of Co and Ni, copper
// cement, lithium carbonate and phosphate) and the MnO2 cake.
func ProductItems() []ProductItem {
	return []ProductItem{
		{"Li2CO3", []string{"lithium carbonate"}},
		{"Li3PO4", []string{"lithium phosphate"}},
		{"Co cathode", []string{"Co metal", "cobalt cathode", "cobalt metal"}},
		{"Ni cathode", []string{"Ni metal", "nickel cathode", "nickel metal"}},
		{"Cu cement", []string{"Cu metal", "copper cement"}},
		{"CoSO4·7H2O", []string{"cobalt sulfate heptahydrate", "cobalt sulphate heptahydrate"}},
		{"NiSO4·6H2O", []string{"nickel sulfate hexahydrate", "nickel sulphate hexahydrate"}},
		{"Co(OH)2", []string{"cobalt hydroxide"}},
		{"Ni(OH)2", []string{"nickel hydroxide"}},
		{"CoCO3", []string{"cobalt carbonate"}},
		{"NiCO3", []string{"nickel carbonate"}},
		{"CoC2O4·2H2O", []string{"cobalt oxalate", "cobalt oxalate dihydrate"}},
		{"NiC2O4·2H2O", []string{"nickel oxalate", "nickel oxalate dihydrate"}},
		{"MnO2", []string{"MnO2 cake", "manganese dioxide"}},
	}
}

// LookupProduct finds a product item by its key or one of its names, ignoring case, spaces and
// how a hydrate's dot is written (CoSO4.7H2O, CoSO4*7H2O, CoSO4·7H2O).
func LookupProduct(s string) (string, bool) {
	want := productFold(s)
	for _, it := range ProductItems() {
		if productFold(it.Key) == want {
			return it.Key, true
		}
		for _, n := range it.Names {
			if productFold(n) == want {
				return it.Key, true
			}
		}
	}
	return "", false
}

// ProductKeys are the keys of ProductItems, for a message.
func ProductKeys() []string {
	var out []string
	for _, it := range ProductItems() {
		out = append(out, it.Key)
	}
	return out
}

func productFold(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch r {
		case ' ', '\t':
		case '.', '*', '•', '∙', '⋅':
			b.WriteRune('·')
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
