package run

import (
	"errors"

	"blackmass/feed/dist"
	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/report"
	"blackmass/feed/value"
)

// planRecovery takes the leach's per-sample liquor through the flowsheet of o.Recover, when one
// is given, on the run's seed.
func planRecovery(t *Tables, o Options, r *report.Report) error {
	if o.Recover == nil {
		return nil
	}
	if r.Leach == nil || r.Leach.LiquorSamples == nil {
		return errors.New("recovery needs the leach's liquor: the leach was not planned")
	}
	lq := LiquorFromLeach(r.Leach.LiquorSamples)
	rec, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: *o.Recover, Tables: t.Recover,
		Draws: dist.NewDrawer(o.Seed, len(lq.VolumeL)), Prices: ProductPrices(o.Prices), ReagentPrices: o.RecoverPrices})
	if err != nil {
		return err
	}
	r.Recovery = rec
	return nil
}

// recoveryPurchases are the recovery's reagents to order, as bought, each at its price from
// the recovery reagents' prices (when given); those not bought (air, ozone made on site) are
// marked so.
func recoveryPurchases(rec *recover.Report, rp *recover.ReagentPrices) []value.Purchase {
	if rec == nil {
		return nil
	}
	var out []value.Purchase
	for _, g := range rec.Reagents {
		if g.OrderAs == "" {
			out = append(out, value.Purchase{Reagent: g.Name + " (recovery)", NotBought: true})
			continue
		}
		p := value.Purchase{Reagent: g.OrderAs + " (recovery)", Kg: g.Commercial, Litres: g.Litres}
		if rp != nil {
			p.PricePerKg = rp.PerKg[g.Name]
		}
		out = append(out, p)
	}
	return out
}

// LiquorFromLeach is the leach's per-sample liquor as the recovery planner reads it.
func LiquorFromLeach(ls *leach.LiquorSamples) recover.Liquor {
	return recover.Liquor{VolumeL: ls.VolumeL, WaterKg: ls.WaterKg, ElementKg: ls.ElementKg, FreeAcidMol: ls.FreeAcidMol,
		Fe3Kg: ls.Fe3Kg, Anion: ls.Anion, AnionMol: ls.AnionMol}
}

// ProductPrices prices the recovery's products from a price list: each product row at its own
// price; without one, Co, Ni and Cu metal (cathode, cement) at their metal price and Li2CO3 at
// lithium's price per kg of lithium carbonate equivalent. A product with neither stays unpriced.
func ProductPrices(pl *value.PriceList) *recover.ProductPrices {
	if pl == nil {
		return nil
	}
	pp := &recover.ProductPrices{Currency: pl.Currency, PerKg: map[string]float64{}, Source: map[string]string{}}
	for _, p := range pl.Prices {
		key := ""
		switch {
		case p.Element == "Li" && p.Basis == value.BasisLCE:
			key = "Li2CO3"
		case (p.Element == "Co" || p.Element == "Ni" || p.Element == "Cu") && p.Basis == value.BasisMetal:
			key = p.Element
		default:
			continue
		}
		pp.PerKg[key], pp.Source[key] = p.PerKg, "black mass price of "+p.Element+" ("+p.Basis+"): "+p.Source
	}
	for _, p := range pl.Products {
		pp.PerKg[p.Item], pp.Source[p.Item] = p.PerKg, p.Source
	}
	return pp
}

// RecoverLiquor plans the recovery of a measured liquor with the flowsheet of o.Recover (the
// default when nil), over o.Samples draws of the stages' parameters on o.Seed.
func RecoverLiquor(t *Tables, o Options, m *recover.Measured) (*report.LiquorReport, error) {
	if o.Samples < 1 || o.Samples > 200_000 {
		return nil, optionErr("samples", "samples must be from 1 to 200000, got %d", o.Samples)
	}
	if !(m.VolumeL > 0) {
		return nil, optionErr("volume", "%s: a liquor without a volume cannot be planned: give --volume (e.g. 1200L) "+
			"or a volume row", m.File)
	}
	fs := recover.DefaultFlowsheet()
	if o.Recover != nil {
		fs = *o.Recover
	}
	rec, err := recover.Plan(recover.Input{Liquor: m.Samples(o.Samples), Flowsheet: fs, Tables: t.Recover,
		Draws: dist.NewDrawer(o.Seed, o.Samples), Prices: ProductPrices(o.Prices), ReagentPrices: o.RecoverPrices})
	if err != nil {
		return nil, err
	}
	in := o.Inputs
	in.File, in.Seed, in.Samples = m.File, o.Seed, o.Samples
	cur := ""
	if o.RecoverPrices != nil {
		cur = o.RecoverPrices.Currency
	}
	r := &report.LiquorReport{Inputs: in, Liquor: m, Recovery: rec,
		Order: value.Order(nil, recoveryPurchases(rec, o.RecoverPrices), 0, o.Containers, cur)}
	if err := r.CheckFinite(); err != nil {
		return nil, err
	}
	return r, nil
}
