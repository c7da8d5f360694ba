package lot

import (
	"fmt"
	"iter"
	"math"
	"slices"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/manifest"
)

// LineResult is one manifest line with its parsed values and its most likely masses: every
// parameter at its mode, so they need not sum to the lot's P50 (a percentile of a sum is not the
// sum of percentiles). The lot's distributions are in Report.Elements and Report.BlackMassKg.
type LineResult struct {
	Line            int           `json:"line"`
	ID              string        `json:"id"`
	Description     string        `json:"description,omitempty"`
	ChemistryLabel  string        `json:"chemistry_label"`
	Chemistry       string        `json:"chemistry"`
	Unknown         bool          `json:"unknown_chemistry"`
	Format          string        `json:"format"`
	Count           int           `json:"count"`
	CellsPerItem    int           `json:"cells_per_item"`
	CapacityText    string        `json:"capacity_as_typed"`
	CapacityGiven   string        `json:"capacity"`       // as read, in Wh or Ah
	CapacityBasis   string        `json:"capacity_basis"` // cell or pack
	VoltageV        float64       `json:"voltage_V,omitempty"`
	Application     string        `json:"application,omitempty"`
	EnergyWhPerItem float64       `json:"energy_Wh_per_item"`
	EnergyAssumed   bool          `json:"energy_uses_assumed_voltage"`
	EnergyFromMass  bool          `json:"energy_from_mass,omitempty"`
	ChargeAhPerItem float64       `json:"charge_Ah_per_item,omitempty"`
	ModelMassKgEach float64       `json:"modelled_mass_kg_per_item"`
	MeasuredMassKg  float64       `json:"measured_mass_kg_per_item,omitempty"`
	MeasuredWhPerKg float64       `json:"measured_Wh_per_kg,omitempty"`
	CathodeKg       float64       `json:"cathode_active_kg_most_likely"`
	BlackMassKg     float64       `json:"black_mass_kg_most_likely"`
	ElementsKg      ElementMasses `json:"elements_kg_most_likely"`
	Flags           []string      `json:"flags,omitempty"`
	Notes           string        `json:"notes,omitempty"`
}

type groupKey struct {
	chem   string
	format manifest.Format
}

// ptrKey finds a group from the parser's resolved chemistry without hashing its name.
type ptrKey struct {
	chem   *cathode.Chemistry
	format manifest.Format
}

// maxLineWarnings caps the per-line mass warnings; the count of flagged lines is always exact.
const maxLineWarnings = 50

// group is the lines of one (chemistry, format): only sums are kept, so the Monte Carlo costs
// groups × samples.
type group struct {
	chem       *cathode.Chemistry
	format     manifest.Format
	energyWh   float64 // Σ count·energy per item
	chargeAh   float64 // Σ count·charge per item (lines given in Ah with no voltage)
	massOnlyKg float64 // Σ count·mass of lines known by weight only
	// The lines weighed inside their plausible band: Σ count·energy, count·charge and
	// count·mass. Their cells are modelled at the areal capacity that gives the weight.
	weighedWh, weighedAh, weighedKg float64
	items                           int
	cells                           int
	lines                           int
	camIdx                          []int
	modeMix                         mix     // the chemistry at its most likely capacity and voltage
	bandLo                          float64 // plausible Wh/kg band of an item
	bandHi                          float64
	modeWhPerKg                     float64 // most likely Wh/kg of an item, for lines known by weight only
	// The group's cell design at every parameter's mode and the areal capacities its weighed
	// lines may take, set when the lot's lines are read (keptLines).
	modeDesign                   design
	arealLoMAhCm2, arealHiMAhCm2 float64
	// lastLabel and lastStat are the label of the group's previous line and its count: lines
	// of a group mostly repeat one label, and comparing the strings (often one and the same
	// string) is cheaper than hashing it.
	lastLabel string
	lastStat  *labelStat
}

