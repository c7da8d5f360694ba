package leach

import (
	"fmt"
	"io/fs"
	"sort"
	"strconv"
	"strings"

	"blackmass/cathode"
	"blackmass/data"
)

type reagentTable map[string][][2]float64 // reagent -> sorted (wt%, density)

// Tables are the leach planner's reference tables: reagent densities, salt solubilities,
// extraction ranges per route, reductants, peroxide loss and lattice oxygen. Load them with
// LoadTables from any fs.FS (data.FS holds the embedded ones; a test can hand in its own), once,
// and pass them down: Plan requires them.
type Tables struct {
	reductants []*Reductant
	loss       []byTemperature // share of a peroxide dose that decomposes
	lattice    []byTemperature // share of the oxides' reduction their own oxygen gives (as O2)
	density    reagentTable
	salts      []salt
	extraction map[cathode.Route]map[string]cathode.Range
	sources    map[string]string // "route/element" -> source
	// elements are the atomic weights and potentials read from the same files.
	elements *cathode.Elements
}

// molarMassG is the molar mass (g/mol) of a formula this package names (an acid, caustic), with
// the tables' atomic weights. Those formulas are constants, so an error is a programming error.
func (lt *Tables) molarMassG(formula string) float64 {
	m, err := lt.MolarMassG(formula)
	if err != nil {
		panic("leach: " + formula + ": " + err.Error())
	}
	return m
}

// Elements returns the atomic weights the tables were read with.
func (lt *Tables) Elements() *cathode.Elements { return lt.elements }

// MolarMassG is the molar mass (g/mol) of a formula with the tables' atomic weights.
func (lt *Tables) MolarMassG(formula string) (float64, error) {
	f, err := lt.elements.ParseFormula(formula)
	if err != nil {
		return 0, err
	}
	return f.MolarMass(lt.elements), nil
}

// LoadTables reads reagents.csv, solubility.csv, extraction.csv, reductants.csv and
// peroxide_loss.csv and lattice_oxygen.csv from fsys.
func LoadTables(fsys fs.FS) (*Tables, error) {
	es, err := cathode.LoadElements(fsys)
	if err != nil {
		return nil, err
	}
	lt := &Tables{elements: es}
	if lt.density, err = readDensities(fsys); err != nil {
		return nil, err
	}
	if lt.salts, err = readSalts(fsys); err != nil {
		return nil, err
	}
	if lt.extraction, lt.sources, err = readExtraction(fsys); err != nil {
		return nil, err
	}
	if lt.reductants, err = LoadReductants(fsTables{fsys}, es); err != nil {
		return nil, err
	}
	if lt.loss, err = readByTemperature(fsys, "peroxide_loss.csv", false); err != nil {
		return nil, err
	}
	if lt.lattice, err = readByTemperature(fsys, "lattice_oxygen.csv", true); err != nil {
		return nil, err
	}
	return lt, nil
}

// readDensities reads reagents.csv: each reagent's density against strength.
func readDensities(fsys fs.FS) (reagentTable, error) {
	t, err := data.ReadTable(fsys, "reagents.csv")
	if err != nil {
		return nil, err
	}
	out := reagentTable{}
	for _, r := range t.Rows {
		w, err := r.Float("wt_pct")
		if err != nil {
			return nil, err
		}
		d, err := r.Float("density_g_per_mL")
		if err != nil {
			return nil, err
		}
		out[r.Str("reagent")] = append(out[r.Str("reagent")], [2]float64{w, d})
	}
	for _, v := range out {
		sort.Slice(v, func(i, j int) bool { return v[i][0] < v[j][0] })
	}
	return out, nil
}

// readSalts reads solubility.csv: each salt's solubility curve, from its columns
// g_per_100g_water_<T>C.
func readSalts(fsys fs.FS) ([]salt, error) {
	st, err := data.ReadTable(fsys, "solubility.csv")
	if err != nil {
		return nil, err
	}
	var out []salt
	for _, r := range st.Rows {
		sl := salt{name: r.Str("salt"), cation: r.Str("cation"), anion: r.Str("anion")}
		for _, col := range st.Header {
			num, ok := strings.CutPrefix(col, solubilityPrefix)
			if !ok || r.Str(col) == "" {
				continue
			}
			degrees, inC := strings.CutSuffix(num, "c") // the table's headers are lower-cased
			tC, err := strconv.ParseFloat(degrees, 64)
			if err != nil || !inC {
				return nil, r.Errorf("column %s: want %s<temperature>C", col, solubilityPrefix)
			}
			g, err := r.Float(col)
			if err != nil {
				return nil, err
			}
			if g <= 0 {
				return nil, r.Errorf("column %s: a solubility must be positive", col)
			}
			sl.curve = append(sl.curve, [2]float64{tC, g})
		}
		if len(sl.curve) == 0 {
			return nil, r.Errorf("%s: no solubility given", sl.name)
		}
		sort.Slice(sl.curve, func(i, j int) bool { return sl.curve[i][0] < sl.curve[j][0] })
		out = append(out, sl)
	}
	return out, nil
}

