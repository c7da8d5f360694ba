package assay

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"blackmass/cathode"
	"blackmass/feed/dist"
)

// minSigmaWtPct is the smallest assay uncertainty the mix fit weights by (wt%), about the
// reporting limit of ICP-OES for major elements in black mass (common practice).
const minSigmaWtPct = 0.01

// zPerP10P90 converts a P10–P90 width to a standard deviation for a normal distribution
// (P90 − P10 = 2·1.2816 σ).
const zPerP10P90 = 2 * 1.2815515655446004

// Comparison is one element of a reconciliation between an estimate and an assay.
type Comparison struct {
	Element       string  `json:"element"`
	EstimateWtPct float64 `json:"estimate_wt_pct"`
	EstimateSigma float64 `json:"estimate_sigma_wt_pct"`
	AssayWtPct    float64 `json:"assay_wt_pct"`
	AssaySigma    float64 `json:"assay_sigma_wt_pct"`
	// AssayText is the assay as reported ("< 0.05 wt%" below the detection limit).
	AssayText      string  `json:"assay"`
	Z              float64 `json:"difference_in_sigma"`
	Flag           bool    `json:"disagrees"`
	Interpretation string  `json:"reading,omitempty"`
}

// Reconciliation sets an estimate beside an assay of the same lot.
type Reconciliation struct {
	// Basis is what the comparison rests on: the estimate against the assay.
	Basis       string       `json:"basis"`
	Threshold   float64      `json:"flag_above_sigma"`
	Comparisons []Comparison `json:"elements"`
	Summary     []string     `json:"summary"`
	// Missing says, for each element a species model needs that the assay lacks, what the
	// estimate holds of it (see Complete).
	Missing []string `json:"missing_elements,omitempty"`
}

// readings say what a disagreement suggests, by element and sign (assay above / below the estimate).
var readings = map[string][2]string{
	"Co": {"more cobalt than the labels explain: LCO-rich cells unlabelled or mislabelled, or older NMC than declared", "less cobalt than expected: Ni-rich or LFP cells labelled as cobalt chemistries"},
	"Ni": {"more nickel than expected: Ni-rich NMC/NCA cells among the unknowns, or Ni-plated can fines", "less nickel than expected: LCO, LMO or LFP cells labelled as NMC/NCA"},
	"Mn": {"more manganese than expected: LMO or LMO-blend (power-tool) cells in the lot", "less manganese than expected: NCA or LCO cells labelled as NMC"},
	"Li": {"more lithium than expected: electrolyte salts retained, or cells with excess lithium", "less lithium than expected: lithium lost to electrolyte drainage, brine discharge or thermal pretreatment"},
	"Fe": {"more iron than expected: steel casing fines or unlisted LFP cells", "less iron than expected: fewer LFP cells than declared or than the unknown-chemistry prior assumed"},
	"P":  {"more phosphorus than expected: unlisted LFP cells or LiPF6 residue", "less phosphorus than expected: fewer LFP cells than declared or than the unknown-chemistry prior assumed"},
	"Al": {"more aluminium than expected: coarse shredding or poor sieving carries foil into the fines", "less aluminium than expected: efficient foil separation"},
	"Cu": {"more copper than expected: coarse shredding or poor sieving carries foil into the fines", "less copper than expected: efficient foil separation"},
	"C":  {"more carbon than expected: graphite-rich fines, or plastics in the fines", "less carbon than expected: graphite lost, or thermal pretreatment burned it"},
	"F":  {"more fluorine than expected: binder or electrolyte residue not removed", "less fluorine than expected: thermal pretreatment removed the binder"},
}