// Lot accumulates manifest lines. Add them with Add, then call Estimate.
type Lot struct {
	model      *Model
	mode       *paramSet // every parameter at its most likely value
	keepLines  bool
	groups     map[groupKey]*group
	byPtr      map[ptrKey]*group
	recent     [recentGroups]recentGroup
	nextRecent int
	order      []*group
	kept       [][]keptLine // the kept lines as added, in chunks of lineChunk: no copy of all lines as they grow
	// The elements by symbol and which are metals, for the lines' detail (elementOrder).
	elOrder    []int
	elMetal    []bool
	modeGlobal globals // the global parameters at their modes, for the lines' detail
	warnings   []string
	warned     map[string]bool
	comp       *compounds
	nLines     int
	items      int
	cells      int
	energyWh   float64
	chargeAh   float64
	unknownWh  float64
	flagged    int
	withMass   int
	massOnly   int
	massOnlyKg float64
	modeWh     float64 // Σ most likely energy, including lines known by weight only
	labels     map[string]*labelStat
	labelList  []*labelStat
	nonLithium []NonLithiumLine // lines of batteries that are not lithium-ion, by kind
}

// labelStat counts one label's lines and most likely energy.
type labelStat struct {
	LabelResolution
	modeWh float64
}

// NewLot starts an empty lot. With keepLines, each line's detail is kept for the report.
func NewLot(m *Model, keepLines bool) *Lot {
	return &Lot{model: m, mode: newParamSet(m, 0, 0), keepLines: keepLines, groups: map[groupKey]*group{}, byPtr: map[ptrKey]*group{},
		warned: map[string]bool{}, comp: newCompounds(), labels: map[string]*labelStat{}}
}

func (l *Lot) warnOnce(key, msg string) {
	if !l.warned[key] {
		l.warned[key] = true
		l.warnings = append(l.warnings, msg)
	}
}

// group returns the group of (chemistry, format), creating it on first use. Labels spelled
// differently that resolve to the same chemistry share a group.
func (l *Lot) group(ch *cathode.Chemistry, f manifest.Format) *group {
	pk := ptrKey{ch, f}
	// A lot holds a few (chemistry, format) pairs: comparing pointers with the recent ones is
	// cheaper than hashing.
	for i := range l.recent {
		if l.recent[i].key == pk {
			return l.recent[i].g
		}
	}
	if g, ok := l.byPtr[pk]; ok {
		l.remember(pk, g)
		return g
	}
	k := groupKey{ch.Key, f}
	g := l.groups[k]
	if g == nil {
		g = &group{chem: ch, format: f}
		for _, c := range ch.Components {
			g.camIdx = append(g.camIdx, l.comp.cathode(c.Entry))
		}
		g.modeMix = l.modeMix(ch)
		g.bandLo, g.bandHi = l.band(ch, f)
		g.modeWhPerKg = l.modeWhPerKg(ch, f)
		l.groups[k] = g
		l.order = append(l.order, g)
		for _, n := range ch.Notes {
			l.warnOnce("note "+n, n)
		}
	}
	l.byPtr[pk] = g
	l.remember(pk, g)
	return g
}

// recentGroups is how many (chemistry, format) pairs group compares before hashing.
const recentGroups = 8

// remember puts a pair among the recent ones, replacing them in turn.
func (l *Lot) remember(pk ptrKey, g *group) {
	l.recent[l.nextRecent] = recentGroup{pk, g}
	l.nextRecent = (l.nextRecent + 1) % recentGroups
}

// recentGroup is a pair group found lately.
type recentGroup struct {
	key ptrKey
	g   *group
}

// MaxGroups bounds the distinct (chemistry, format) pairs of a lot: the Monte Carlo costs groups
// × samples, and no real lot holds more than a few dozen.
const MaxGroups = 1000

