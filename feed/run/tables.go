package run

import (
	"io/fs"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/leach"
	"blackmass/feed/lot"
	"blackmass/feed/recover"
)

// Tables are every reference table an estimate uses, loaded together from one fs.FS: the
// chemistry catalogue (with the priors and family labels), the cell and black-mass model, and the
// leach planner's tables. DefaultTables are the embedded ones; a test or a bench with its own data
// loads its own with LoadTables and passes them in. The atomic weights are the CIAAW standard and stay the package's own
// (cathode.DefaultElements).
type Tables struct {
	Catalogue *cathode.Catalogue
	Model     *lot.Model
	Leach     *leach.Tables
	Recover   *recover.Tables
}

// LoadTables reads every table from fsys.
func LoadTables(fsys fs.FS) (*Tables, error) {
	cat, err := cathode.LoadCatalogue(fsys)
	if err != nil {
		return nil, err
	}
	m, err := lot.LoadModel(fsys)
	if err != nil {
		return nil, err
	}
	lt, err := leach.LoadTables(fsys)
	if err != nil {
		return nil, err
	}
	rt, err := recover.LoadTables(fsys)
	if err != nil {
		return nil, err
	}
	return &Tables{Catalogue: cat, Model: m, Leach: lt, Recover: rt}, nil
}

// DefaultTables reads the embedded tables. It reads them afresh at each call: a command calls it
// once at the top and passes the tables down.
func DefaultTables() (*Tables, error) { return LoadTables(data.FS) }
