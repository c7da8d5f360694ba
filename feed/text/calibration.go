package text

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"blackmass/feed/calibrate"
	"blackmass/feed/intake"
)

// WriteCalibration prints a calibration for the terminal: which lots it rests on, per element
// the bias and the P10-P90 coverage before and after (leave-one-out) and the factors, then the
// lots left out, those that disagree, and those that could not take part.
func WriteCalibration(w io.Writer, o *calibrate.Outcome) {
	c, r := o.Calibration, o.Report
	fmt.Fprintf(w, "calibration %d of register %s, fitted %s\n", c.Version, o.Register, c.CreatedAt.Format("2006-01-02 15:04 MST"))
	fmt.Fprintf(w, "lots: %d assayed and weighed, %d used, %d left out, %d could not take part\n",
		r.Lots, len(r.Used), len(r.LeftOut), len(o.Skipped))
	fmt.Fprintln(w, "bias: mean ln(assay/estimate), 0 for none (-0.223: the estimate 25 % high);"+
		" after: each lot predicted from the others (leave-one-out)")
	fmt.Fprintln(w, "coverage: share of lots whose assay fell inside the P10-P90 (80 % is what the range claims)")
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "element\tlots\tbias before\tbias after\tcoverage before\tcoverage after\tdisagree\t")
	for _, e := range r.Elements {
		if e.Skipped != "" {
			// The reason is the row's last cell, not tab-terminated: it does not widen the column.
			fmt.Fprintf(tw, "%s\t%d\t%s\n", e.Element, e.Lots, "not fitted: "+e.Skipped)
			continue
		}
		fmt.Fprintf(tw, "%s\t%d\t%+.3f\t%+.3f\t%.0f %%\t%.0f %%\t%d\t\n", e.Element, e.Lots, e.BiasBefore, e.BiasAfter,
			100*e.CoverageBefore, 100*e.CoverageAfter, len(e.Disagree))
	}
	_ = tw.Flush()
	fmt.Fprintln(w, "\nfactors on what reaches the black mass (posterior mean ± sd; prior 1 ± prior sd):")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "element\tchemistry\tformat\tfactor\tsd\tprior sd\tlots\t")
	for _, e := range c.Elements {
		for _, f := range e.Factors {
			format := f.Format
			if format == "" {
				format = "(others pooled)"
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%.3f\t%.3f\t%.3f\t%.1f\t\n", e.Element, intake.Printable(f.Family, 40), format,
				f.Mean, f.SD, f.PriorSD, f.Lots)
		}
	}
	_ = tw.Flush()
	if len(r.LeftOut) > 0 {
		fmt.Fprintln(w, "\nleft out of the fit (--keep LOT to keep one):")
		for _, l := range r.LeftOut {
			fmt.Fprintf(w, "  %s: %s\n", intake.Printable(l.Lot, 64), l.Reason)
		}
	}
	var dis []string
	for _, e := range r.Elements {
		for _, d := range e.Disagree {
			dis = append(dis, fmt.Sprintf("  %s %s: assay %s kg, predicted %s ± %s kg from the other lots (z %+.1f)",
				intake.Printable(d.Lot, 64), e.Element, Num(d.MeasuredKg), Num(d.PredictedKg), Num(d.SDKg), d.Z))
		}
		for _, d := range e.Unexpected {
			dis = append(dis, fmt.Sprintf("  %s %s: assay %s kg where the model expects none", intake.Printable(d.Lot, 64),
				e.Element, Num(d.MeasuredKg)))
		}
	}
	if len(dis) > 0 {
		fmt.Fprintln(w, "\nlots that disagree beyond what the model explains (kept in the fit; --exclude LOT to leave one out):")
		fmt.Fprintln(w, strings.Join(dis, "\n"))
	}
	if len(o.Skipped) > 0 {
		fmt.Fprintln(w, "\ncould not take part:")
		for _, s := range o.Skipped {
			fmt.Fprintf(w, "  %s: %s\n", intake.Printable(s.Lot, 64), s.Reason)
		}
	}
	fmt.Fprintf(w, "\nuse it: blackmass estimate MANIFEST --calibrated --db %s (or --calibrated=%d)\n", o.Register, c.Version)
}