// readExtraction reads extraction.csv: each route's extraction range per element, and the
// source of each ("route/element").
func readExtraction(fsys fs.FS) (map[cathode.Route]map[string]cathode.Range, map[string]string, error) {
	et, err := data.ReadTable(fsys, "extraction.csv")
	if err != nil {
		return nil, nil, err
	}
	ext, sources := map[cathode.Route]map[string]cathode.Range{}, map[string]string{}
	for _, r := range et.Rows {
		route, err := cathode.ParseRoute(r.Str("route"))
		if err != nil {
			return nil, nil, r.Errorf("%v", err)
		}
		var rg cathode.Range
		if rg.Min, rg.Mode, rg.Max, err = r.Range("", ""); err != nil {
			return nil, nil, err
		}
		if !rg.Valid() || rg.Min < 0 || rg.Max > 1 {
			return nil, nil, r.Errorf("extraction range must be ordered within 0..1")
		}
		if ext[route] == nil {
			ext[route] = map[string]cathode.Range{}
		}
		ext[route][r.Str("element")] = rg
		sources[route.String()+"/"+r.Str("element")] = r.Str("source")
	}
	return ext, sources, nil
}

// byTemperature is a share that applies from a temperature up to the next row's.
type byTemperature struct {
	fromC  float64
	r      cathode.Range
	source string
}

// readByTemperature reads a table of shares by temperature (temperature_min_C, min, mode, max,
// source), sorted by temperature. A share lies in [0, 1), or [0, 1] when upToOne.
func readByTemperature(fsys fs.FS, name string, upToOne bool) ([]byTemperature, error) {
	t, err := data.ReadTable(fsys, name)
	if err != nil {
		return nil, err
	}
	var out []byTemperature
	for _, r := range t.Rows {
		var b byTemperature
		if b.fromC, err = r.Float("temperature_min_C"); err != nil {
			return nil, err
		}
		if b.r.Min, b.r.Mode, b.r.Max, err = r.Range("", ""); err != nil {
			return nil, err
		}
		if b.r.Min < 0 || b.r.Max > 1 {
			return nil, r.Errorf("a share lies from 0 to 1")
		}
		if !upToOne && b.r.Max == 1 {
			return nil, r.Errorf("a share lies from 0 up to, not including, 1")
		}
		b.source = r.Str("source")
		out = append(out, b)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].fromC < out[j].fromC })
	return out, nil
}

// at returns the row of rows that applies at temperature tC.
func at(rows []byTemperature, tC float64) byTemperature {
	out := rows[0]
	for _, l := range rows {
		if tC >= l.fromC {
			out = l
		}
	}
	return out
}

// peroxideLoss returns the decomposed share of a peroxide dose at temperature tC.
func (lt *Tables) peroxideLoss(tC float64) byTemperature { return at(lt.loss, tC) }

// latticeOxygen returns the share of the oxides' reduction their own oxygen gives at tC.
func (lt *Tables) latticeOxygen(tC float64) byTemperature { return at(lt.lattice, tC) }

// Density returns the density of a reagent solution (g/mL) at strength wtPct, interpolated
// linearly in the reagent table; an error if wtPct is outside the table.
func (lt *Tables) Density(reagent string, wtPct float64) (float64, error) {
	pts := lt.density[reagent]
	if len(pts) == 0 {
		return 0, fmt.Errorf("no density table for %s", reagent)
	}
	if wtPct < pts[0][0] || wtPct > pts[len(pts)-1][0] {
		return 0, fmt.Errorf("no density for %s at %g wt%% (table covers %g–%g wt%%)",
			reagent, wtPct, pts[0][0], pts[len(pts)-1][0])
	}
	for i := 1; i < len(pts); i++ {
		if wtPct <= pts[i][0] {
			a, b := pts[i-1], pts[i]
			return a[1] + (wtPct-a[0])/(b[0]-a[0])*(b[1]-a[1]), nil
		}
	}
	return pts[len(pts)-1][1], nil
}
