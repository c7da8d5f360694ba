package sheet

import (
	"fmt"
	"strings"

	"blackmass/feed/recover"
	"blackmass/feed/value"
)

// ValueSheet is the name of the sheet of the order and the value.
const ValueSheet = "Order and value"

// OrderSheetName is the sheet the order is on.
const OrderSheetName = ValueSheet

// valueWidths are the columns of the order and value sheet (A4 landscape at 100 %).
var valueWidths = []float64{28, 11, 11, 11, 11, 12, 15, 11, 20}

// value lays out what to order for the leach (each reagent for the lot at P50 and P90, per tonne
// of black mass, the container to buy it in, its price or the lack of one), then the lot's value
// at the prices given (P10/P50/P90 from the same draws as the metals); without prices it says
// there is no value rather than showing zeros.
func (w *writer) value() error {
	r := w.r
	o := r.Order
	hasOrder := o != nil && len(o.Lines) > 0
	if r.Lot.Lines == 0 && r.Value == nil && !hasOrder {
		return nil
	}
	p, err := w.newPage(ValueSheet, true, valueWidths...)
	if err != nil {
		return err
	}
	if hasOrder {
		w.order(p)
	}
	v := r.Value
	if v == nil {
		p.add("No prices were given, so the lot has no value here (run with --prices FILE).")
		return nil
	}
	p.keepRows(len(v.Elements) + 6)
	p.title(fmt.Sprintf("Value in %s, prices from %s", v.Currency, v.PricesFile))
	p.header("item", "priced kg (P50)", "price per kg", "payable share", "contained value (P50)",
		"payable P10", "payable P50", "payable P90", "price source")
	for _, e := range v.Elements {
		item := e.Element
		if e.Basis == value.BasisLCE {
			item += " as LCE"
		}
		p.add(item, e.ProductKg.P50, money(e.PricePerKg), frac(e.Payable), money(e.Contained.P50), money(e.PayableVal.P10),
			money(e.PayableVal.P50), money(e.PayableVal.P90), as(indented, e.Source))
	}
	p.add(as(total, "lot"), as(total, nil), as(total, nil), as(total, nil), as(total, money(v.Contained.P50)),
		as(total, money(v.Payable.P10)), as(total, money(v.Payable.P50)), as(total, money(v.Payable.P90)), as(total, nil))
	p.blank()
	p.header("per unit and net", "P10", "P50", "P90")
	p.add(wrap("payable per tonne of black mass"), money(v.PayablePerTonneBM.P10), money(v.PayablePerTonneBM.P50), money(v.PayablePerTonneBM.P90))
	if k := v.PayablePerKWh; k != nil {
		p.add(wrap("payable per kWh received"), money(k.P10), money(k.P50), money(k.P90))
	}
	if c := v.ReagentCost; c != nil {
		p.add(wrap("reagent cost"), money(c.P10), money(c.P50), money(c.P90))
	}
	if n := v.NetOfReagents; n != nil {
		p.add(wrap("payable net of reagents"), money(n.P10), money(n.P50), money(n.P90))
	}
	p.blank()
	if rec := r.Recovery; rec != nil && rec.Value != nil {
		productValue(p, rec.Value)
	}
	for _, n := range v.Notes {
		p.paragraph(n, plain)
	}
	return nil
}

// order lays out the order table.
func (w *writer) order(p *page) {
	o := w.r.Order
	cur := o.Currency
	if cur == "" {
		cur = "no currency given"
	}
	mu, vu, perKg, perL := orderUnits(o)
	p.title("Reagents to order: " + o.Basis)
	p.header("reagent", mu+" P50", mu+" P90", vu+" P50", vu+" P90", "kg per t of black mass (P50)", "buy (P90)", "price per kg", "cost P90 ("+cur+")")
	for _, l := range o.Lines {
		var lp50, lp90, price any
		if l.Litres != nil {
			lp50, lp90 = kg(l.Litres.P50*perL), kg(l.Litres.P90*perL)
		}
		var cost any = "not priced"
		if l.PricePerKg > 0 {
			price = money(l.PricePerKg)
		} else {
			price = "not priced"
		}
		if l.CostP90 != nil {
			cost = money(*l.CostP90)
		}
		p.add(l.Reagent, kg(l.Kg.P50*perKg), kg(l.Kg.P90*perKg), lp50, lp90, kg(l.KgPerTonneBM), as(indented, suggestion(l)), price, cost)
	}
	if len(o.Unpriced) > 0 {
		p.add(note("Not priced reagents are left out of every cost; give --acid-price and --h2o2-price (--recover-prices for the recovery's) to price them."))
	}
	if len(o.NotBought) > 0 {
		p.add(note("Not bought (air, or made on site): " + strings.Join(o.NotBought, ", ") + "."))
	}
	p.blank()
}

// productValue lays out the recovery's products at product prices, beside the payables: each
// priced product P10/P50/P90, those not priced, and the total.
func productValue(p *page, pv *recover.ProductValue) {
	p.keepRows(len(pv.Items) + len(pv.Unpriced) + 3)
	p.title(fmt.Sprintf("Recovered products instead, at product prices (%s)", pv.Currency))
	p.header("product", "dry kg (P50)", "price per kg", "priced as", "", "value P10", "value P50", "value P90", "price source")
	for _, it := range pv.Items {
		p.add(it.Name, it.DryKg.P50, money(it.PricePerKg), as(indented, it.Item), nil, money(it.Value.P10), money(it.Value.P50),
			money(it.Value.P90), as(indented, it.Source))
	}
	for _, name := range pv.Unpriced {
		p.add(name, nil, "not priced")
	}
	p.add(as(total, "products"), as(total, nil), as(total, nil), as(total, nil), as(total, nil), as(total, money(pv.Total.P10)),
		as(total, money(pv.Total.P50)), as(total, money(pv.Total.P90)), as(total, nil))
	p.blank()
}