// Add takes one manifest line. Its cost does not depend on the number of samples, and without
// per-line detail it keeps nothing of the line but sums.
func (l *Lot) Add(ln manifest.Line) error {
	if ln.NonLithium != nil { // not lithium-ion: counted and weighed apart, no black mass
		l.addNonLithium(ln, ln.NonLithium)
		return nil
	}
	ch := ln.Chemistry
	if len(l.order) >= MaxGroups {
		if _, ok := l.byPtr[ptrKey{ch, ln.Format}]; !ok {
			if _, ok := l.groups[groupKey{ch.Key, ln.Format}]; !ok {
				return fmt.Errorf("more than %d distinct chemistries and formats in one lot; split the manifest or use fewer labels", MaxGroups)
			}
		}
	}
	g := l.group(ch, ln.Format)
	cnt := float64(ln.Count)
	g.energyWh += cnt * ln.EnergyWh
	g.chargeAh += cnt * ln.ChargeAh
	g.items += ln.Count
	cells := ln.CellsPerItem * ln.Count
	g.cells += cells
	g.lines++
	l.nLines++
	l.items += ln.Count
	l.cells += cells
	l.energyWh += cnt * ln.EnergyWh
	l.chargeAh += cnt * ln.ChargeAh
	mx := g.modeMix
	energyWh := ln.EnergyWh
	switch {
	case ln.MassOnly():
		g.massOnlyKg += cnt * ln.MassKg
		l.massOnly++
		l.massOnlyKg += cnt * ln.MassKg
		energyWh = ln.MassKg * g.modeWhPerKg
	case energyWh == 0:
		energyWh = ln.ChargeAh * mx.voltV
	}
	l.modeWh += cnt * energyWh
	if ch.Unknown {
		l.unknownWh += cnt * energyWh
	}
	l.countLabel(g, &ln, cnt*energyWh)
	l.checkMass(g, &ln, cnt, energyWh)
	if l.keepLines {
		// The line is kept as parsed; its detail is made when it is read (Lines), from the
		// group's values, which do not change once the group is made.
		l.keepLine(keptLine{ln: ln, nComp: l.comp.n()})
	}
	return nil
}

// keptLine is what a lot keeps of a line for its detail: the line as parsed, and the number of
// compounds the lot knew when it was added (the line's black mass is over those).
type keptLine struct {
	ln    manifest.Line
	nComp int
}

// lineChunk is the number of lines held in one chunk, and read by one worker (Lines.Chunk): with
// 4,096 a 230,000-line workbook held 20 MB more of rendered rows in flight, with no gain in time.
const lineChunk = 1024

// keepLine keeps one line, in chunks so that a million lines are never copied as the list grows.
func (l *Lot) keepLine(k keptLine) {
	if n := len(l.kept); n == 0 || len(l.kept[n-1]) == lineChunk {
		l.kept = append(l.kept, make([]keptLine, 0, lineChunk))
	}
	last := &l.kept[len(l.kept)-1]
	*last = append(*last, k)
}

// Lines is the detail of a lot's kept lines, each made when it is read: the lot holds each line
// as parsed, a fraction of its detail, so a large manifest's detail is never held whole. Each
// read has scratch of its own, so chunks may be read side by side.
type Lines struct {
	l *Lot
	n int
}

// Len is the number of lines.
func (ls *Lines) Len() int { return ls.n }

// Chunks is how many chunks the lines are held in (Chunk).
func (ls *Lines) Chunks() int { return len(ls.l.kept) }

// All yields each line's detail, in the manifest's order.
func (ls *Lines) All() iter.Seq2[int, LineResult] {
	return func(yield func(int, LineResult) bool) {
		for c := range ls.l.kept {
			for i, r := range ls.Chunk(c) {
				if !yield(i, r) {
					return
				}
			}
		}
	}
}

// Chunk yields the detail of the lines of chunk c (0 ≤ c < Chunks) with their index among all
// lines, in the manifest's order.
func (ls *Lines) Chunk(c int) iter.Seq2[int, LineResult] {
	return func(yield func(int, LineResult) bool) {
		var sc lineScratch
		for j := range ls.l.kept[c] {
			if !yield(c*lineChunk+j, ls.l.lineDetail(&ls.l.kept[c][j], &sc)) {
				return
			}
		}
	}
}

