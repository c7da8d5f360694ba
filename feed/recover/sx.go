package recover

import (
	"math"
	"slices"
)

// KremserRaffinate is the share of a solute left in the raffinate after n ideal counter-current
// stages at extraction factor e = D·(O/A): φ = (e − 1)/(e^(n+1) − 1), and 1/(n + 1) at e = 1.
func KremserRaffinate(e float64, n int) float64 {
	if math.Abs(e-1) < 1e-9 {
		return 1 / float64(n+1)
	}
	return (e - 1) / (math.Pow(e, float64(n+1)) - 1)
}

// KremserStages is the number of ideal counter-current stages (a real number; round up) that
// leaves share phi in the raffinate at extraction factor e: n = ln[1 + (e − 1)/φ]/ln e − 1, and
// 1/φ − 1 at e = 1. For e < 1 the raffinate share tends to 1 − e however many stages: below
// that it returns +Inf.
func KremserStages(e, phi float64) float64 {
	if math.Abs(e-1) < 1e-9 {
		return 1/phi - 1
	}
	if e < 1 && phi <= 1-e {
		return math.Inf(1)
	}
	return math.Log(1+(e-1)/phi)/math.Log(e) - 1
}

// distribution is the metal's distribution ratio at pH: log D = slope·(pH − pH50).
func distribution(m sxMetal, pH50, pH float64) float64 { return math.Pow(10, m.slope*(pH-pH50)) }

// designStages is the stage count: as given, or from the Kremser equation at the most likely
// pH50 of Co for the target recovery.
func (p *planner) designStages(st Step) int {
	if st.Stages > 0 {
		return st.Stages
	}
	co := p.t.sx["Co"]
	d := distribution(co, co.mode, st.PH)
	if st.Table != nil {
		d = st.Table.ratio("Co", st.PH)
	}
	n := KremserStages(d*st.OA, 1-st.CoRecovery)
	if math.IsInf(n, 1) || n > 20 {
		return 20
	}
	return max(1, int(math.Ceil(n-1e-9)))
}

// sx extracts Co (and whatever else the pH lets through) into the saponified organic over n
// counter-current stages, scrubs the co-extracted Ni, Li and Na back, and strips the loaded
// organic with acid into the cobalt strip liquor: c.strip.
//
//	saponification  (HA)2 + NaOH -> NaA·HA + H2O, then M2+ + 2 NaA -> MA2 + 2 Na+ (2 NaOH per M2+)
//	strip           MA2(HA)2 + H2SO4 -> MSO4 + 2 (HA)2
func (p *planner) sx(c *ctx, st Step, s *State) {
	const stage = KindSX
	n := p.designStages(st)
	loaded := map[string]float64{}
	var fe3 float64
	metals := []string{"Fe3", "Al", "Cu", "Zn", "Mn", "Co", "Ni", "Fe2", "Mg", "Ca", "Li", "Na"}
	for _, m := range metals {
		var dm float64
		if st.Table != nil {
			dm = st.Table.ratio(m, st.PH)
		} else {
			info, ok := p.t.sx[m]
			if !ok {
				continue
			}
			pH50 := p.draw(stage, "pH50 "+m, info.lo, info.mode, info.hi, "pH", info.source)[c.i]
			dm = distribution(info, pH50, st.PH)
		}
		frac := 1 - KremserRaffinate(dm*st.OA, n)
		switch m {
		case "Fe3":
			x := frac * s.Fe3Mol
			s.Fe3Mol -= x
			s.Mol["Fe"] -= x
			fe3 += x
			loaded["Fe"] += x
		case "Fe2":
			x := frac * (s.Mol["Fe"] - s.Fe3Mol)
			s.Mol["Fe"] -= x
			loaded["Fe"] += x
		default:
			loaded[m] += take(s, m, frac*s.Mol[m])
		}
		if m == "Co" {
			c.figure("Co extracted, share", frac)
		}
		if m == "Ni" {
			c.figure("Ni co-extracted before scrub, share", frac)
		}
	}
	// Saponification: the Na+ the loaded metals displace joins the raffinate.
	naOH := fe3
	for el, x := range loaded {
		naOH += ionCharge(el) * x
	}
	c.reagent(s, "NaOH", naOH)
	s.Mol["Na"] += naOH
	c.waterMol(s, naOH)
	p.scrub(c, s, loaded)
	p.strip(c, st, s, loaded, &fe3)
	c.figure("stages", float64(n))
	c.figure("organic flow, L", st.OA*s.VolumeL)
	capMol := p.val(c, stage, "extractant_mol_per_l") / 4 * st.OA * s.VolumeL
	tot := 0.0
	for _, x := range loaded {
		tot += x
	}
	if st.Table == nil {
		c.figure("organic loaded, share of its capacity", tot/capMol)
	}
	if st.Table == nil && tot > p.val(c, stage, "max_loading")*capMol {
		c.warn("the loaded metals pass the organic's working capacity (4 HA per M2+): raise O/A or the " +
			"extractant's concentration")
	}
}

// scrub returns the co-extracted metals less extractable than Co (higher pH50) to the
// raffinate with acid: 1 H2SO4 (or 2 HCl) per M2+.
func (p *planner) scrub(c *ctx, s *State, loaded map[string]float64) {
	ret := p.val(c, KindSX, "scrub_return")
	h := 0.0
	for _, m := range []string{"Ni", "Li", "Na"} {
		x := ret * loaded[m]
		loaded[m] -= x
		s.Mol[m] += x
		h += ionCharge(m) * x
	}
	p.acid(c, s, h)
}

// acid adds the liquor's own acid for h mol of H+ taken up (by the organic or a strip): its
// anion joins the solution s.
func (p *planner) acid(c *ctx, s *State, h float64) {
	if h <= 0 {
		return
	}
	if p.anion == "Cl" {
		c.reagent(s, "HCl", h)
		s.Mol["Cl"] += h
		return
	}
	c.reagent(s, "H2SO4", h/2)
	s.Mol["S"] += h / 2
}

// strip moves the loaded metals into a new solution, the strip liquor, with the acid's excess
// left as free acid, its water set by the strip liquor's Co concentration.
func (p *planner) strip(c *ctx, st Step, s *State, loaded map[string]float64, fe3 *float64) {
	x := p.val(c, KindSX, "strip_excess")
	sl := &State{Mol: map[string]float64{}}
	coKg := loaded["Co"] * p.t.elements.Weight("Co") / 1000
	sl.WaterKg = math.Max(coKg/p.val(c, KindSX, "strip_co_g_per_l")*1000*waterKgPerL, 1e-6)
	sl.VolumeL = sl.WaterKg / waterKgPerL
	col(c.tl.waterKg, "process water", c.n)[c.i] += sl.WaterKg
	h := *fe3
	keys := make([]string, 0, len(loaded))
	for el := range loaded {
		keys = append(keys, el)
	}
	slices.Sort(keys)
	for _, el := range keys {
		sl.Mol[el] += loaded[el]
		h += ionCharge(el) * loaded[el]
	}
	sl.Fe3Mol = *fe3
	p.acid(c, sl, h*x)
	sl.FreeHMol = h * (x - 1)
	c.strip = sl
}

// waterKgPerL is the water in a litre of a dilute liquor, taken as water's density at 20 °C
// (0.998 21 kg/L, CRC Handbook, Properties of water in the range 0-100 °C).
const waterKgPerL = 0.99821
