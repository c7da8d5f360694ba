package lot

import (
	"blackmass/cathode"
	"blackmass/feed/dist"
	"errors"
	"fmt"
	"slices"
	"sync"
)

// Samples holds every Monte Carlo draw of the lot's black mass, by compound (kg), so that later
// stages (the leach plan, the value) reuse the same draws.
type Samples struct {
	N         int
	Compounds [][]float64 // [compound][sample] kg
	Elements  [][]float64 // [element][sample] kg
	BlackMass []float64   // [sample] kg
	// Formulas name the compounds of Compounds, ElementNames the elements of Elements.
	Formulas     []string
	ElementNames []string
	// Draws gives later stages their own parameters from the run's seeded streams.
	Draws    *dist.Drawer
	comp     *compounds
	groupCAM []dist.Stat // [group] kg, summarised as each group is drawn
	groupBM  []dist.Stat
	groupEl  []map[string]dist.Stat // [group] element → kg
}

// FactorKey names one factor on what reaches the black mass: an element from the lines of one
// (chemistry, format) group.
type FactorKey struct{ Element, Chemistry, Format string }

// Factors gives, for each key, a factor per sample ([key][sample], or a one-element slice per key
// when the drawer has no samples), drawn from the drawer's seeded streams. A calibration supplies
// them; the Monte Carlo multiplies each sample's kg of an element from a group by its factor.
type Factors func(keys []FactorKey, d *dist.Drawer) [][]float64

// Result is the lot's part of a report: what the manifest lists, the black mass, its elements
// and compounds, the groups, labels and lines, with the model's parameters and warnings.
type Result struct {
	Lot         LotSummary
	BlackMassKg dist.Stat
	Elements    map[string]dist.Amount
	Compounds   map[string]dist.Amount
	Groups      []GroupResult
	Labels      []LabelResolution
	// Lines is every kept line's detail from Estimate; EstimateWith leaves it nil and gives the
	// same detail in Kept, made as it is read (nil without kept lines).
	Lines        []LineResult
	Kept         *Lines
	Parameters   []dist.Param
	Warnings     []string
	ElementOrder []string
	// ModeKWh is the lot's most likely nameplate energy, lines known by weight only included.
	ModeKWh float64
	// NonLithium lists the lines of batteries that are not lithium-ion, kept out of the black mass.
	NonLithium []NonLithiumLine
}

// MinSamples and MaxSamples bound the Monte Carlo's sample count: from 10, for any percentiles
// at all, to 200,000, beyond which memory grows for no better percentiles.
const (
	MinSamples = 10
	MaxSamples = 200_000
)

// Estimate runs the Monte Carlo over the lot's groups with the seed given and summarises the
// draws: the lot's part of the report, and the draws themselves for the later stages. With kept
// lines, Result.Lines holds every line's detail.
func (l *Lot) Estimate(seed uint64, samples int) (*Result, *Samples, error) {
	r, s, err := l.EstimateWith(seed, samples, nil)
	if err == nil && r.Kept != nil {
		r.Lines = make([]LineResult, 0, r.Kept.Len())
		for _, ln := range r.Kept.All() {
			r.Lines = append(r.Lines, ln)
		}
	}
	return r, s, err
}

// EstimateWith is Estimate with factors on what reaches the black mass, per element and group
// (nil: none). The factors scale the elements (and so their wt%, the value and the groups'
// elements); the compounds, the black mass and the leach that reuses them stay as modelled.
func (l *Lot) EstimateWith(seed uint64, samples int, f Factors) (*Result, *Samples, error) {
	if samples < MinSamples || samples > MaxSamples {
		return nil, nil, fmt.Errorf("samples must be from %d to %d, got %d", MinSamples, MaxSamples, samples)
	}
	if l.nLines == 0 && len(l.nonLithium) > 0 {
		return nil, nil, errors.New("the lot has no lithium-ion lines, only batteries that are not lithium-ion: no black mass to estimate")
	}
	if l.nLines == 0 {
		return nil, nil, errors.New("the lot has no lines")
	}
	ps := newParamSet(l.model, seed, samples)
	s := l.draw(ps, samples, l.factorDraws(f, ps.d))
	// Later stages draw their own parameters from a drawer of the same seed (a stream is named
	// by its key, so the draws are the same), and the lot's own draws are let go.
	s.Formulas, s.ElementNames, s.Draws = l.comp.formulas, l.comp.elements, dist.NewDrawer(seed, samples)
	return l.result(s), s, nil
}

