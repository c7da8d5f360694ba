package value

import (
	"strings"
	"testing"
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
