package value

import (
	"fmt"
	"math"

	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// Container is a package a reagent is bought in: a capacity in litres or in kg.
type Container struct {
	Name   string  `json:"name"`
	Litres float64 `json:"litres,omitempty"`
	Kg     float64 `json:"kg,omitempty"`
}

// DefaultContainers are the packages benches commonly buy reagents in (common practice).
func DefaultContainers() []Container {
	return []Container{{Name: "25 L can", Litres: 25}, {Name: "200 L drum", Litres: 200}, {Name: "1000 L IBC", Litres: 1000},
		{Name: "25 kg bag", Kg: 25}}
}

// OrderLine is one reagent to order: for the lot at P50 and P90, per tonne of black mass, and
// in each container that suits its form (litre containers for liquids, kg packages for solids
// and gases bought by weight).
type OrderLine struct {
	Reagent      string           `json:"reagent"`
	Kg           dist.Stat        `json:"kg"`
	Litres       *dist.Stat       `json:"litres,omitempty"`
	KgPerTonneBM float64          `json:"kg_per_tonne_black_mass_p50"`
	Containers   []ContainerCount `json:"containers"`
	PricePerKg   float64          `json:"price_per_kg,omitempty"`
	CostP90      *float64         `json:"cost_p90,omitempty"`
}

// ContainerCount is how many of a container hold the reagent's P90 amount.
type ContainerCount struct {
	Container string `json:"container"`
	Count     int    `json:"count"`
}

// OrderSheet is what to order for the lot's leach: each reagent to its P90 amount, so the lot
// runs short in at most one outcome of ten.
type OrderSheet struct {
	Basis    string      `json:"basis"`
	Currency string      `json:"currency,omitempty"`
	Lines    []OrderLine `json:"reagents"`
	Unpriced []string    `json:"unpriced,omitempty"`
}

// Order builds the order sheet of a leach plan in the containers given; blackMassKg is the
// lot's black mass (P50), for the amounts per tonne.
func Order(l *leach.Report, blackMassKg float64, containers []Container, currency string) *OrderSheet {
	if l == nil {
		return nil
	}
	os := &OrderSheet{Basis: "each reagent to its P90 amount (short in at most one outcome of ten)", Currency: currency}
	bmT := blackMassKg / 1000
	add := func(name string, kg dist.Stat, litres *dist.Stat, price float64) {
		ol := OrderLine{Reagent: name, Kg: kg, Litres: litres, PricePerKg: price}
		if bmT > 0 {
			ol.KgPerTonneBM = dist.Sig(kg.P50 / bmT)
		}
		for _, c := range containers {
			var n float64
			switch {
			case c.Litres > 0 && litres != nil:
				n = math.Ceil(litres.P90 / c.Litres)
			case c.Kg > 0 && litres == nil:
				n = math.Ceil(kg.P90 / c.Kg)
			default:
				continue
			}
			ol.Containers = append(ol.Containers, ContainerCount{Container: c.Name, Count: int(n)})
		}
		if price > 0 {
			cost := dist.Sig(kg.P90 * price)
			ol.CostP90 = &cost
		} else {
			os.Unpriced = append(os.Unpriced, name)
		}
		os.Lines = append(os.Lines, ol)
	}
	for i, g := range l.Reagents {
		var litres *dist.Stat
		if g.DensityGmL > 0 {
			v := g.Litres
			litres = &v
		}
		var price float64
		if p := l.Prices; p != nil {
			price = p.AcidPerKg
			if i > 0 {
				price = p.ReductantPerKg
			}
		}
		add(g.Name, g.Kg, litres, price)
	}
	if sc := l.Scrubber; sc != nil {
		v := sc.Litres
		add(sc.Reagent+" (chlorine scrubber)", sc.Kg, &v, 0)
	}
	return os
}

// ParseContainer reads "25 L can", "1000 L IBC", "25 kg bag": a capacity with its unit, then a
// name.
func ParseContainer(s string) (Container, error) {
	var v float64
	var unit string
	if n, err := fmt.Sscanf(s, "%g %s", &v, &unit); n < 2 || err != nil || !(v > 0) || v > 1e5 {
		return Container{}, fmt.Errorf("container %q: want a capacity, its unit (L or kg) and a name, e.g. 200 L drum", s)
	}
	c := Container{Name: s}
	switch unit {
	case "L", "l":
		c.Litres = v
	case "kg":
		c.Kg = v
	default:
		return Container{}, fmt.Errorf("container %q: the unit is L or kg", s)
	}
	return c, nil
}