// draw runs the Monte Carlo: n samples of every group's black mass by compound, then the
// elements. Its cost is groups × samples, whatever the number of lines.
//
// Each group's elements are summed sample by sample for the group's own summary; with factors
// (fac[group][element][sample]) the lot's elements are those sums times the factors, otherwise
// they follow from the lot's compounds.
func (l *Lot) draw(ps *paramSet, n int, fac [][][]float64) *Samples {
	nc := l.comp.n()
	ne := len(l.comp.elements)
	s0 := make([][]float64, ne) // one group's elements, [element][sample] kg
	for e := range s0 {
		s0[e] = make([]float64, n)
	}
	s := &Samples{N: n, comp: l.comp, Compounds: make([][]float64, nc), BlackMass: make([]float64, n)}
	for c := range s.Compounds {
		s.Compounds[c] = make([]float64, n)
	}
	cam, gbm := make([]float64, n), make([]float64, n) // one group's, summarised before the next
	for _, g := range l.order {
		gd := groupDraws{g: g, s: s, s0: s0, cam: cam, gbm: gbm, ps: ps}
		gd.volt, gd.capa = ps.chemDraws(g.chem)
		shares := ps.shareDraws(g.chem, g.chem.Key+"/"+g.format.String(), g.items)
		gd.mo = ps.massOnlyDraws(g)
		gd.arealLo, gd.arealHi = ps.arealBounds(g.chem, g.format)
		gd.chemAreal = ps.chemAreal(g.chem)
		gd.fd = ps.format(g.format)
		// Only the group's own compounds can be non-zero: the fixed ones and its cathodes. Summing
		// just those keeps the cost per group independent of how many chemistries the lot holds.
		gd.touched = append(fixedIndices(), g.camIdx...)
		gd.terms = l.elementTerms(gd.touched)
		for _, t := range gd.terms {
			clear(s0[t.e])
		}
		// The shares are one stream, drawn in turn a block at a time (the next block while this
		// one is modelled); a block's samples are modelled side by side, each writing only its
		// own entries.
		k := len(g.chem.MeanShares())
		bufs := [2][]float64{make([]float64, min(n, shareBlock)*k), make([]float64, min(n, shareBlock)*k)}
		fill := func(buf []float64, b0 int) {
			for i := b0; i < min(b0+shareBlock, n); i++ {
				copy(buf[(i-b0)*k:(i-b0+1)*k], shares.next())
			}
		}
		fill(bufs[0], 0)
		for b0, j := 0, 0; b0 < n; b0, j = b0+shareBlock, 1-j {
			b1 := min(b0+shareBlock, n)
			var next sync.WaitGroup
			if b1 < n {
				next.Go(func() { fill(bufs[1-j], b1) })
			}
			dist.Split(b1-b0, func(lo, hi int) { gd.model(bufs[j], b0, b0+lo, b0+hi, k) })
			next.Wait()
		}
		s.groupCAM, s.groupBM = append(s.groupCAM, dist.Summarise(cam)), append(s.groupBM, dist.Summarise(gbm))
		s.groupEl = append(s.groupEl, l.groupElements(s, s0, gd.terms, fac))
	}
	for c, fr := range l.comp.fractions {
		for i, m := range s.Compounds[c] {
			s.BlackMass[i] += m
			if fac != nil {
				continue
			}
			for e, f := range fr {
				if f != 0 {
					s.Elements[e][i] += m * f
				}
			}
		}
	}
	return s
}

// shareBlock is how many samples' shares are drawn before they are modelled.
const shareBlock = 16384

// groupDraws is what one group's samples are modelled from, and where they go.
type groupDraws struct {
	g                *group
	s                *Samples
	s0               [][]float64
	cam, gbm         []float64
	ps               *paramSet
	volt, capa       [][]float64
	mo               massOnly
	arealLo, arealHi float64
	chemAreal        []float64
	fd               *formatDraws
	touched          []int
	terms            []term
}

