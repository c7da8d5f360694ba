// Package text renders a report for the terminal: a summary a bench acts on first, then the
// detail. It formats; it computes nothing.
package text

import (
	"fmt"
	"io"
	"maps"
	"math"
	"slices"
	"strings"
	"text/tabwriter"

	"blackmass/cathode"
	"blackmass/feed/intake"
	"blackmass/feed/lot"
	"blackmass/feed/recover"
	"blackmass/feed/report"
	"blackmass/feed/value"
)

// Write prints a report for the terminal: a short summary first (the lot, its black
// mass and key metals, the reagents, the value, and every warning), then, unless quiet, the
// detail. command names the command that made it. It formats; it computes nothing.
func Write(w io.Writer, r *report.Report, command string, quiet bool) {
	writeSummaryText(w, r, command)
	if quiet {
		writeSafety(w, r)
		return
	}
	fmt.Fprintln(w, "\ndetail")
	in := r.Inputs
	fmt.Fprintf(w, "Monte Carlo: %d samples, seed %d; P10/P50/P90 = 10th/50th/90th percentiles\n", in.Samples, in.Seed)
	if r.Lot.Lines > 0 {
		fmt.Fprintf(w, "mass check: %d of %d lines with a weight fall outside their plausible Wh/kg\n", r.Lot.LinesFlaggedByMass, r.Lot.LinesWithMass)
	}
	fmt.Fprintln(w)
	u, f := massUnit(r.BlackMassKg.P50)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "element\tP10 %s\tP50 %s\tP90 %s\tP10 wt%%\tP50 wt%%\tP90 wt%%\t\n", u, u, u)
	fmt.Fprintf(tw, "black mass\t%s\t%s\t%s\t\t\t\t\n", Num(f*r.BlackMassKg.P10), Num(f*r.BlackMassKg.P50), Num(f*r.BlackMassKg.P90))
	for _, sym := range r.ElementOrder {
		a := r.Elements[sym]
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%.2f\t%.2f\t%.2f\t\n", sym, Num(f*a.Kg.P10), Num(f*a.Kg.P50), Num(f*a.Kg.P90), a.WtPct.P10, a.WtPct.P50, a.WtPct.P90)
	}
	tw.Flush()
	fmt.Fprintln(w)
	if len(r.Groups) > 0 {
		writeGroupsText(w, r)
	}
	writeLeachText(w, r)
	WriteRecovery(w, r.Recovery)
	writeOrderText(w, r.Order)
	writeValueText(w, r)
	writeTail(w, r)
}

// WriteOrder prints an order sheet on its own (a measured liquor's recovery reagents).
func WriteOrder(w io.Writer, o *value.OrderSheet) { writeOrderText(w, o) }