// Reconcile compares an estimate (each element's wt% distribution) with an assay, element by
// element, in units of the combined standard uncertainty; |z| above threshold is flagged.
func Reconcile(estimate map[string]dist.Amount, a *Assay, threshold float64) *Reconciliation {
	rc := &Reconciliation{Threshold: threshold, Basis: joinBasis(BasisEstimate, BasisAssay)}
	_, rc.Missing = Complete(a, estimate)
	for _, v := range a.Values {
		if v.Basis == BasisEstimate {
			continue // not evidence against the estimate it came from
		}
		est, ok := estimate[v.Element]
		c := Comparison{Element: v.Element, AssayWtPct: v.WtPct, AssaySigma: v.SigmaWtPct, AssayText: v.Text()}
		if !ok {
			c.Interpretation = "not in the estimate's model (e.g. salt from brine discharge, or another contaminant)"
			rc.Comparisons = append(rc.Comparisons, c)
			continue
		}
		c.EstimateWtPct = est.WtPct.Mean
		c.EstimateSigma = (est.WtPct.P90 - est.WtPct.P10) / zPerP10P90
		sd := math.Hypot(c.EstimateSigma, c.AssaySigma)
		switch {
		case v.Censored:
			c.Z = censoredZ(c.EstimateWtPct, c.EstimateSigma, v.LimitWtPct)
		case sd > 0:
			c.Z = (c.AssayWtPct - c.EstimateWtPct) / sd
		case c.AssayWtPct != c.EstimateWtPct:
			c.Z = math.Copysign(math.Inf(1), c.AssayWtPct-c.EstimateWtPct)
		}
		if math.Abs(c.Z) > threshold {
			c.Flag = true
			if rd, ok := readings[v.Element]; ok {
				c.Interpretation = rd[0]
				if c.Z < 0 {
					c.Interpretation = rd[1]
				}
			}
			txt := fmt.Sprintf("%.2f wt%%", c.AssayWtPct)
			if v.Censored {
				txt = v.Text()
			}
			rc.Summary = append(rc.Summary, fmt.Sprintf("%s: assay %s vs estimate %.2f wt%% (%+.1f σ)", v.Element, txt, c.EstimateWtPct, c.Z))
		}
		rc.Comparisons = append(rc.Comparisons, c)
	}
	if len(rc.Summary) == 0 {
		rc.Summary = []string{fmt.Sprintf("the assay agrees with the estimate within %.1f σ for every element", threshold)}
	}
	return rc
}

// censoredZ is how far an estimate lies above a detection limit, in the estimate's standard
// uncertainty: 0 while the estimate is anywhere from 0 to the limit, where the assay cannot
// tell it from the truth.
func censoredZ(estWtPct, estSigma, limitWtPct float64) float64 {
	if estWtPct <= limitWtPct {
		return 0
	}
	if estSigma > 0 {
		return (limitWtPct - estWtPct) / estSigma
	}
	return math.Inf(-1)
}

// MixComponent is one column of the mix fit with its share.
type MixComponent struct {
	Name string `json:"name"`
	// KgPerKg is the mass fraction of the black mass (all components).
	KgPerKg dist.Stat `json:"black_mass_fraction"`
	// CathodeShare is the share of the cathode active mass (chemistries only; sums to 1).
	CathodeShare *dist.Stat `json:"cathode_share,omitempty"`
	Interval95   [2]float64 `json:"interval_95"`
	Best         float64    `json:"best_fit"`
	// BestShare is the best fit's share of the cathode active mass (chemistries only): the
	// shares of one fit, so they sum to 1, unlike the medians of CathodeShare.
	BestShare *float64 `json:"best_fit_cathode_share,omitempty"`
	// Multimodal says the bootstrap draws of this column are not one hump around the best fit:
	// the best fit lies outside their 95 % range, or the column drops to zero in some draws and
	// not in others (near-collinear candidates trading the signal).
	Multimodal bool `json:"bootstrap_multimodal,omitempty"`
}

// multimodalZeroShare bounds the share of bootstrap draws at zero between which a column is on
// in some draws and off in others: an on/off column has two modes.
const multimodalZeroShare = 0.05

// Residual is the misfit of one assayed element.
type Residual struct {
	Element string  `json:"element"`
	WtPct   float64 `json:"assay_minus_fit_wt_pct"`
	Sigma   float64 `json:"in_sigma"`
}

// MixFit is the chemistry mix that best explains an assay.
type MixFit struct {
	Components []MixComponent `json:"components"`
	Residuals  []Residual     `json:"residuals"`
	Explained  float64        `json:"explained_mass_fraction"`
	Bootstrap  int            `json:"bootstrap_draws"`
	Notes      []string       `json:"notes"`
	// Implied is the wt% the best fit gives the elements its candidates hold but the assay
	// lacks (lithium left off an assay, say): the stoichiometric content of the inferred mix.
	Implied map[string]float64 `json:"implied_wt_pct,omitempty"`
}