// model models the group's samples lo to hi of the block that starts at b0, whose shares are
// shares ([sample−b0][component], k components).
func (gd *groupDraws) model(shares []float64, b0, lo, hi, k int) {
	g, s, ps := gd.g, gd.s, gd.ps
	bm := make([]float64, s.comp.n())
	for i := lo; i < hi; i++ {
		for _, c := range gd.touched {
			bm[c] = 0
		}
		sh, fr, gl := shares[(i-b0)*k:(i-b0+1)*k], gd.fd.at(i), ps.global(i)
		if gd.chemAreal != nil {
			fr.arealMAhCm2 = gd.chemAreal[i]
		}
		mx := mixAt(g.chem.Components, sh, gd.volt, gd.capa, i)
		b := model(max(g.energyWh-g.weighedWh, 0)+gd.mo.wh(i, sh), max(g.chargeAh-g.weighedAh, 0), mx, fr, gl)
		b.blackMass(bm, fr, gl, g.camIdx, sh)
		if g.weighedKg > 0 { // the weighed lines: their design fitted to their weight
			fw := weighed(g.weighedWh, g.weighedAh, mx, fr, gl, g.weighedKg*1000, gd.arealLo, gd.arealHi)
			bw := model(g.weighedWh, g.weighedAh, mx, fw, gl)
			bw.blackMass(bm, fw, gl, g.camIdx, sh)
			b.cam += bw.cam
		}
		tot := 0.0
		for _, c := range gd.touched {
			m := bm[c] / 1000
			s.Compounds[c][i] += m
			tot += m
		}
		gd.cam[i], gd.gbm[i] = b.cam/1000, tot
		for _, t := range gd.terms {
			gd.s0[t.e][i] += bm[t.c] / 1000 * t.f
		}
	}
}

// term is one element of one compound: kg of element e per kg of compound c.
type term struct {
	c, e int
	f    float64
}

// elementTerms lists the non-zero element fractions of the compounds given.
func (l *Lot) elementTerms(cs []int) []term {
	var out []term
	for _, c := range cs {
		for e, f := range l.comp.fractions[c] {
			if f != 0 {
				out = append(out, term{c, e, f})
			}
		}
	}
	return out
}

// groupElements summarises one group's elements (s0, [element][sample] kg) and, with factors
// (fac[group][element][sample]), adds them times their factors to the lot's elements.
func (l *Lot) groupElements(s *Samples, s0 [][]float64, terms []term, fac [][][]float64) map[string]dist.Stat {
	if s.Elements == nil {
		s.Elements = make([][]float64, len(l.comp.elements))
		for e := range s.Elements {
			s.Elements[e] = make([]float64, s.N)
		}
	}
	gi := len(s.groupEl)
	var es []int // the group's elements, each once
	for _, t := range terms {
		if !slices.Contains(es, t.e) {
			es = append(es, t.e)
		}
	}
	stats := make([]dist.Stat, len(es))
	dist.Each(len(es), func(k int) { stats[k] = dist.Summarise(s0[es[k]]) })
	out := make(map[string]dist.Stat, len(es))
	for k, e := range es {
		out[l.comp.elements[e]] = stats[k]
		if fac == nil {
			continue
		}
		f := fac[gi][e]
		for i, kg := range s0[e] {
			s.Elements[e][i] += kg * f[i%len(f)]
		}
	}
	return out
}

// factorDraws draws the factors of every (element, group) of the lot, [group][element][sample];
// nil without factors.
func (l *Lot) factorDraws(f Factors, d *dist.Drawer) [][][]float64 {
	if f == nil {
		return nil
	}
	ne := len(l.comp.elements)
	keys := make([]FactorKey, 0, len(l.order)*ne)
	for _, g := range l.order {
		for _, el := range l.comp.elements {
			keys = append(keys, FactorKey{Element: el, Chemistry: g.chem.Key, Format: g.format.String()})
		}
	}
	draws := f(keys, d)
	out := make([][][]float64, len(l.order))
	for gi := range out {
		out[gi] = draws[gi*ne : (gi+1)*ne]
	}
	return out
}

