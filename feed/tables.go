package feed

import (
	"io/fs"
	"sync"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/leach"
)

// Tables are every reference table an estimate uses, loaded together from one fs.FS: the
// chemistry catalogue (with the priors and family labels), the cell and black-mass model, and the
// leach planner's tables. DefaultTables are the embedded ones; a test or a bench with its own data
// loads its own with LoadTables and passes them in (NewLot takes the model, EstimateOptions the
// leach tables). The atomic weights are the CIAAW standard and stay the package's own
// (cathode.DefaultElements).
type Tables struct {
	Catalogue *cathode.Catalogue
	Model     *Model
	Leach     *leach.Tables
}

// LoadTables reads every table from fsys.
func LoadTables(fsys fs.FS) (*Tables, error) {
	cat, err := cathode.LoadCatalogue(fsys)
	if err != nil {
		return nil, err
	}
	m, err := LoadModel(fsys)
	if err != nil {
		return nil, err
	}
	lt, err := leach.LoadTables(fsys)
	if err != nil {
		return nil, err
	}
	return &Tables{Catalogue: cat, Model: m, Leach: lt}, nil
}

var defaultTables = sync.OnceValues(func() (*Tables, error) { return LoadTables(data.FS) })

// DefaultTables returns the embedded tables (read once; the catalogue is shared, so extend a
// copy: cathode.DefaultCatalogue).
func DefaultTables() (*Tables, error) { return defaultTables() }
