package cathode

import (
	"fmt"
	"io/fs"
	"slices"
	"sort"
	"sync"

	"blackmass/data"
)

// Exact SI defining constants (CODATA 2018, SI 2019).
const (
	ElementaryChargeC = 1.602176634e-19 // C
	AvogadroPerMol    = 6.02214076e23   // 1/mol
)

// FaradayCPerMol is the Faraday constant in C/mol, e·N_A = 96485.33212... (exact).
const FaradayCPerMol = ElementaryChargeC * AvogadroPerMol

// FaradayAhPerMol is the Faraday constant in Ah/mol (F/3600).
const FaradayAhPerMol = FaradayCPerMol / 3600

// Element is one row of the atomic-weight table.
type Element struct {
	Symbol            string
	Name              string
	Number            int
	WeightGPerMol     float64 // standard or conventional atomic weight, g/mol
	Kind              string  // "standard" or "conventional"
	Source            string
	StandardPotential float64 // E° of M(n+)/M in V, if HasPotential
	HasPotential      bool
}

// Elements is a table of elements keyed by symbol.
type Elements struct {
	bySymbol map[string]*Element
}

// LoadElements reads atomic_weights.csv and potentials.csv from fsys.
func LoadElements(fsys fs.FS) (*Elements, error) {
	t, err := data.ReadTable(fsys, "atomic_weights.csv")
	if err != nil {
		return nil, err
	}
	es := &Elements{bySymbol: map[string]*Element{}}
	for _, r := range t.Rows {
		w, err := r.Float("atomic_weight_g_per_mol")
		if err != nil {
			return nil, err
		}
		z, err := r.Float("atomic_number")
		if err != nil {
			return nil, err
		}
		if w <= 0 {
			return nil, r.Errorf("atomic weight must be positive")
		}
		sym := r.Str("symbol")
		if !validSymbol(sym) {
			return nil, r.Errorf("symbol %q is not an element symbol", sym)
		}
		if _, dup := es.bySymbol[sym]; dup {
			return nil, r.Errorf("duplicate element %s", sym)
		}
		es.bySymbol[sym] = &Element{Symbol: sym, Name: r.Str("name"), Number: int(z), WeightGPerMol: w, Kind: r.Str("kind"), Source: r.Str("source")}
	}
	p, err := data.ReadTable(fsys, "potentials.csv")
	if err != nil {
		return nil, err
	}
	for _, r := range p.Rows {
		e, ok := es.bySymbol[r.Str("symbol")]
		if !ok {
			return nil, r.Errorf("potential for %q, which has no atomic weight", r.Str("symbol"))
		}
		if e.StandardPotential, err = r.Float("standard_potential_V"); err != nil {
			return nil, err
		}
		e.HasPotential = true
	}
	return es, nil
}

func validSymbol(s string) bool {
	if len(s) < 1 || len(s) > 2 || s[0] < 'A' || s[0] > 'Z' {
		return false
	}
	return len(s) == 1 || (s[1] >= 'a' && s[1] <= 'z')
}

// Lookup returns the element with the symbol, or nil.
func (es *Elements) Lookup(symbol string) *Element { return es.bySymbol[symbol] }

// Weight returns the atomic weight of symbol in g/mol. It panics for a symbol not in the table:
// callers pass symbols that came out of a parsed formula or a constant of this package.
func (es *Elements) Weight(symbol string) float64 {
	e := es.bySymbol[symbol]
	if e == nil {
		panic(fmt.Sprintf("cathode: no atomic weight for %q", symbol))
	}
	return e.WeightGPerMol
}

var defaultElements = sync.OnceValues(func() (*Elements, error) { return LoadElements(data.FS) })

// DefaultElements returns the element table embedded in the program. The embedded table is
// checked by the tests, so an error here is a build defect.
func DefaultElements() *Elements {
	es, err := defaultElements()
	if err != nil {
		panic("cathode: embedded atomic weights: " + err.Error())
	}
	return es
}

// DisplayOrder is the order elements are shown in: the metals a recycler is paid for first, then
// the rest of the black mass.
var DisplayOrder = []string{"Li", "Co", "Ni", "Mn", "Al", "Fe", "Cu", "Na", "P", "F", "C", "O", "H"}

// SortForDisplay returns the symbols in DisplayOrder, others after them alphabetically.
func SortForDisplay(els []string) []string {
	rank := func(s string) int {
		if i := slices.Index(DisplayOrder, s); i >= 0 {
			return i
		}
		return len(DisplayOrder)
	}
	out := slices.Clone(els)
	sort.SliceStable(out, func(i, j int) bool {
		if rank(out[i]) != rank(out[j]) {
			return rank(out[i]) < rank(out[j])
		}
		return out[i] < out[j]
	})
	return out
}
