// Package value prices a lot: its metals at the buyer's prices and payables, net of the leach
// reagents, and the order sheet of what to buy for the leach in the containers a bench uses.
package value

import (
	"fmt"
	"slices"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// Price is what a buyer pays for one element of the black mass: per kg of the contained metal,
// or for lithium per kg of lithium carbonate equivalent (LCE), with the payable share (the
// fraction of the contained value the buyer pays for).
type Price struct {
	Element string
	Basis   string // "metal" or "LCE"
	PerKg   float64
	Payable float64 // 0..1
	Source  string
}

// PriceList is a prices file: one currency for every row. Prices are the black mass's
// elements; Products the recovery's products, each at its own price per kg of product.
type PriceList struct {
	File     string
	Currency string
	Prices   []Price
	Products []ProductPrice
}

// ProductPrice is what a product of the recovery sells for, per kg of the product as made
// (dry): Item is the planner's name of it (Li2CO3, CoSO4·7H2O, Co cathode ...).
type ProductPrice struct {
	Item   string
	PerKg  float64
	Source string
	Line   int
}

// BasisProduct marks a prices file's row as a product of the recovery, priced per kg of it.
const BasisProduct = "product"

// Price bases.
const (
	BasisMetal = "metal"
	BasisLCE   = "LCE"
)

// LCEPerKgLi is the lithium carbonate equivalent of 1 kg of lithium: M(Li2CO3) / (2·M(Li)),
// from the CIAAW 2021 atomic weights (≈ 5.323).
func LCEPerKgLi() float64 {
	return cathode.MolarMassOf("Li2CO3") / (2 * cathode.MolarMassOf("Li"))
}

// ElementValue is one priced element of the lot.
type ElementValue struct {
	Element    string    `json:"element"`
	Basis      string    `json:"basis"`
	PricePerKg float64   `json:"price_per_kg"`
	Payable    float64   `json:"payable_share"`
	ProductKg  dist.Stat `json:"priced_kg"` // kg of metal, or of LCE for lithium priced so
	Contained  dist.Stat `json:"contained_value"`
	PayableVal dist.Stat `json:"payable_value"`
	Source     string    `json:"source"`
}

// Value is the lot's worth at the prices given, from the same Monte Carlo draws as the metals,
// so a chemistry's uncertainty moves every element's value together.
type Value struct {
	Currency    string         `json:"currency"`
	PricesFile  string         `json:"prices_file"`
	Elements    []ElementValue `json:"elements"`
	Contained   dist.Stat      `json:"contained_value"`
	Payable     dist.Stat      `json:"payable_value"`
	ReagentCost *dist.Stat     `json:"reagent_cost,omitempty"`
	// NetOfReagents is the payable value less the leach reagents' cost (same currency assumed).
	NetOfReagents     *dist.Stat `json:"payable_net_of_reagents,omitempty"`
	PayablePerTonneBM dist.Stat  `json:"payable_per_tonne_black_mass"`
	PayablePerKWh     *dist.Stat `json:"payable_per_kWh_received,omitempty"`
	Unpriced          []string   `json:"unpriced_metals,omitempty"`
	Notes             []string   `json:"notes"`
}

// PayableMetals are the metals of black mass a buyer commonly pays for (common practice); a
// value lists those without a price, and the register's listings show them.
func PayableMetals() []string { return []string{"Co", "Ni", "Li", "Mn", "Cu", "Al"} }

// Of prices the draws: elementKg[e][i] kg of elements[e] and blackMassKg[i] in sample i.
// reagentCost is the leach's cost per sample (nil: not priced); energyKWh the lot's energy
// received (0: unknown, as for a quote from an assay).
func Of(elements []string, elementKg [][]float64, blackMassKg []float64, pl *PriceList, reagentCost []float64, energyKWh float64) *Value {
	n := len(blackMassKg)
	v := &Value{Currency: pl.Currency, PricesFile: pl.File}
	contained, payable := make([]float64, n), make([]float64, n)
	priced := map[string]bool{}
	for _, p := range pl.Prices {
		e := slices.Index(elements, p.Element)
		if e < 0 {
			v.Notes = append(v.Notes, fmt.Sprintf("%s is priced but not in this black mass", p.Element))
			continue
		}
		priced[p.Element] = true
		factor := 1.0
		if p.Basis == BasisLCE {
			factor = LCEPerKgLi()
		}
		kg, con, pay := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range n {
			kg[i] = elementKg[e][i] * factor
			con[i] = kg[i] * p.PerKg
			pay[i] = con[i] * p.Payable
			contained[i] += con[i]
			payable[i] += pay[i]
		}
		v.Elements = append(v.Elements, ElementValue{Element: p.Element, Basis: p.Basis, PricePerKg: p.PerKg, Payable: p.Payable,
			ProductKg: dist.Summarise(kg), Contained: dist.Summarise(con), PayableVal: dist.Summarise(pay), Source: p.Source})
	}
	v.Contained, v.Payable = dist.Summarise(contained), dist.Summarise(payable)
	perT := make([]float64, n)
	for i := range n {
		if blackMassKg[i] > 0 {
			perT[i] = payable[i] / (blackMassKg[i] / 1000)
		}
	}
	v.PayablePerTonneBM = dist.Summarise(perT)
	if energyKWh > 0 {
		st := dist.Summarise(scaled(payable, 1/energyKWh))
		v.PayablePerKWh = &st
	}
	if reagentCost != nil {
		rc := dist.Summarise(reagentCost)
		net := make([]float64, n)
		for i := range n {
			net[i] = payable[i] - reagentCost[i]
		}
		ns := dist.Summarise(net)
		v.ReagentCost, v.NetOfReagents = &rc, &ns
		v.Notes = append(v.Notes, "reagent cost uses the leach prices, taken to be in "+pl.Currency)
	} else {
		v.Notes = append(v.Notes, "no reagent prices given: no value net of reagents (--acid-price, --h2o2-price)")
	}
	for _, el := range PayableMetals() {
		if !priced[el] && slices.Contains(elements, el) {
			v.Unpriced = append(v.Unpriced, el)
		}
	}
	if len(v.Unpriced) > 0 {
		v.Notes = append(v.Notes, fmt.Sprintf("no price for %v: valued at nothing, not at a guess", v.Unpriced))
	}
	return v
}

func scaled(x []float64, k float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = v * k
	}
	return out
}
