package assay

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// What a number rests on, as the outputs' basis fields say it.
const (
	// BasisEstimate: the manifest and the cell model, no measurement of the black mass.
	BasisEstimate = "estimate"
	// BasisAssay: a lab assay of the black mass.
	BasisAssay = "assay"
	// BasisWeighing: the black mass as weighed.
	BasisWeighing = "weighing"
	// BasisAssumed: a value assumed where the assay has none (see MissingLi).
	BasisAssumed = "assumed"
)

// joinBasis joins the kinds of evidence a result rests on, in the order given: "assay+weighing".
func joinBasis(parts ...string) string { return strings.Join(parts, "+") }

// Text is the value as a report shows it: "3.6 wt%", or "< 0.05 wt%" below the detection limit.
func (v Value) Text() string {
	if v.Censored {
		return "< " + strconv.FormatFloat(v.LimitWtPct, 'g', 4, 64) + " wt%"
	}
	return strconv.FormatFloat(v.WtPct, 'g', 4, 64) + " wt%"
}

// Censor makes v a value below the detection limit limitWtPct: it is somewhere from 0 to the
// limit, every value equally likely, so its mean is half the limit and its standard deviation
// limit/√12 (of a uniform distribution). Reports show it as "< limit".
func (v *Value) Censor(limitWtPct float64) {
	v.Censored, v.LimitWtPct = true, limitWtPct
	v.WtPct, v.SigmaWtPct, v.SigmaAssumed = limitWtPct/2, limitWtPct/math.Sqrt(12), false
}

// draw returns one draw of the value: uniform from 0 to the limit when censored, else normal
// with the lab's standard uncertainty, truncated at zero.
func (v Value) draw(rng *rand.Rand) float64 {
	if v.Censored {
		return v.LimitWtPct * rng.Float64()
	}
	return math.Max(0, v.WtPct+v.SigmaWtPct*rng.NormFloat64())
}

// MissingLiMode is what a quote assumes when the assay has no lithium.
type MissingLiMode int

const (
	// LiStoichiometric: the lithium of the cathodes the other elements imply, one Li per
	// transition metal (layered LiMO2, and LiFePO4 for iron with phosphorus).
	LiStoichiometric MissingLiMode = iota
	// LiNone: no lithium at all (delithiated oxides: Co(IV), Ni(IV)), as the user declares.
	LiNone
	// LiGiven: a lithium content the user gives (WtPct).
	LiGiven
)

// MissingLi is the lithium a quote takes when the assay has none.
type MissingLi struct {
	Mode  MissingLiMode
	WtPct float64 // for LiGiven
	// From says where a given value comes from ("the inferred chemistry mix"; "" for the user).
	From string
}

// MissingLiFromMix is the lithium of a chemistry mix inferred from the assay's other elements
// (MixFit.Implied), for an assay without lithium; the stoichiometric default without a fit.
func MissingLiFromMix(fit *MixFit) MissingLi {
	if fit == nil || !(fit.Implied["Li"] > 0) {
		return MissingLi{Mode: LiStoichiometric}
	}
	return MissingLi{Mode: LiGiven, WtPct: fit.Implied["Li"], From: "the chemistry mix inferred from the assay's other elements"}
}

// ParseMissingLi reads "stoichiometric", "none" or a lithium content in wt% ("3.2", "3.2 %",
// "3,2 wt%").
func ParseMissingLi(s string) (MissingLi, error) {
	switch t := strings.ToLower(strings.TrimSpace(s)); t {
	case "stoichiometric", "stoich", "":
		return MissingLi{Mode: LiStoichiometric}, nil
	case "none", "0", "delithiated":
		return MissingLi{Mode: LiNone}, nil
	}
	v, err := percent(s)
	if err != nil || !(v > 0) || v > 30 {
		return MissingLi{}, fmt.Errorf("missing lithium %q: want stoichiometric, none, or a content from 0 to 30 wt%%", s)
	}
	return MissingLi{Mode: LiGiven, WtPct: v}, nil
}

// Moisture is the water in the weighed black mass, in wt% of the wet mass, when known.
type Moisture struct {
	WtPct float64
	Known bool
}

// ParseMoisture reads a moisture in wt% of the wet mass ("8", "8 %", "8,5 wt%"), from 0 to 95.
func ParseMoisture(s string) (Moisture, error) {
	v, err := percent(s)
	if err != nil || v < 0 || v > maxMoistureWtPct {
		return Moisture{}, fmt.Errorf("moisture %q: want wt%% of the wet mass from 0 to %g", s, float64(maxMoistureWtPct))
	}
	return Moisture{WtPct: v, Known: true}, nil
}

// maxMoistureWtPct is the wettest black mass accepted: a filter cake is well below it.
const maxMoistureWtPct = 95

// percent reads a number with an optional "%" or "wt%" and a decimal comma.
func percent(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	t = strings.TrimSpace(strings.TrimSuffix(strings.TrimSuffix(t, "%"), "wt"))
	t = strings.TrimSpace(strings.TrimSuffix(t, "wt."))
	t = strings.Replace(t, ",", ".", 1)
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, errors.New("not a number")
	}
	return v, nil
}

// Missing is an element a species model needs that the assay lacks, and what stood in for it.
type Missing struct {
	Element string `json:"element"`
	Basis   string `json:"basis"` // assumed, or none (left out)
	Note    string `json:"note"`
}

