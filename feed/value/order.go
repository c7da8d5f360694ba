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

// DefaultContainers are the packages benches and plants commonly buy reagents in, from a
// laboratory bottle to an intermediate bulk container (common practice).
func DefaultContainers() []Container {
	return []Container{{Name: "1 L bottle", Litres: 1}, {Name: "2.5 L bottle", Litres: 2.5}, {Name: "5 L bottle", Litres: 5},
		{Name: "25 L can", Litres: 25}, {Name: "200 L drum", Litres: 200}, {Name: "1000 L IBC", Litres: 1000},
		{Name: "1 kg jar", Kg: 1}, {Name: "5 kg tub", Kg: 5}, {Name: "25 kg bag", Kg: 25}}
}

// DefaultContainerList is DefaultContainers as the command line writes them.
const DefaultContainerList = "1 L bottle, 2.5 L bottle, 5 L bottle, 25 L can, 200 L drum, 1000 L IBC, 1 kg jar, 5 kg tub, 25 kg bag"

// MaxSuggestedCount is the most containers of one size a suggestion names before it takes the
// largest size instead (common practice: a few containers of a size, not a stack of small ones).
const MaxSuggestedCount = 3

// OrderLine is one reagent to order: for the lot at P50 and P90, per tonne of black mass, and
// in each container that suits its form (litre containers for liquids, kg packages for solids
// and gases bought by weight).
type OrderLine struct {
	Reagent string `json:"reagent"`
	// Stage is the stage it is bought for: leach or recovery.
	Stage        string           `json:"stage"`
	Kg           dist.Stat        `json:"kg"`
	Litres       *dist.Stat       `json:"litres,omitempty"`
	KgPerTonneBM float64          `json:"kg_per_tonne_black_mass_p50"`
	Containers   []ContainerCount `json:"containers"`
	// Suggested is the one container to buy the P90 amount in (Suggest).
	Suggested  *ContainerCount `json:"suggested,omitempty"`
	PricePerKg float64         `json:"price_per_kg,omitempty"`
	CostP90    *float64        `json:"cost_p90,omitempty"`
}

// ContainerCount is how many of a container hold the reagent's P90 amount.
type ContainerCount struct {
	Container string `json:"container"`
	Count     int    `json:"count"`
}

// OrderSheet is what to order for the lot's leach and recovery: each reagent to its P90 amount, so the lot
// runs short in at most one outcome of ten.
type OrderSheet struct {
	Basis    string      `json:"basis"`
	Currency string      `json:"currency,omitempty"`
	Lines    []OrderLine `json:"reagents"`
	Unpriced []string    `json:"unpriced,omitempty"`
	// NotBought are reagents a stage uses that are not bought (air, ozone made on site).
	NotBought []string `json:"not_bought,omitempty"`
}

// Stages an order line is bought for.
const (
	StageLeach    = "leach"
	StageRecovery = "recovery"
)

// Purchase is a reagent of a later stage to order beside the leach's: its amount as bought
// (kg, and litres for a solution), and its price per kg as bought (0: not priced).
type Purchase struct {
	Reagent    string
	Kg         dist.Stat
	Litres     *dist.Stat
	PricePerKg float64
	// NotBought marks a reagent that is not ordered (air, ozone made on site): listed, no line.
	NotBought bool
}

// Order builds the order sheet of a leach plan, and of the recovery's reagents after it
// (recovery, in the order given), in the containers given; blackMassKg is the lot's black mass
// (P50), for the amounts per tonne (0: none, as for a measured liquor). Nil without a leach and
// without recovery reagents.
func Order(l *leach.Report, recovery []Purchase, blackMassKg float64, containers []Container, currency string) *OrderSheet {
	if l == nil && len(recovery) == 0 {
		return nil
	}
	if l == nil { // a measured liquor's recovery: no leach to buy for
		l = &leach.Report{}
	}
	os := &OrderSheet{Basis: "each reagent to its P90 amount (short in at most one outcome of ten)", Currency: currency}
	bmT := blackMassKg / 1000
	add := func(stage, name string, kg dist.Stat, litres *dist.Stat, price float64) {
		ol := OrderLine{Reagent: name, Stage: stage, Kg: kg, Litres: litres, PricePerKg: price}
		var capacity []float64
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
			capacity = append(capacity, max(c.Litres, c.Kg))
		}
		ol.Suggested = Suggest(ol.Containers, capacity)
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
		add(StageLeach, g.Name, g.Kg, litres, price)
	}
	if sc := l.Scrubber; sc != nil {
		v := sc.Litres
		add(StageLeach, sc.Reagent+" (chlorine scrubber)", sc.Kg, &v, 0)
	}
	for _, p := range recovery {
		if p.NotBought {
			os.NotBought = append(os.NotBought, p.Reagent)
			continue
		}
		add(StageRecovery, p.Reagent, p.Kg, p.Litres, p.PricePerKg)
	}
	return os
}

// Suggest picks the one container to buy an amount in, from the counts of each size that hold
// it (capacity gives each size): the size that buys the least capacity in at most
// MaxSuggestedCount containers, the fewer containers on a tie; if no size does it in so few,
// the largest size. Nil when no size suits.
func Suggest(counts []ContainerCount, capacity []float64) *ContainerCount {
	best, largest := -1, -1
	for i, c := range counts {
		if largest < 0 || capacity[i] > capacity[largest] {
			largest = i
		}
		if c.Count > MaxSuggestedCount {
			continue
		}
		bought := float64(c.Count) * capacity[i]
		if best < 0 {
			best = i
			continue
		}
		was := float64(counts[best].Count) * capacity[best]
		if bought < was*(1-1e-9) || (bought <= was*(1+1e-9) && c.Count < counts[best].Count) {
			best = i
		}
	}
	if best < 0 {
		best = largest
	}
	if best < 0 {
		return nil
	}
	s := counts[best]
	return &s
}

// ParseContainer reads "500 mL bottle", "25 L can", "1000 L IBC", "25 kg bag", "500 g jar": a
// capacity with its unit, then a name.
func ParseContainer(s string) (Container, error) {
	var v float64
	var unit string
	if n, err := fmt.Sscanf(s, "%g %s", &v, &unit); n < 2 || err != nil || !(v > 0) || v > 1e8 {
		return Container{}, fmt.Errorf("container %q: want a capacity, its unit (mL, L, g or kg) and a name, e.g. 200 L drum", s)
	}
	c := Container{Name: s}
	switch unit {
	case "mL", "ml":
		c.Litres = v / 1000
	case "L", "l":
		c.Litres = v
	case "g":
		c.Kg = v / 1000
	case "kg":
		c.Kg = v
	default:
		return Container{}, fmt.Errorf("container %q: the unit is mL, L, g or kg", s)
	}
	if max(c.Litres, c.Kg) > 1e5 {
		return Container{}, fmt.Errorf("container %q: holds more than 100,000 L or kg", s)
	}
	return c, nil
}