// writeOrderText prints the order sheet: each reagent for the lot and per tonne of black mass,
// in the containers named, with its price or the lack of one.
func writeOrderText(w io.Writer, o *value.OrderSheet) {
	if o == nil || len(o.Lines) == 0 {
		return
	}
	cur := o.Currency
	if cur == "" {
		cur = "(no currency given)"
	}
	fmt.Fprintf(w, "\norder sheet (%s):\n", o.Basis)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  reagent\tfor the lot P50 / P90\tper t black mass\tbuy (P90)\tcost P90")
	for _, l := range o.Lines {
		amount := FmtMass(l.Kg.P50) + " / " + FmtMass(l.Kg.P90)
		if l.Litres != nil {
			amount += " (" + fmtVolume(l.Litres.P50) + " / " + fmtVolume(l.Litres.P90) + ")"
		}
		buy := "no container given"
		if c := l.Suggested; c != nil {
			buy = fmt.Sprintf("%d × %s", c.Count, c.Container)
		}
		cost := "no price given"
		if l.CostP90 != nil {
			cost = Money(*l.CostP90) + " " + cur
		}
		perT := "—" // no black mass: a measured liquor
		if l.KgPerTonneBM > 0 {
			perT = FmtMass(l.KgPerTonneBM)
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\n", l.Reagent, amount, perT, buy, cost)
	}
	tw.Flush()
	if len(o.Unpriced) > 0 {
		fmt.Fprintf(w, "  not priced: %s (their cost is left out of every total)\n", strings.Join(o.Unpriced, ", "))
	}
	if len(o.NotBought) > 0 {
		fmt.Fprintf(w, "  not bought: %s (air, or made on site)\n", strings.Join(o.NotBought, ", "))
	}
}

// keyMetalsShown are the metals the summary names.
var keyMetalsShown = []string{"Co", "Ni", "Li", "Mn"}

// writeSummaryText prints the summary: what a bench decides on.
func writeSummaryText(w io.Writer, r *report.Report, command string) {
	in := r.Inputs
	title := "blackmass " + command
	if in.LotID != "" {
		title += " — lot " + intake.Printable(in.LotID, 80)
	}
	if in.Supplier != "" {
		title += " from " + intake.Printable(in.Supplier, 80)
	}
	fmt.Fprintln(w, title)
	sha := in.SHA256
	if len(sha) > 12 {
		sha = sha[:12] + "…"
	}
	fmt.Fprintf(w, "input %s (sha256 %s)\n", intake.Printable(in.File, 200), sha)
	if r.Lot.Lines > 0 {
		fmt.Fprintf(w, "lot: %d lines, %d items, %d cells, %s nameplate", r.Lot.Lines, r.Lot.Items, r.Lot.Cells, fmtEnergy(r.Lot.NameplateKWh))
		if r.Lot.ChargeOnlyAh > 0 {
			fmt.Fprintf(w, " + %s Ah given without voltage", Num(r.Lot.ChargeOnlyAh))
		}
		if r.Lot.MassOnlyKg > 0 {
			fmt.Fprintf(w, " + %s known by weight only", FmtMass(r.Lot.MassOnlyKg))
		}
		fmt.Fprintln(w)
	} else {
		fmt.Fprintln(w, "black mass weighed, composition from a lab assay")
	}
	if r.Basis != "" {
		fmt.Fprintf(w, "basis: %s\n", r.Basis)
	}
	if wg := r.Weighing; wg != nil && wg.MoistureWtPct.P90 == 0 {
		fmt.Fprintf(w, "weighed %s (moisture 0 wt%%, %s)\n", FmtMass(wg.WetMassKg), intake.Printable(wg.MoistureBasis, 80))
	} else if wg != nil {
		fmt.Fprintf(w, "weighed %s wet, %s dry (moisture %s wt%%, %s)\n", FmtMass(wg.WetMassKg), FmtMass(wg.DryMassKg.P50),
			Num(wg.MoistureWtPct.P50), intake.Printable(wg.MoistureBasis, 80))
	}
	for _, nl := range r.NonLithium {
		mass := ""
		if nl.MassKg > 0 {
			mass = ", " + FmtMass(nl.MassKg) + " weighed"
		}
		fmt.Fprintf(w, "not lithium-ion, kept out of the black mass: %s, %d items on %d lines%s\n",
			intake.Printable(nl.Name, 60), nl.Items, len(nl.Lines), mass)
	}
	b := r.BlackMassKg
	fmt.Fprintf(w, "black mass: %s (P10–P90 %s–%s)\n", FmtMass(b.P50), FmtMass(b.P10), FmtMass(b.P90))
	var metals []string
	for _, el := range keyMetalsShown {
		if a, ok := r.Elements[el]; ok && a.Kg.P90 > 0 {
			metals = append(metals, fmt.Sprintf("%s %s (%s–%s, %.1f wt%%)", el, FmtMass(a.Kg.P50), Num(a.Kg.P10*unitFactor(a.Kg.P50)), Num(a.Kg.P90*unitFactor(a.Kg.P50)), a.WtPct.P50))
		}
	}
	if len(metals) > 0 {
		fmt.Fprintln(w, "metals (P50, P10–P90): "+strings.Join(metals, "; "))
	}
	if l := r.Leach; l != nil {
		var parts []string
		for _, g := range l.Reagents {
			p := g.Name + " " + FmtMass(g.Kg.P50)
			if g.DensityGmL > 0 {
				p += " (" + fmtVolume(g.Litres.P50) + ")"
			}
			parts = append(parts, p)
		}
		parts = append(parts, "make-up water "+fmtVolume(l.WaterL.P50))
		fmt.Fprintf(w, "leach (%s): %s\n", l.Route, strings.Join(parts, ", "))
	}
	if v := r.Value; v != nil {
		fmt.Fprintf(w, "value: payable %s %s (P10–P90 %s–%s), prices from %s\n", Money(v.Payable.P50), v.Currency, Money(v.Payable.P10), Money(v.Payable.P90), intake.Printable(v.PricesFile, 100))
	}
	writeRecoverySummary(w, r.Recovery)
	var warn []string
	warn = append(warn, r.Warnings...)
	if r.Leach != nil {
		warn = append(warn, r.Leach.Warnings...)
	}
	if r.Recovery != nil {
		for _, s := range r.Recovery.Warnings {
			warn = append(warn, "recovery "+s)
		}
	}
	if len(warn) > 0 {
		fmt.Fprintln(w, "warnings:")
		for _, s := range warn {
			fmt.Fprintln(w, "  ! "+intake.Printable(s, maxPrintedRunes))
		}
	}
}

// unitFactor is the factor of the mass unit that suits kg.
func unitFactor(kg float64) float64 {
	_, f := massUnit(kg)
	return f
}

func writeGroupsText(w io.Writer, r *report.Report) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "chemistry\tformat\tlines\titems\tnameplate\tblack mass P50 kg")
	for _, g := range r.Groups {
		plate := fmt.Sprintf("%.2f kWh", g.NameplateKWh)
		if g.MassOnlyKg > 0 {
			if g.NameplateKWh > 0 {
				plate += fmt.Sprintf(" + %s kg by weight", Num(g.MassOnlyKg))
			} else {
				plate = fmt.Sprintf("%s kg by weight", Num(g.MassOnlyKg))
			}
		}
		if g.ChargeOnlyAh > 0 {
			if g.NameplateKWh > 0 {
				plate += fmt.Sprintf(" + %.0f Ah", g.ChargeOnlyAh)
			} else {
				plate = fmt.Sprintf("%.0f Ah", g.ChargeOnlyAh)
			}
		}
		fmt.Fprintf(tw, "%s\t%s\t%d\t%d\t%s\t%s\n", g.Chemistry, g.Format, g.Lines, g.Items, plate, Num(g.BlackMassKg.P50))
	}
	tw.Flush()
	writeLabelsText(w, r.Labels)
}