// InferMix fits non-negative mass fractions of candidate chemistries plus graphite, PVDF, Al, Cu
// and Fe (metal) to the assay by weighted non-negative least squares (weights 1/σ), and repeats
// the fit on bootstrap draws of the assay within its uncertainty to give each share a range.
func InferMix(a *Assay, candidates []*cathode.Entry, draws int, seed uint64) (*MixFit, error) {
	if len(candidates) == 0 {
		return nil, fmt.Errorf("infer: no candidate chemistries")
	}
	if draws < 10 {
		return nil, fmt.Errorf("infer: at least 10 bootstrap draws")
	}
	candidates, merged := distinctCompositions(candidates)
	cols := mixColumns(candidates)
	var rows []Value
	for _, v := range a.Values {
		if slices.ContainsFunc(cols, func(c mixColumn) bool { return c.frac[v.Element] > 0 }) {
			rows = append(rows, v)
		}
	}
	if len(rows) < 2 {
		return nil, fmt.Errorf("infer: the assay has fewer than two elements the candidates contain")
	}
	ws := newWeightedSystem(cols, rows)
	best, err := ws.solve(func() []float64 {
		v := make([]float64, len(rows))
		for i, r := range rows {
			v[i] = r.WtPct
		}
		return v
	}())
	if err != nil {
		return nil, err
	}
	xs, shares, err := ws.bootstrap(draws, seed)
	if err != nil {
		return nil, err
	}
	fit := &MixFit{Bootstrap: draws}
	bestChem := 0.0
	for j, c := range cols {
		if c.chem {
			bestChem += best[j]
		}
	}
	var multimodal []string
	for j, c := range cols {
		mc := MixComponent{Name: c.name, KgPerKg: dist.Summarise(xs[j]), Best: dist.Sig(best[j])}
		sorted := slices.Sorted(slices.Values(xs[j]))
		lo, hi := dist.Quantile(sorted, 0.025), dist.Quantile(sorted, 0.975)
		mc.Interval95 = [2]float64{dist.Sig(lo), dist.Sig(hi)}
		zeros := float64(len(sorted)-len(slices.DeleteFunc(slices.Clone(sorted), func(v float64) bool { return v == 0 }))) /
			float64(len(sorted))
		mc.Multimodal = best[j] < lo || best[j] > hi ||
			(zeros > multimodalZeroShare && zeros < 1-multimodalZeroShare)
		if mc.Multimodal {
			multimodal = append(multimodal, fmt.Sprintf("%s (best %.4g, bootstrap 95 %% %.4g–%.4g, zero in %.0f %% of draws)",
				c.name, best[j], lo, hi, 100*zeros))
		}
		if c.chem {
			st := dist.Summarise(shares[j])
			mc.CathodeShare = &st
			if bestChem > 0 {
				bs := best[j] / bestChem
				mc.BestShare = &bs
			}
		}
		fit.Components = append(fit.Components, mc)
		fit.Explained += best[j]
	}
	fit.Explained = dist.Sig(fit.Explained)
	fit.Implied = implied(cols, rows, best)
	for i, v := range rows {
		f := 0.0
		for j, c := range cols {
			f += 100 * c.frac[v.Element] * best[j]
		}
		fit.Residuals = append(fit.Residuals, Residual{Element: v.Element, WtPct: dist.Sig(v.WtPct - f), Sigma: dist.Sig((v.WtPct - f) / ws.sigma[i])})
	}
	if len(multimodal) > 0 {
		merged = append(merged, "the bootstrap is multi-modal for "+strings.Join(multimodal, "; ")+
			": candidates trade the signal between draws, so the best fit is one of several near-equal mixes")
	}
	fit.Notes = append(merged, []string{
		"weighted non-negative least squares (Lawson–Hanson) over the candidates' element fractions; weights 1/σ of the assay",
		"candidates whose element fractions are near combinations of others (e.g. NMC grades) share the signal: read their ranges, not only the best fit",
		"the explained mass fraction leaves out what the candidates lack (moisture, plastics, oxygen of other species)",
	}...)
	return fit, nil
}

// implied returns the wt% the fit best gives the elements its columns hold but no assay row has.
func implied(cols []mixColumn, rows []Value, best []float64) map[string]float64 {
	out := map[string]float64{}
	for _, el := range []string{"Li", "P", "F", "C"} {
		if slices.ContainsFunc(rows, func(v Value) bool { return v.Element == el }) {
			continue
		}
		w := 0.0
		for j, c := range cols {
			w += 100 * c.frac[el] * best[j]
		}
		if w > 0 {
			out[el] = dist.Sig(w)
		}
	}
	if len(out) == 0 {
		return nil
	}
	return out
}