// missingElements lists the elements the quote's species model needs but the assay lacks:
// lithium wherever cathode metals are assayed, phosphorus beside iron, fluorine and carbon.
func missingElements(a *Assay) []string {
	has := func(el string) bool { _, ok := a.WtPct(el); return ok }
	var out []string
	if !has("Li") && (has("Co") || has("Ni") || has("Mn") || has("Fe")) {
		out = append(out, "Li")
	}
	if !has("P") && has("Fe") {
		out = append(out, "P")
	}
	for _, el := range []string{"F", "C"} {
		if !has(el) {
			out = append(out, el)
		}
	}
	return out
}

// stoichiometricLiWtPct is the lithium of the cathodes one draw implies: one Li per Co, Ni and
// Mn (layered LiMO2) and per Fe matched by P (LiFePO4).
func stoichiometricLiWtPct(es *cathode.Elements, wt map[string]float64) float64 {
	mol := func(el string) float64 { return wt[el] * 10 / es.Weight(el) } // mol per kg
	n := mol("Co") + mol("Ni") + mol("Mn") + math.Min(mol("Fe"), mol("P"))
	return n * es.Weight("Li") / 10
}

// fillMissing sets, in every draw, the lithium the quote assumes, and says what was assumed.
func fillMissing(a *Assay, es *cathode.Elements, draws []map[string]float64, ml MissingLi) []Missing {
	var out []Missing
	for _, el := range missingElements(a) {
		m := Missing{Element: el, Basis: "none"}
		switch {
		case el == "Li" && ml.Mode == LiStoichiometric:
			for _, d := range draws {
				d["Li"] = stoichiometricLiWtPct(es, d)
			}
			m.Basis = BasisAssumed
			m.Note = fmt.Sprintf("Li not assayed: the stoichiometric lithium of the cathodes assumed, %.3g wt%% "+
				"(one Li per Co, Ni and Mn as layered LiMO2, per Fe with P as LiFePO4; a spinel LiMn2O4 holds half as much per Mn); "+
				"choose none or a value if that is wrong, or assay Li. Li is left out of the element masses and the value",
				draws[0]["Li"])
		case el == "Li" && ml.Mode == LiGiven:
			for _, d := range draws {
				d["Li"] = ml.WtPct
			}
			m.Basis = BasisAssumed
			from := ml.From
			if from == "" {
				from = "as given for the quote"
			} else {
				from = "the lithium of " + from
			}
			m.Note = fmt.Sprintf("Li not assayed: %.3g wt%%, %s; Li is left out of the element masses and the value", ml.WtPct, from)
		case el == "Li":
			m.Note = "Li not assayed and none assumed, as asked: Co, Ni and Mn are read as delithiated oxides (Co(IV), Ni(IV)), " +
				"which need about twice the reductant of LiMO2"
		case el == "P":
			m.Note = "P not assayed: all Fe is read as metal (steel fines), which gives electrons to the leach; " +
				"if the lot holds LFP, assay P (LiFePO4 needs acid, not reductant)"
		case el == "F":
			m.Note = "F not assayed: no PVDF binder or fluoride counted (the liquor's HF and the binder's mass are left out)"
		case el == "C":
			m.Note = "C not assayed: no graphite counted (the leach residue's mass is left out)"
		}
		out = append(out, m)
	}
	return out
}

// Complete returns a copy of the assay with the elements a species model needs but the assay
// lacks taken from a lot's estimate (each element's wt% distribution): the P50, with a standard
// uncertainty from the P10–P90 width, marked basis "estimate". It also says what it took.
func Complete(a *Assay, estimate map[string]dist.Amount) (*Assay, []string) {
	out := &Assay{File: a.File, Values: append([]Value(nil), a.Values...), Moisture: a.Moisture}
	var notes []string
	for _, el := range missingElements(a) {
		est, ok := estimate[el]
		if !ok {
			continue
		}
		sd := (est.WtPct.P90 - est.WtPct.P10) / zPerP10P90
		out.Values = append(out.Values, Value{Element: el, WtPct: est.WtPct.P50, SigmaWtPct: sd, Basis: BasisEstimate})
		notes = append(notes, fmt.Sprintf("%s not assayed: taken from the lot's estimate, %.3g wt%% (P50) ± %.2g (σ from P10–P90)", el, est.WtPct.P50, sd))
	}
	return out, notes
}

// moistureOf decides the moisture of the weighed mass: the quote's own, else the assay's line,
// else none (the weighed mass taken as dry). It returns the moisture per draw (wt% of the wet
// mass), where it came from, and a warning when the two disagree.
func moistureOf(a *Assay, m Moisture, seed uint64, n int) (draws []float64, basis string, warnings []string) {
	draws = make([]float64, n)
	switch {
	case m.Known:
		for i := range draws {
			draws[i] = m.WtPct
		}
		basis = fmt.Sprintf("given for the quote: %.3g wt%% of the wet mass", m.WtPct)
		if a.Moisture != nil && math.Abs(a.Moisture.WtPct-m.WtPct) > 0.5 {
			warnings = append(warnings, fmt.Sprintf("moisture: the quote's %.3g wt%% is used; the assay's sample held %s (line %d)",
				m.WtPct, a.Moisture.Text(), a.Moisture.Line))
		}
	case a.Moisture != nil:
		rng := rand.New(rand.NewPCG(seed, 0x4d01))
		for i := range draws {
			draws[i] = a.Moisture.WtPct
			if i > 0 {
				draws[i] = math.Min(maxMoistureWtPct, a.Moisture.draw(rng))
			}
		}
		basis = fmt.Sprintf("from the assay (line %d): %s of the wet sample", a.Moisture.Line, a.Moisture.Text())
	default:
		basis = "none given: the weighed mass is taken as dry"
		warnings = append(warnings, "no moisture given: the weighed mass is taken as dry; a wet black mass holds less metal than quoted")
	}
	return draws, basis, warnings
}