// writeLabelsText lists the labels that were not read as one catalogued chemistry: what each
// became, on how many lines, and its share of the energy.
func writeLabelsText(w io.Writer, labels []lot.LabelResolution) {
	var show []lot.LabelResolution
	for _, lb := range labels {
		if lb.Kind != string(cathode.KindCatalogued) || lb.Label != lb.ResolvedAs {
			show = append(show, lb)
		}
	}
	if len(show) == 0 {
		return
	}
	fmt.Fprintln(w, "\nlabels as read:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  label\tread as\tkind\tlines\tenergy share")
	for _, lb := range show {
		kind := lb.Kind
		if lb.Unrecognised {
			kind = "not recognised → unknown"
		}
		fmt.Fprintf(tw, "  %q\t%s\t%s\t%d\t%.1f %%\n", intake.Printable(lb.Label, 40), lb.ResolvedAs, kind, lb.Lines, 100*lb.EnergyShare)
	}
	tw.Flush()
}

// writeValueText prints the lot's value, or says there is none without prices.
func writeValueText(w io.Writer, r *report.Report) {
	v := r.Value
	if v == nil {
		if r.Lot.Lines > 0 {
			fmt.Fprintln(w, "\nvalue: no prices given, so no value (--prices FILE)")
		}
		return
	}
	fmt.Fprintf(w, "\nvalue (%s, prices from %s)\n", v.Currency, intake.Printable(v.PricesFile, 120))
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "item\tpriced kg P50\tprice/kg\tpayable\tcontained P50\tpayable P10\tpayable P50\tpayable P90\t\n")
	for _, e := range v.Elements {
		item := e.Element
		if e.Basis == value.BasisLCE {
			item += " as LCE"
		}
		fmt.Fprintf(tw, "%s\t%s\t%.2f\t%.0f %%\t%s\t%s\t%s\t%s\t\n", item, Num(e.ProductKg.P50), e.PricePerKg, 100*e.Payable,
			Money(e.Contained.P50), Money(e.PayableVal.P10), Money(e.PayableVal.P50), Money(e.PayableVal.P90))
	}
	fmt.Fprintf(tw, "lot\t\t\t\t%s\t%s\t%s\t%s\t\n", Money(v.Contained.P50), Money(v.Payable.P10), Money(v.Payable.P50), Money(v.Payable.P90))
	tw.Flush()
	fmt.Fprintf(w, "payable per tonne of black mass: %s (P50)", Money(v.PayablePerTonneBM.P50))
	if v.PayablePerKWh != nil {
		fmt.Fprintf(w, "; per kWh received: %.2f (P50)", v.PayablePerKWh.P50)
	}
	fmt.Fprintln(w)
	if v.NetOfReagents != nil {
		fmt.Fprintf(w, "reagents %s, payable net of reagents %s / %s / %s (P10/P50/P90)\n", Money(v.ReagentCost.P50), Money(v.NetOfReagents.P10), Money(v.NetOfReagents.P50), Money(v.NetOfReagents.P90))
	}
	if rec := r.Recovery; rec != nil && rec.Value != nil {
		writeProductValueText(w, rec.Value)
	}
	for _, n := range v.Notes {
		fmt.Fprintln(w, "  - "+n)
	}
}

