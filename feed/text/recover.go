package text

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

// WriteRecovery prints the recovery plan: each stage's reagents, solids, gases, electricity
// and figures, then the products and their value, where each element goes, the water balance
// and the cautions.
func WriteRecovery(w io.Writer, r *recover.Report) {
	if r == nil {
		return
	}
	fmt.Fprintln(w, "\nrecovery plan (P10 / P50 / P90 over the samples)")
	for i, st := range r.Stages {
		fmt.Fprintf(w, "\n%d. %s: %s\n", i+1, st.Kind, st.Description)
		writeStageText(w, st)
	}
	writeProductsText(w, r)
	fmt.Fprintln(w, "\nrecovery reagents to order (as bought, all stages):")
	tw0 := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, g := range r.Reagents {
		l := ""
		if g.Litres != nil {
			l = fmt.Sprintf("%s / %s L", Num(g.Litres.P50), Num(g.Litres.P90))
		}
		fmt.Fprintf(tw0, "  %s %g %%\t%s / %s kg (P50 / P90)\t%s\t\n", g.Name, g.WtPct, Num(g.Commercial.P50),
			Num(g.Commercial.P90), l)
	}
	tw0.Flush()
	if c := r.Cost; c != nil {
		for _, it := range c.Items {
			fmt.Fprintf(w, "  cost of %s: %s %s\n", it.Name, stat3(it.Kg), c.Currency)
		}
		fmt.Fprintf(w, "  recovery reagents' cost: %s %s", stat3(c.Total), c.Currency)
		if len(c.Unpriced) > 0 {
			fmt.Fprintf(w, " (without %s: no price given)", strings.Join(c.Unpriced, ", "))
		}
		fmt.Fprintln(w)
		if c.Net != nil {
			fmt.Fprintf(w, "  products' value less the reagents' cost: %s %s\n", stat3(*c.Net), c.Currency)
		}
	}
	writeFatesText(w, r)
	fmt.Fprintln(w, "\nwater balance (kg, + into the solution, - out of it):")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	for _, f := range r.Water {
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t\n", f.Name, Num(f.Kg.P10), Num(f.Kg.P50), Num(f.Kg.P90))
	}
	tw.Flush()
	worst := 0.0
	for _, v := range r.BalanceResidual {
		worst = max(worst, v)
	}
	fmt.Fprintf(w, "element balance (liquor + reagents = products + cakes + gases + solutions left): largest residual %.1e; "+
		"charge %.1e; water %.1e\n", worst, r.ChargeResidual, r.WaterResidual)
	for _, wn := range r.Warnings {
		fmt.Fprintln(w, "warning: "+wn)
	}
	fmt.Fprintln(w, "recovery cautions:")
	seen := map[string]bool{}
	for _, st := range r.Stages {
		for _, c := range st.Cautions {
			if !seen[c] {
				seen[c] = true
				fmt.Fprintf(w, "  - %s\n", c)
			}
		}
	}
	for _, c := range r.Cautions {
		fmt.Fprintf(w, "  - %s\n", c)
	}
}

// writeRecoverySummary is the recovery's line in the summary: the products (P50) and their value.
func writeRecoverySummary(w io.Writer, r *recover.Report) {
	if r == nil {
		return
	}
	var parts []string
	for _, p := range r.Products {
		parts = append(parts, fmt.Sprintf("%s %s", p.Name, FmtMass(p.DryKg.P50)))
	}
	fmt.Fprintf(w, "recovery: %s (P50)", strings.Join(parts, ", "))
	if v := r.Value; v != nil {
		fmt.Fprintf(w, "; products' value %s %s", Money(v.Total.P50), v.Currency)
	}
	if c := r.Cost; c != nil {
		fmt.Fprintf(w, "; reagents' cost %s %s", Money(c.Total.P50), c.Currency)
	}
	fmt.Fprintln(w)
}

func stat3(s dist.Stat) string { return Num(s.P10) + " / " + Num(s.P50) + " / " + Num(s.P90) }

func writeStageText(w io.Writer, st recover.StageReport) {
	fmt.Fprintf(w, "   setting: %s\n", st.Setting)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, g := range st.Reagents {
		l := ""
		if g.Litres != nil {
			l = fmt.Sprintf(", %s L", Num(g.Litres.P50))
		}
		fmt.Fprintf(tw, "   reagent %s\t%s kg\tas bought %g %%: %s kg%s (P50)\t\n", g.Name, stat3(g.Kg), g.WtPct,
			Num(g.Commercial.P50), l)
	}
	for _, s := range st.Solids {
		var parts []string
		if s.WetKg != nil {
			parts = append(parts, fmt.Sprintf("wet %s kg", Num(s.WetKg.P50)))
		}
		for k, e := range s.Elements {
			if k == 5 || e.WtPct.P50 < 0.001 {
				break
			}
			parts = append(parts, fmt.Sprintf("%s %.3g %%", e.Name, e.WtPct.P50))
		}
		fmt.Fprintf(tw, "   %s %s\t%s kg dry\t%s (P50)\t\n", s.Kind, s.Name, stat3(s.DryKg), strings.Join(parts, ", "))
	}
	for _, g := range st.Gases {
		fmt.Fprintf(tw, "   gas %s\t%s kg\t%s (P50, 0 °C, 1 atm)\t\n", g.Formula, stat3(g.Kg), fmtVolume(g.Litres.P50))
	}
	if st.KWh != nil {
		fmt.Fprintf(tw, "   electricity\t%s kWh\t%s h at the current density and area given (P50)\t\n", stat3(*st.KWh),
			Num(st.Hours.P50))
	}
	for _, f := range st.Figures {
		fmt.Fprintf(tw, "   %s\t%s\t\t\n", f.Name, stat3(f.Value))
	}
	tw.Flush()
}

func writeProductsText(w io.Writer, r *recover.Report) {
	fmt.Fprintln(w, "\nproducts:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, p := range r.Products {
		main := ""
		if len(p.Elements) > 0 {
			main = fmt.Sprintf("%s %.3g %% (P50)", p.Elements[0].Name, p.Elements[0].WtPct.P50)
		}
		fmt.Fprintf(tw, "  %s\t%s kg dry\t%s\t\n", p.Name, stat3(p.DryKg), main)
	}
	tw.Flush()
	if v := r.Value; v != nil {
		for _, it := range v.Items {
			fmt.Fprintf(w, "  value of %s: %s %s (%s kg P50 at %s/kg as %s)\n", it.Name, stat3(it.Value), v.Currency,
				Num(it.DryKg.P50), Money(it.PricePerKg), it.Item)
		}
		for _, name := range v.Unpriced {
			fmt.Fprintf(w, "  value of %s: not priced\n", name)
		}
		fmt.Fprintf(w, "  products' value: %s %s", stat3(v.Total), v.Currency)
		if len(v.Unpriced) > 0 {
			fmt.Fprintf(w, " (without %s: no price given)", strings.Join(v.Unpriced, ", "))
		}
		fmt.Fprintln(w)
	}
}

func writeFatesText(w io.Writer, r *recover.Report) {
	fmt.Fprintln(w, "\nwhere each element goes (share of liquor + reagents, P50):")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, f := range r.Fates {
		var to []string
		for _, t := range f.To {
			if t.WtPct.P50 < 0.05 {
				continue
			}
			to = append(to, fmt.Sprintf("%s %.1f %%", t.Name, t.WtPct.P50))
		}
		fmt.Fprintf(tw, "  %s\t%s kg in\t%s\t\n", f.Element, Num(f.InKg.P50), strings.Join(to, ", "))
	}
	tw.Flush()
}