// keptLines returns the kept lines' detail, nil when none were kept. It sets what every line's
// detail reads (the groups' designs at the modes, the elements' order), so that the detail
// itself only reads the lot.
func (l *Lot) keptLines() *Lines {
	if !l.keepLines {
		return nil
	}
	n := 0
	for _, c := range l.kept {
		n += len(c)
	}
	l.elementOrder()
	l.modeGlobal = l.mode.global(0)
	for _, g := range l.order {
		g.modeDesign = l.mode.designOf(g.chem, g.format, 0)
		g.arealLoMAhCm2, g.arealHiMAhCm2 = l.mode.arealBounds(g.chem, g.format)
	}
	return &Lines{l: l, n: n}
}

// lineScratch is one reader's scratch for lines' detail.
type lineScratch struct {
	bm    []float64 // compound masses
	perEl []float64
	seen  []bool
}

// lineDetail makes a kept line's detail: its most likely breakdown of one item, and the masses
// of its count.
func (l *Lot) lineDetail(k *keptLine, sc *lineScratch) LineResult {
	ln := &k.ln
	ch := ln.Chemistry
	g := l.byPtr[ptrKey{ch, ln.Format}]
	cnt := float64(ln.Count)
	mx := g.modeMix
	energyWh := ln.EnergyWh
	switch {
	case ln.MassOnly():
		energyWh = ln.MassKg * g.modeWhPerKg
	case energyWh == 0:
		energyWh = ln.ChargeAh * mx.voltV
	}
	var flags []string
	measWhKg := 0.0
	if ln.MassKg > 0 && !ln.MassOnly() {
		measWhKg = energyWh / ln.MassKg
		if !(measWhKg >= g.bandLo && measWhKg <= g.bandHi) {
			flags = []string{massMessage(ln, measWhKg, g.bandLo, g.bandHi)}
		}
	}
	weighedLine := measWhKg > 0 && len(flags) == 0
	if ch.Unknown {
		flags = append(flags, "unknown chemistry: the prior for the item assumed")
	}
	if ln.MassOnly() {
		flags = append(flags, "no capacity: energy from the mass and the chemistry's Wh/kg band")
	}
	fr, gl := g.modeDesign, l.modeGlobal
	itemWh := ln.EnergyWh
	if ln.MassOnly() {
		itemWh = energyWh
	}
	if weighedLine {
		fr = weighed(itemWh, ln.ChargeAh, mx, fr, gl, ln.MassKg*1000, g.arealLoMAhCm2, g.arealHiMAhCm2)
	}
	b := model(itemWh, ln.ChargeAh, mx, fr, gl)
	bm := sc.compounds(k.nComp)
	b.blackMass(bm, fr, gl, g.camIdx, ch.MeanShares())
	els, total := l.lineElements(bm, cnt, sc)
	return LineResult{Line: ln.Num, ID: ln.ID, Description: ln.Description, ChemistryLabel: ln.ChemistryLabel,
		Chemistry: ch.Key, Unknown: ch.Unknown, Format: ln.Format.String(), Count: ln.Count, CellsPerItem: ln.CellsPerItem,
		Application: ln.Application, CapacityText: ln.CapacityText, CapacityGiven: ln.CapacityGiven(),
		CapacityBasis: ln.CapacityBasis, VoltageV: ln.VoltageV, EnergyWhPerItem: dist.Round(energyWh, 4),
		EnergyAssumed: ln.EnergyWh == 0 && !ln.MassOnly(), EnergyFromMass: ln.MassOnly(), ChargeAhPerItem: ln.ChargeAh,
		ModelMassKgEach: dist.Round(b.item/1000, 6), MeasuredMassKg: ln.MassKg, MeasuredWhPerKg: dist.Round(measWhKg, 2),
		CathodeKg: dist.Round(b.cam*cnt/1000, 6), BlackMassKg: dist.Round(total*cnt/1000, 6), ElementsKg: els, Flags: flags,
		Notes: ln.Notes}
}