// writeProductValueText prints the recovery's products at product prices, beside the black
// mass's payables: each priced product P10/P50/P90, the total, and those not priced.
func writeProductValueText(w io.Writer, pv *recover.ProductValue) {
	fmt.Fprintf(w, "recovered products instead (%s, P10/P50/P90):\n", pv.Currency)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "product\tdry kg P50\tprice/kg\tvalue P10\tvalue P50\tvalue P90\t\n")
	for _, it := range pv.Items {
		fmt.Fprintf(tw, "%s\t%s\t%.2f\t%s\t%s\t%s\t\n", it.Name, Num(it.DryKg.P50), it.PricePerKg, Money(it.Value.P10),
			Money(it.Value.P50), Money(it.Value.P90))
	}
	for _, name := range pv.Unpriced {
		fmt.Fprintf(tw, "%s\t\tnot priced\t\t\t\t\n", name)
	}
	fmt.Fprintf(tw, "products\t\t\t%s\t%s\t%s\t\n", Money(pv.Total.P10), Money(pv.Total.P50), Money(pv.Total.P90))
	tw.Flush()
}

// Money prints an amount of money to the unit (cents for small amounts).
func Money(x float64) string {
	if math.Abs(x) < 100 {
		return fmt.Sprintf("%.2f", x)
	}
	return fmt.Sprintf("%.0f", x)
}

// maxPrintedRunes bounds one printed message: user text inside it (ids, labels) is escaped and
// shortened so that it cannot drive the terminal or flood it.
const maxPrintedRunes = 600

func writeTail(w io.Writer, r *report.Report) {
	if r.Reconciliation != nil {
		writeReconcileText(w, r.Reconciliation)
	}
	if r.Mix != nil {
		fmt.Fprintln(w)
		WriteMix(w, r.Mix)
	}
	writeSafety(w, r)
}

// writeSafety prints the report's safety cautions.
func writeSafety(w io.Writer, r *report.Report) {
	fmt.Fprintln(w, "\nsafety:")
	for _, s := range r.Safety {
		fmt.Fprintln(w, "  - "+s)
	}
}