// distinctCompositions keeps the first of candidates that share one composition (cells of two
// eras of the same cathode): an assay cannot tell them apart. It returns a note per merge.
func distinctCompositions(candidates []*cathode.Entry) ([]*cathode.Entry, []string) {
	var out []*cathode.Entry
	var notes []string
	first := map[string]string{}
	for _, c := range candidates {
		k := c.Formula.Canonical()
		if kept, ok := first[k]; ok {
			notes = append(notes, fmt.Sprintf("%s has the composition of %s (%s); an assay cannot tell them apart, so it is fitted as %s", c.Key, kept, k, kept))
			continue
		}
		first[k] = c.Key
		out = append(out, c)
	}
	return out, notes
}

// mixColumn is one column of the fit: a candidate cathode, or another black-mass component.
type mixColumn struct {
	name string
	frac map[string]float64 // element mass fractions
	chem bool
}

// mixColumns lists the candidates and the other components of black mass.
func mixColumns(candidates []*cathode.Entry) []mixColumn {
	es := candidates[0].Formula.Elements() // the atomic weights the candidates were read with
	var cols []mixColumn
	add := func(name string, f cathode.Formula, chem bool) {
		m := map[string]float64{}
		for _, t := range f.MassFractions(es) {
			m[t.Symbol] = t.Amount
		}
		cols = append(cols, mixColumn{name, m, chem})
	}
	for _, e := range candidates {
		add(e.Key, e.Formula, true)
	}
	for _, x := range []struct{ name, formula string }{{"graphite", "C"}, {"PVDF", "C2H2F2"}, {"Al", "Al"}, {"Cu", "Cu"}, {"Fe (metal)", "Fe"}} {
		f, _ := es.ParseFormula(x.formula) // fixed, valid formulas
		add(x.name, f, false)
	}
	return cols
}

// weightedSystem is the fit's matrix, each assay row weighted by 1/σ.
type weightedSystem struct {
	cols  []mixColumn
	rows  []Value
	sigma []float64
	A     *mat.Dense
}

func newWeightedSystem(cols []mixColumn, rows []Value) *weightedSystem {
	ws := &weightedSystem{cols: cols, rows: rows, sigma: make([]float64, len(rows)), A: mat.NewDense(len(rows), len(cols), nil)}
	for i, v := range rows {
		// A floor on σ keeps an element reported as exactly 0 ± 0 from dominating the fit.
		ws.sigma[i] = math.Max(v.SigmaWtPct, minSigmaWtPct)
		for j, c := range cols {
			ws.A.Set(i, j, 100*c.frac[v.Element]/ws.sigma[i])
		}
	}
	return ws
}

// solve fits the assay values vals (wt%).
func (ws *weightedSystem) solve(vals []float64) ([]float64, error) {
	b := make([]float64, len(ws.rows))
	for i := range ws.rows {
		b[i] = vals[i] / ws.sigma[i]
	}
	x, _, err := nnls(ws.A, b)
	return x, err
}

// bootstrap refits draws of the assay within its uncertainty: each column's fitted kg per kg,
// and each candidate's share of the cathode.
func (ws *weightedSystem) bootstrap(draws int, seed uint64) (xs, shares [][]float64, err error) {
	rng := rand.New(rand.NewPCG(seed, 0xf17))
	xs, shares = make([][]float64, len(ws.cols)), make([][]float64, len(ws.cols))
	vals := make([]float64, len(ws.rows))
	for range draws {
		for i, r := range ws.rows {
			vals[i] = math.Max(0, r.WtPct+r.SigmaWtPct*rng.NormFloat64())
		}
		x, err := ws.solve(vals)
		if err != nil {
			return nil, nil, err
		}
		chemSum := 0.0
		for j, c := range ws.cols {
			if c.chem {
				chemSum += x[j]
			}
		}
		for j, c := range ws.cols {
			xs[j] = append(xs[j], x[j])
			if c.chem {
				s := 0.0
				if chemSum > 0 {
					s = x[j] / chemSum
				}
				shares[j] = append(shares[j], s)
			}
		}
	}
	return xs, shares, nil
}