// compounds returns the scratch's n compound masses, zeroed.
func (sc *lineScratch) compounds(n int) []float64 {
	if cap(sc.bm) < n {
		sc.bm = make([]float64, n)
	}
	sc.bm = sc.bm[:n]
	clear(sc.bm)
	return sc.bm
}

// elementOrder sets the lot's element indices by symbol and which elements are metals (elOrder,
// elMetal), made again only when the lot has learnt more elements.
func (l *Lot) elementOrder() {
	if n := len(l.comp.elements); len(l.elOrder) != n {
		l.elOrder, l.elMetal = make([]int, n), make([]bool, n)
		for e, sym := range l.comp.elements {
			l.elOrder[e], l.elMetal[e] = e, cathode.IsMetal(sym)
		}
		slices.SortFunc(l.elOrder, func(a, b int) int { return strings.Compare(l.comp.elements[a], l.comp.elements[b]) })
	}
}

// lineElements sums a line's most likely black mass (g per item, by compound) into metals by
// element (kg for the line's count), sorted by symbol, and its black mass (g per item).
func (l *Lot) lineElements(bm []float64, count float64, sc *lineScratch) (ElementMasses, float64) {
	order, metal := l.elOrder, l.elMetal // made by keptLines
	if n := len(order); len(sc.perEl) != n {
		sc.perEl, sc.seen = make([]float64, n), make([]bool, n)
	}
	perEl, seen := sc.perEl, sc.seen
	clear(perEl)
	clear(seen)
	total, nSeen := 0.0, 0
	for c, m := range bm {
		total += m
		for e, f := range l.comp.fractions[c] {
			if f > 0 && metal[e] {
				perEl[e] += m * f * count / 1000
				if !seen[e] {
					seen[e] = true
					nSeen++
				}
			}
		}
	}
	els := make(ElementMasses, 0, nSeen)
	for _, e := range order {
		if seen[e] {
			els = append(els, ElementMass{Element: l.comp.elements[e], Kg: dist.Round(perEl[e], 6)})
		}
	}
	return els, total
}

// checkMass compares a line's measured weight with its plausible Wh/kg band: a weight inside
// joins the group's weighed lines (whose cells are modelled at that weight), one outside is
// counted and warned of (lineDetail flags it).
func (l *Lot) checkMass(g *group, ln *manifest.Line, cnt, energyWh float64) {
	if ln.MassKg <= 0 || ln.MassOnly() {
		return
	}
	l.withMass++
	measWhKg := energyWh / ln.MassKg
	lo, hi := g.bandLo, g.bandHi
	if measWhKg >= lo && measWhKg <= hi {
		g.weighedWh += cnt * ln.EnergyWh
		g.weighedAh += cnt * ln.ChargeAh
		g.weighedKg += cnt * ln.MassKg
		return
	}
	l.flagged++
	if l.flagged <= maxLineWarnings {
		msg := massMessage(ln, measWhKg, lo, hi)
		l.warnings = append(l.warnings, fmt.Sprintf("line %d (%s): %s; check the capacity, the count or the weight", ln.Num, idOr(ln), msg))
	}
}

// massMessage says that a line's measured Wh/kg is outside its plausible band.
func massMessage(ln *manifest.Line, measWhKg, lo, hi float64) string {
	return fmt.Sprintf("%.0f Wh/kg measured, outside the plausible %.0f–%.0f Wh/kg for %s %s",
		measWhKg, lo, hi, ln.Chemistry.Key, ln.Format)
}

// maxLabels bounds the labels listed in the report; the rest are counted.
const maxLabels = 500