func writeLeachText(w io.Writer, r *report.Report) {
	l := r.Leach
	if l == nil {
		return
	}
	st := l.Settings
	fmt.Fprintf(w, "\nleach plan: %s, %g g/L pulp density", l.Route, st.PulpDensityGPerL)
	if st.LiquorVolumeL > 0 {
		fmt.Fprintf(w, " (fixed volume %g L)", st.LiquorVolumeL)
	}
	fmt.Fprintln(w)
	if st.RecipeAcidMolPerL > 0 {
		fmt.Fprintf(w, "dosing (bench recipe): %g mol/L %s", st.RecipeAcidMolPerL, l.Reagents[0].Name)
	} else {
		fmt.Fprintf(w, "dosing: acid %g× stoichiometry + %g mol/L free acid", st.AcidExcess, st.FreeAcidMolPerL)
	}
	switch {
	case len(l.Reagents) < 2:
		fmt.Fprintln(w, ", no reductant")
	case st.RecipeH2O2VolPct > 0:
		fmt.Fprintf(w, ", peroxide %g vol%% of %g %% H2O2\n", st.RecipeH2O2VolPct, st.H2O2WtPct)
	case st.RecipeReductantGPerL > 0:
		fmt.Fprintf(w, ", %s %g g/L\n", st.Reductant, st.RecipeReductantGPerL)
	default:
		fmt.Fprintf(w, ", %s %g× stoichiometry\n", st.Reductant, st.ReductantExcess)
	}
	fmt.Fprintf(w, "temperature %g °C\n", st.TemperatureC)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "reagent\tP10 kg\tP50 kg\tP90 kg\tP50 L\t× plan P50\t× full P10\t")
	for _, g := range l.Reagents {
		litres := Num(g.Litres.P50)
		if g.DensityGmL == 0 {
			litres = "(solid/gas)"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%.2f\t%.2f\t\n", g.Name, Num(g.Kg.P10), Num(g.Kg.P50), Num(g.Kg.P90), litres, g.Ratio.P50, g.RatioFull.P10)
	}
	fmt.Fprintf(tw, "make-up water\t\t\t\t%s\t\t\t\n", Num(l.WaterL.P50))
	tw.Flush()
	for _, lim := range l.Limiting {
		fmt.Fprintf(w, "limited by %s in %.0f %% of samples (reaches %.0f %% of the plan, P50)\n", lim.Reagent, 100*lim.SampleShare, 100*lim.ReachedShare.P50)
	}
	if sc := l.Scrubber; sc != nil {
		fmt.Fprintf(w, "chlorine scrubber: %s kg %s (%s L, P50; %s)\n", Num(sc.Kg.P50), sc.Reagent, Num(sc.Litres.P50), sc.Reaction)
	}
	if l.TotalCost != nil {
		cur := ""
		if l.Prices != nil {
			cur = l.Prices.Currency
		}
		if cur == "" {
			cur = "(no currency given)"
		}
		fmt.Fprintf(w, "reagent cost P10/P50/P90: %s / %s / %s %s", Money(l.TotalCost.P10), Money(l.TotalCost.P50), Money(l.TotalCost.P90), cur)
		if r.Order != nil {
			var unpriced []string
			for _, ol := range r.Order.Lines {
				if ol.Stage == value.StageLeach && ol.CostP90 == nil {
					unpriced = append(unpriced, ol.Reagent)
				}
			}
			if len(unpriced) > 0 {
				fmt.Fprintf(w, " (without %s: no price given)", strings.Join(unpriced, ", "))
			}
		}
		fmt.Fprintln(w)
	}
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "gas (0 °C, 1 atm)\tP50 mol\tP50 volume\tP90 volume\t")
	for _, name := range slices.Sorted(maps.Keys(l.Gases)) {
		g := l.Gases[name]
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t\n", name, Num(g.Mol.P50), fmtVolume(1000*g.M3STP.P50), fmtVolume(1000*g.M3STP.P90))
	}
	tw.Flush()
	fmt.Fprintf(w, "liquor: %s (P50), free acid %.2f mol/L (P50), %s %.2f mol/L\n", fmtVolume(l.Liquor.VolumeL.P50), l.FreeAcidMolPerL.P50, l.Liquor.Anion, l.Liquor.AnionMolPerL.P50)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "element\tP10 g/L\tP50 g/L\tP90 g/L\tP50 mol/L\textraction P50\t")
	order := append(slices.Clone(r.ElementOrder), "Na")
	for _, sym := range order {
		c, ok := l.Liquor.Elements[sym]
		if !ok {
			continue
		}
		x := ""
		if e, ok := l.Liquor.ExtractionReached[sym]; ok {
			x = fmt.Sprintf("%.1f %%", 100*e.P50)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%.4f\t%s\t\n", sym, Num(c.GPerL.P10), Num(c.GPerL.P50), Num(c.GPerL.P90), c.MolPerL.P50, x)
	}
	tw.Flush()
	var sat []string
	for _, k := range slices.Sorted(maps.Keys(l.Saturation)) {
		sat = append(sat, fmt.Sprintf("%s %.2f at %g °C", k, l.Saturation[k].P50, l.SaturationAtC[k]))
	}
	fmt.Fprintf(w, "saturation ratio where least soluble between 20 °C and the leach (P50): %s\n", strings.Join(sat, ", "))
	fmt.Fprintln(w, "leach cautions:")
	for _, s := range l.Safety {
		fmt.Fprintln(w, "  - "+s)
	}
}
