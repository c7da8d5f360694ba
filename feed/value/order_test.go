package value

import (
	"math"
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/leach"
)

// A bench amount is bought in the one bottle that holds it, a plant amount in drums or IBCs; the
// rule (least capacity bought in at most three containers) is common practice.
func TestSuggest(t *testing.T) {
	cs := DefaultContainers()
	for _, c := range []struct {
		litres float64
		want   string
		count  int
	}{{0.4, "1 L bottle", 1}, {3.85, "5 L bottle", 1}, {2.2, "2.5 L bottle", 1}, {9, "5 L bottle", 2},
		{57.3, "25 L can", 3}, {183, "200 L drum", 1}, {300, "200 L drum", 2}, {5200, "1000 L IBC", 6}} {
		var counts []ContainerCount
		var capacity []float64
		for _, k := range cs {
			if k.Litres > 0 {
				n := int(c.litres / k.Litres)
				if float64(n)*k.Litres < c.litres {
					n++
				}
				counts = append(counts, ContainerCount{Container: k.Name, Count: n})
				capacity = append(capacity, k.Litres)
			}
		}
		got := Suggest(counts, capacity)
		if got == nil || got.Container != c.want || got.Count != c.count {
			t.Errorf("%g L: suggested %+v, want %d × %s", c.litres, got, c.count, c.want)
		}
		if float64(got.Count)*capacity[index(counts, got.Container)] < c.litres {
			t.Errorf("%g L: %+v does not hold it", c.litres, got)
		}
	}
	if Suggest(nil, nil) != nil {
		t.Error("a suggestion from no containers")
	}
}

func index(cs []ContainerCount, name string) int {
	for i, c := range cs {
		if c.Container == name {
			return i
		}
	}
	return -1
}

// Capacities in mL and g are read as L and kg; the default list on the command line is the
// default containers.
func TestParseContainer(t *testing.T) {
	for in, want := range map[string]Container{"500 mL bottle": {Name: "500 mL bottle", Litres: 0.5},
		"2.5 L bottle": {Name: "2.5 L bottle", Litres: 2.5}, "500 g jar": {Name: "500 g jar", Kg: 0.5}, "25 kg bag": {Name: "25 kg bag", Kg: 25}} {
		got, err := ParseContainer(in)
		if err != nil || got != want {
			t.Errorf("%q: %+v %v, want %+v", in, got, err, want)
		}
	}
	for _, bad := range []string{"big barrel", "25 drum", "0 L can", "200000 L tank"} {
		if _, err := ParseContainer(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
	def := DefaultContainers()
	parts := strings.Split(DefaultContainerList, ",")
	if len(parts) != len(def) {
		t.Fatalf("%d containers in the list, %d by default", len(parts), len(def))
	}
	for i, p := range parts {
		if c, err := ParseContainer(strings.TrimSpace(p)); err != nil || c != def[i] {
			t.Errorf("%q: %+v %v, want %+v", p, c, err, def[i])
		}
	}
}

// The recovery's reagents join the leach's on the order sheet, each to its P90 as bought: 293 L
// of 50 % caustic is bought as 2 × 200 L drums (400 L; one IBC would buy 1000 L, 12 cans more
// than three), 23.0 kg of permanganate as 1 × 25 kg bag; the cost is the P90 kg × price
// (447 kg × 0.45 = 201.15), and a reagent without a price is listed unpriced.
func TestOrderRecoveryReagents(t *testing.T) {
	naoh := dist.Stat{P10: 400, P50: 422, P90: 447}
	naohL := dist.Stat{P10: 262, P50: 277, P90: 293}
	rec := []Purchase{
		{Reagent: "NaOH 50 % (recovery)", Kg: naoh, Litres: &naohL, PricePerKg: 0.45},
		{Reagent: "KMnO4 (recovery)", Kg: dist.Stat{P50: 20.5, P90: 23.0}},
		{Reagent: "O3 (recovery)", Kg: dist.Stat{P50: 9, P90: 10}, NotBought: true},
	}
	o := Order(&leach.Report{}, rec, 237, DefaultContainers(), "EUR")
	if len(o.Lines) != 2 {
		t.Fatalf("lines %+v", o.Lines)
	}
	n, k := o.Lines[0], o.Lines[1]
	if n.Stage != StageRecovery || n.Kg.P90 != 447 || n.Litres == nil || n.Litres.P90 != 293 {
		t.Errorf("NaOH line %+v", n)
	}
	if n.Suggested == nil || n.Suggested.Container != "200 L drum" || n.Suggested.Count != 2 {
		t.Errorf("NaOH bought as %+v, want 2 × 200 L drum", n.Suggested)
	}
	if n.CostP90 == nil || math.Abs(*n.CostP90-201.15) > 1e-6 {
		t.Errorf("NaOH cost %v, want 201.15", n.CostP90)
	}
	// 422 kg per 0.237 t of black mass.
	if math.Abs(n.KgPerTonneBM-1780.59072) > 1e-3 {
		t.Errorf("NaOH per tonne %g", n.KgPerTonneBM)
	}
	if k.Suggested == nil || k.Suggested.Container != "25 kg bag" || k.Suggested.Count != 1 || k.CostP90 != nil {
		t.Errorf("KMnO4 line %+v", k)
	}
	for _, c := range k.Containers {
		if strings.Contains(c.Container, " L ") {
			t.Errorf("a solid offered in %s", c.Container)
		}
	}
	if len(o.NotBought) != 1 || o.NotBought[0] != "O3 (recovery)" {
		t.Errorf("not bought %v", o.NotBought)
	}
	if len(o.Unpriced) != 1 || o.Unpriced[0] != "KMnO4 (recovery)" {
		t.Errorf("unpriced %v", o.Unpriced)
	}
}
