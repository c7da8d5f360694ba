package text

import (
	"blackmass/feed/assay"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"
)

// WriteMix prints the chemistry mix that best explains an assay, with its bootstrap ranges and
// residuals.
func WriteMix(w io.Writer, m *assay.MixFit) {
	fmt.Fprintf(w, "chemistry mix that best explains the assay (%d bootstrap draws)\n", m.Bootstrap)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "component\tbest kg/kg\tP10\tP50\tP90\t95 % range\tcathode share (best)\tshare P10–P90\t")
	multimodal := false
	for _, c := range m.Components {
		share, spread := "", ""
		if c.BestShare != nil {
			share = fmt.Sprintf("%.3f", *c.BestShare)
		}
		if c.CathodeShare != nil {
			spread = fmt.Sprintf("%.3f–%.3f", c.CathodeShare.P10, c.CathodeShare.P90)
		}
		mark := ""
		if c.Multimodal {
			mark, multimodal = "*", true
		}
		fmt.Fprintf(tw, "%s\t%.4f%s\t%.4f\t%.4f\t%.4f\t%.4f–%.4f\t%s\t%s\t\n", c.Name, c.Best, mark, c.KgPerKg.P10, c.KgPerKg.P50, c.KgPerKg.P90,
			c.Interval95[0], c.Interval95[1], share, spread)
	}
	tw.Flush()
	if multimodal {
		fmt.Fprintln(w, "* multi-modal bootstrap: the best fit is one of several near-equal mixes (see the note)")
	}
	fmt.Fprintf(w, "explained mass fraction %.3f\n", m.Explained)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "element\tassay − fit wt%\tin σ\t")
	for _, r := range m.Residuals {
		fmt.Fprintf(tw, "%s\t%+.3f\t%+.2f\t\n", r.Element, r.WtPct, r.Sigma)
	}
	tw.Flush()
	for _, n := range m.Notes {
		fmt.Fprintln(w, "  note: "+n)
	}
}

// writeReconcileText prints the estimate beside the assay, element by element.
func writeReconcileText(w io.Writer, rc *assay.Reconciliation) {
	fmt.Fprintf(w, "\nestimate vs assay (flag above %.1f σ)\n", rc.Threshold)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "element\testimate wt%\t± σ\tassay wt%\t± σ\tdifference σ\t\t")
	for _, c := range rc.Comparisons {
		flag := ""
		if c.Flag {
			flag = "DISAGREES"
		}
		if c.Interpretation != "" && !c.Flag {
			flag = "not modelled"
		}
		as, asd := fmt.Sprintf("%.2f", c.AssayWtPct), fmt.Sprintf("%.2f", c.AssaySigma)
		if strings.HasPrefix(c.AssayText, "<") { // below the detection limit: the limit, not its middle
			as, asd = strings.TrimSuffix(c.AssayText, " wt%"), "range"
		}
		fmt.Fprintf(tw, "%s\t%.2f\t%.2f\t%s\t%s\t%+.1f\t%s\t\n", c.Element, c.EstimateWtPct, c.EstimateSigma, as, asd, c.Z, flag)
	}
	tw.Flush()
	for _, c := range rc.Comparisons {
		if c.Flag {
			fmt.Fprintf(w, "  %s: %s\n", c.Element, c.Interpretation)
		}
	}
}
