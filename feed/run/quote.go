package run

import (
	"blackmass/feed/assay"
	"blackmass/feed/report"
	"blackmass/feed/value"
)

// Quote assembles the report of a quote from an assay: the weighed black mass, its elements and
// species, and the leach plan (assay.QuoteFrom), with the inputs that produced it; with prices,
// its value on the same draws; with Mix, the assay explained as a mix of chemistries (the whole
// catalogue when no candidates are named).
func Quote(t *Tables, o Options, a *assay.Assay, qo assay.QuoteOptions) (*report.Report, error) {
	if err := o.Validate(); err != nil {
		return nil, err
	}
	qo.Seed, qo.Samples, qo.Tables, qo.Prices = o.Seed, o.Samples, t.Leach, o.LeachPrices
	if o.Leach != nil {
		qo.Leach = *o.Leach
	}
	q, err := assay.QuoteFrom(a, qo)
	if err != nil {
		return nil, err
	}
	in := o.Inputs
	in.Seed, in.Samples = q.Seed, q.Samples
	r := &report.Report{Inputs: in, BlackMassKg: q.BlackMassKg, Elements: q.Elements, Compounds: q.Compounds,
		ElementOrder: q.ElementOrder, Leach: q.Leach, Warnings: q.Warnings, Safety: SafetyNotes(), Assay: a,
		Basis: q.Basis, Weighing: &q.Weighing, Missing: q.Missing}
	if o.Prices != nil {
		els := q.ElementOrder
		kg := make([][]float64, len(els))
		for i, e := range els {
			kg[i] = q.ElementDraws[e]
		}
		r.Value = value.Of(els, kg, q.BlackMassDraws, o.Prices, costPerSample(q.Leach), 0)
	}
	if o.Mix != nil {
		cands := o.Mix.Candidates
		if cands == nil {
			cands = t.Catalogue.Entries()
		}
		if r.Mix, err = assay.InferMix(a, cands, o.Mix.Bootstrap, o.Seed); err != nil {
			return nil, err
		}
	}
	if err := planRecovery(t, o, r); err != nil {
		return nil, err
	}
	return finish(r, o)
}