// result summarises the draws with the lot's counts, labels and warnings.
func (l *Lot) result(s *Samples) *Result {
	r := &Result{Elements: map[string]dist.Amount{}, Compounds: map[string]dist.Amount{}, Kept: l.keptLines(),
		Warnings: append([]string(nil), l.warnings...), ModeKWh: l.modeWh / 1000,
		NonLithium: l.NonLithium()}
	r.Lot = LotSummary{Lines: l.nLines, Items: l.items, Cells: l.cells, NameplateKWh: dist.Round(l.energyWh/1000, 6),
		ChargeOnlyAh: dist.Round(l.chargeAh, 6), LinesWithMass: l.withMass, LinesFlaggedByMass: l.flagged,
		LinesByMassOnly: l.massOnly, MassOnlyKg: dist.Round(l.massOnlyKg, 6)}
	r.Labels = l.Labels()
	if l.modeWh > 0 {
		r.Lot.UnknownShareOfKWh = dist.Round(l.unknownWh/l.modeWh, 6)
	}
	r.Warnings = append(r.Warnings, l.lotWarnings(r)...)
	r.BlackMassKg = dist.Summarise(s.BlackMass)
	// Each summary reads its own draws: they are made side by side, then filed in order.
	ne := len(l.comp.elements)
	amounts, present := make([]dist.Amount, ne+len(l.comp.names)), make([]bool, ne+len(l.comp.names))
	dist.Each(len(amounts), func(k int) {
		var x []float64
		if k < ne {
			x = s.Elements[k]
		} else {
			x = s.Compounds[k-ne]
		}
		if present[k] = k < ne || slices.Max(x) > 0; present[k] {
			amounts[k] = dist.AmountOf(x, s.BlackMass)
		}
	})
	for e, sym := range l.comp.elements {
		r.Elements[sym] = amounts[e]
	}
	for c, name := range l.comp.names {
		if present[ne+c] {
			r.Compounds[name] = amounts[ne+c]
		}
	}
	for gi, g := range l.order {
		var keys []string
		for _, c := range g.chem.Components {
			keys = append(keys, c.Entry.Key)
		}
		r.Groups = append(r.Groups, GroupResult{Chemistry: g.chem.Key, Components: keys, Format: g.format.String(), Lines: g.lines, Items: g.items,
			NameplateKWh: dist.Round(g.energyWh/1000, 6), ChargeOnlyAh: dist.Round(g.chargeAh, 6), MassOnlyKg: dist.Round(g.massOnlyKg, 6),
			CathodeKg: s.groupCAM[gi], BlackMassKg: s.groupBM[gi], ElementsKg: s.groupEl[gi]})
	}
	r.Parameters = l.parameters()
	r.ElementOrder = cathode.SortForDisplay(l.comp.elements)
	return r
}

// lotWarnings are the warnings about the lot as a whole.
func (l *Lot) lotWarnings(r *Result) []string {
	var w []string
	if l.flagged > maxLineWarnings {
		w = append(w, fmt.Sprintf("… and %d more lines whose measured mass disagrees with the nameplate (see lines_flagged_by_mass)", l.flagged-maxLineWarnings))
	}
	if r.Lot.UnknownShareOfKWh > 0 {
		w = append(w, fmt.Sprintf("%.1f %% of the lot's energy is of unknown chemistry: its metals come from the prior for each item and carry the widest uncertainty", 100*r.Lot.UnknownShareOfKWh))
	}
	if l.massOnly > 0 {
		w = append(w, fmt.Sprintf("%d lines (%.4g kg) give a mass and no capacity: their energy comes from the chemistry's plausible Wh/kg band, drawn across its whole width", l.massOnly, l.massOnlyKg))
	}
	for _, lb := range r.Labels {
		if lb.Unrecognised {
			w = append(w, fmt.Sprintf("label %q (%d lines, %.1f %% of the energy) was not recognised and is treated as unknown", lb.Label, lb.Lines, 100*lb.EnergyShare))
		}
	}
	if l.chargeAh > 0 {
		w = append(w, fmt.Sprintf("%.0f Ah were given without a voltage: the cathode mass of those lines uses charge over capacity (no voltage needed), their Wh uses the chemistry's nominal voltage", l.chargeAh))
	}
	return w
}

// parameters lists the model parameters and the chemistry parameters of the lot's chemistries.
func (l *Lot) parameters() []dist.Param {
	var out []dist.Param
	for _, p := range l.model.list {
		out = append(out, dist.Param{Scope: p.Scope, Name: p.Name, Min: p.Range.Min, Mode: p.Range.Mode, Max: p.Range.Max, Unit: p.Unit, Source: p.Source})
	}
	for _, e := range l.comp.entries {
		if e == nil {
			continue
		}
		sc := "chemistry " + e.Key
		out = append(out,
			dist.Param{Scope: sc, Name: "nominal_voltage", Min: e.VoltageV.Min, Mode: e.VoltageV.Mode, Max: e.VoltageV.Max, Unit: "V", Source: e.Source},
			dist.Param{Scope: sc, Name: "practical_capacity", Min: e.CapacityMAhPerG.Min, Mode: e.CapacityMAhPerG.Mode, Max: e.CapacityMAhPerG.Max, Unit: "mAh/g", Source: e.Source})
	}
	return out
}
