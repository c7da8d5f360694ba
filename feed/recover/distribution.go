package recover

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"blackmass/data"
)

// Distribution is a user's own distribution table for the extraction: each metal's measured
// distribution ratio D at equilibrium pH points, interpolated linearly in log D against pH. It
// serves other systems than the phosphinic acid of recover_sx.csv (such as cobalt thiocyanate
// into a ketone at bench scale). A metal the table leaves out is not extracted.
type Distribution struct {
	File   string
	points map[string][][2]float64 // metal -> sorted (pH, log10 D)
	lines  map[string]int          // metal -> its first line
}

// ParseDistribution reads a distribution table: a header metal,ph,d then one row per point. A
// metal needs two points or more at distinct pH; D is positive. Errors name file, line and field.
func ParseDistribution(r io.Reader, name string) (*Distribution, error) {
	cr := data.NewCSVReader(data.SkipBOM(data.CapBytes(r, data.MaxTableBytes)), ',')
	head, err := cr.Read()
	if err != nil {
		return nil, &FlowsheetError{File: name, Line: 1, Err: errors.New("want a header metal,ph,d and a row per point")}
	}
	col := map[string]int{}
	for i, h := range head {
		col[strings.ToLower(strings.TrimSpace(h))] = i
	}
	for _, c := range []string{"metal", "ph", "d"} {
		if _, ok := col[c]; !ok {
			return nil, &FlowsheetError{File: name, Line: 1, Field: c, Err: errors.New("missing column (want metal, ph, d)")}
		}
	}
	d := &Distribution{File: name, points: map[string][][2]float64{}, lines: map[string]int{}}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, &FlowsheetError{File: name, Line: data.ErrorLine(pe), Err: pe.Err}
			}
			return nil, &FlowsheetError{File: name, Err: err}
		}
		line, _ := cr.FieldPos(0)
		get := func(c string) string {
			if i := col[c]; i < len(rec) {
				return strings.TrimSpace(rec[i])
			}
			return ""
		}
		m := get("metal")
		if _, ok := ionSlot[m]; !ok {
			return nil, &FlowsheetError{File: name, Line: line, Field: "metal", Err: fmt.Errorf("%q: want one of Fe3, Fe2, Al, Cu, Mn, "+
				"Co, Ni, Zn, Mg, Ca, Li, Na", m)}
		}
		pH, err := data.ParseDecimal(get("ph"))
		if err != nil || pH < -1 || pH > 14 {
			return nil, &FlowsheetError{File: name, Line: line, Field: "ph", Err: fmt.Errorf("%q: want a pH from -1 to 14", get("ph"))}
		}
		v, err := data.ParseDecimal(get("d"))
		if err != nil || !(v > 0) {
			return nil, &FlowsheetError{File: name, Line: line, Field: "d", Err: fmt.Errorf("%q: want a positive ratio", get("d"))}
		}
		if _, ok := d.lines[m]; !ok {
			d.lines[m] = line
		}
		for _, p := range d.points[m] {
			if p[0] == pH {
				return nil, &FlowsheetError{File: name, Line: line, Field: "ph", Err: fmt.Errorf("%s at pH %g twice", m, pH)}
			}
		}
		d.points[m] = append(d.points[m], [2]float64{pH, math.Log10(v)})
	}
	if len(d.points) == 0 {
		return nil, &FlowsheetError{File: name, Err: errors.New("no points")}
	}
	for m, pts := range d.points {
		if len(pts) < 2 {
			return nil, &FlowsheetError{File: name, Line: d.lines[m], Field: "ph",
				Err: fmt.Errorf("%s has one point: give two or more, around the extraction's pH", m)}
		}
		sort.Slice(pts, func(i, j int) bool { return pts[i][0] < pts[j][0] })
	}
	return d, nil
}

// ionSlot are the metals an extraction table may name.
var ionSlot = map[string]bool{"Fe3": true, "Fe2": true, "Al": true, "Cu": true, "Mn": true, "Co": true, "Ni": true,
	"Zn": true, "Mg": true, "Ca": true, "Li": true, "Na": true}

// check refuses a stage pH outside a metal's measured points: a gap the table does not cover.
func (d *Distribution) check(pH float64) error {
	for _, m := range sortedKeys(d.points) {
		pts := d.points[m]
		if pH < pts[0][0] || pH > pts[len(pts)-1][0] {
			return &FlowsheetError{File: d.File, Line: d.lines[m], Field: "ph", Err: fmt.Errorf("%s is measured from pH %g to %g: "+
				"the extraction at pH %g lies outside; add points", m, pts[0][0], pts[len(pts)-1][0], pH)}
		}
	}
	return nil
}

// ratio is D of metal m at pH (0 for a metal the table leaves out).
func (d *Distribution) ratio(m string, pH float64) float64 {
	pts, ok := d.points[m]
	if !ok {
		return 0
	}
	for i := 1; i < len(pts); i++ {
		if pH <= pts[i][0] {
			f := (pH - pts[i-1][0]) / (pts[i][0] - pts[i-1][0])
			return math.Pow(10, pts[i-1][1]+f*(pts[i][1]-pts[i-1][1]))
		}
	}
	return math.Pow(10, pts[len(pts)-1][1])
}