// countLabel adds a line of group g to its label's count.
func (l *Lot) countLabel(g *group, ln *manifest.Line, energyWh float64) {
	st := g.lastStat
	if st == nil || g.lastLabel != ln.ChemistryLabel {
		st = l.labelStat(ln)
		g.lastLabel, g.lastStat = ln.ChemistryLabel, st
	}
	if st.ResolvedAs != ln.Chemistry.Key && st.Kind != "various" {
		// The same unknown label takes each item's prior: say so once.
		st.ResolvedAs = "unknown (per item)"
	}
	st.Lines++
	st.modeWh += energyWh
}

// labelStat returns the count of a line's label, adding it (or the catch-all of further labels)
// the first time.
func (l *Lot) labelStat(ln *manifest.Line) *labelStat {
	st := l.labels[ln.ChemistryLabel]
	if st == nil {
		if len(l.labelList) >= maxLabels {
			st = l.labels["\x00more"]
			if st == nil {
				st = &labelStat{LabelResolution: LabelResolution{Label: "(further labels)", ResolvedAs: "various", Kind: "various"}}
				l.labels["\x00more"] = st
				l.labelList = append(l.labelList, st)
			}
		} else {
			st = &labelStat{LabelResolution: LabelResolution{Label: ln.ChemistryLabel, ResolvedAs: ln.Chemistry.Key, Kind: string(ln.Chemistry.Kind), Unrecognised: ln.LabelUnresolved}}
			l.labels[ln.ChemistryLabel] = st
			l.labelList = append(l.labelList, st)
		}
	}
	return st
}

// Labels returns every label's resolution with its share of the lot's energy.
func (l *Lot) Labels() []LabelResolution {
	out := make([]LabelResolution, 0, len(l.labelList))
	for _, st := range l.labelList {
		r := st.LabelResolution
		if l.modeWh > 0 {
			r.EnergyShare = dist.Round(st.modeWh/l.modeWh, 6)
		}
		out = append(out, r)
	}
	return out
}

func idOr(ln *manifest.Line) string {
	if ln.ID != "" {
		return ln.ID
	}
	return "no id"
}

func (l *Lot) modeMix(ch *cathode.Chemistry) mix {
	volt, capa := l.mode.chemDraws(ch)
	return mixAt(ch.Components, ch.MeanShares(), volt, capa, 0)
}

// band returns the plausible Wh/kg band of an item: the chemistry's cell band (the envelope of
// its components, from published cells), lowered by the pack or module overhead for assemblies.
// The model's own cell lies inside it (TestModelInsideItsBand), but for the chemistries listed
// there.
func (l *Lot) band(ch *cathode.Chemistry, f manifest.Format) (lo, hi float64) {
	lo, hi = math.Inf(1), 0
	for _, c := range ch.Components {
		lo = math.Min(lo, c.Entry.SpecificEnergyWhPerKg.Min)
		hi = math.Max(hi, c.Entry.SpecificEnergyWhPerKg.Max)
	}
	if f.IsAssembly() {
		p := l.model.get(f.String(), f.String()+"_overhead")
		lo *= 1 - p.Range.Max
		hi *= 1 - p.Range.Min
	}
	return lo, hi
}

// modeWhPerKg is an item's most likely specific energy: the components' band modes weighted by
// their mean shares, lowered by the most likely assembly overhead.
func (l *Lot) modeWhPerKg(ch *cathode.Chemistry, f manifest.Format) float64 {
	w := 0.0
	for _, c := range ch.Components {
		w += c.MassFraction * c.Entry.SpecificEnergyWhPerKg.Mode
	}
	if f.IsAssembly() {
		w *= 1 - l.model.get(f.String(), f.String()+"_overhead").Range.Mode
	}
	return w
}

// chemDraws returns the voltage and capacity draws of each component of ch.
func (ps *paramSet) chemDraws(ch *cathode.Chemistry) (volt, capa [][]float64) {
	for _, c := range ch.Components {
		v, q := ps.chemistry(c.Entry)
		volt, capa = append(volt, v), append(capa, q)
	}
	return volt, capa
}
