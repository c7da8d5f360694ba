package main

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"blackmass/feed"
)

// writeReportText prints the terminal summary of a report. It formats; it computes nothing.
func writeReportText(w io.Writer, r *feed.Report) {
	in := r.Inputs
	title := "blackmass estimate"
	if in.LotID != "" {
		title += " — lot " + in.LotID
	}
	if in.Supplier != "" {
		title += " from " + in.Supplier
	}
	fmt.Fprintln(w, title)
	fmt.Fprintf(w, "manifest %s (sha256 %s…)\n", in.File, in.SHA256[:12])
	fmt.Fprintf(w, "%d lines, %d items, %d cells, %.2f kWh nameplate", r.Lot.Lines, r.Lot.Items, r.Lot.Cells, r.Lot.NameplateKWh)
	if r.Lot.ChargeOnlyAh > 0 {
		fmt.Fprintf(w, " + %.1f Ah given without voltage", r.Lot.ChargeOnlyAh)
	}
	fmt.Fprintf(w, "\nMonte Carlo: %d samples, seed %d; P10/P50/P90 = 10th/50th/90th percentiles\n\n", in.Samples, in.Seed)

	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "black mass\tP10 kg\tP50 kg\tP90 kg\t")
	fmt.Fprintf(tw, "total\t%s\t%s\t%s\t\n", num(r.BlackMassKg.P10), num(r.BlackMassKg.P50), num(r.BlackMassKg.P90))
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "element\tP10 kg\tP50 kg\tP90 kg\tP10 wt%\tP50 wt%\tP90 wt%\t")
	for _, sym := range r.ElementOrder {
		a := r.Elements[sym]
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%.2f\t%.2f\t%.2f\t\n", sym, num(a.Kg.P10), num(a.Kg.P50), num(a.Kg.P90), a.WtPct.P10, a.WtPct.P50, a.WtPct.P90)
	}
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "chemistry\tformat\tlines\titems\tkWh\tblack mass P50 kg")
	for _, g := range r.Groups {
		fmt.Fprintf(tw, "%s\t%s\t%d\t%d\t%.2f\t%s\n", g.Chemistry, g.Format, g.Lines, g.Items, g.NameplateKWh, num(g.BlackMassKg.P50))
	}
	tw.Flush()
	writeLeachText(w, r)
	if len(r.Warnings) > 0 {
		fmt.Fprintln(w, "\nwarnings:")
		for _, s := range r.Warnings {
			fmt.Fprintln(w, "  - "+s)
		}
	}
	fmt.Fprintln(w, "\nsafety:")
	for _, s := range r.Safety {
		fmt.Fprintln(w, "  - "+s)
	}
}

// num prints a mass with 3 significant figures, without exponent notation.
func num(v float64) string {
	switch {
	case v == 0:
		return "0"
	case v >= 100 || v <= -100:
		return fmt.Sprintf("%.0f", v)
	case v >= 10 || v <= -10:
		return fmt.Sprintf("%.1f", v)
	case v >= 1 || v <= -1:
		return fmt.Sprintf("%.2f", v)
	}
	s := fmt.Sprintf("%.3g", v)
	if strings.Contains(s, "e") {
		return fmt.Sprintf("%.6f", v)
	}
	return s
}

func writeLeachText(w io.Writer, r *feed.Report) {}
