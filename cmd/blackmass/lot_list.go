package main

import (
	"context"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/text"
	"blackmass/feed/value"
)

// listMetals are the metals lot list shows, each on its basis.
var listMetals = []string{"Co", "Ni", "Li"}

func newLotListCmd(lo *lotOptions) *cobra.Command {
	var f register.Filter
	cmd := &cobra.Command{
		Use:     "list",
		Short:   "List the lots in the register on their best evidence (filter by supplier, date received, chemistry)",
		Example: "  blackmass lot list --supplier \"Larkfield Municipal Drop-off Yard\" --from 2026-11-01 --to 2026-11-30 --chemistry LFP",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotList(cmd.OutOrStdout(), lo, f)
		},
	}
	bindFilter(cmd, &f)
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON")
	return cmd
}

// checkFilter refuses a --from or --to that is not a day of the calendar, as a usage error,
// before the register is opened.
func checkFilter(f register.Filter) error {
	for _, d := range []struct{ flag, val string }{{"--from", f.From}, {"--to", f.To}} {
		if d.val == "" {
			continue
		}
		if err := register.CheckDate(d.val); err != nil {
			return usageError{fmt.Errorf("%s: %w", d.flag, err)}
		}
	}
	return nil
}

// basisMark is the short mark of a basis in a table cell: m measured, e estimate.
func basisMark(basis string) string {
	if strings.HasPrefix(basis, register.BasisMeasured) {
		return "m"
	}
	return "e"
}

func runLotList(w io.Writer, lo *lotOptions, f register.Filter) error {
	if err := checkFilter(f); err != nil {
		return err
	}
	lots, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) ([]register.Summary, error) {
		return reg.List(ctx, f)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, lots)
	}
	if len(lots) == 0 {
		fmt.Fprintln(w, "no lots match")
		return nil
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	head := "lot\treceived\tsupplier\titems\tkWh\tbasis\tblack mass kg (estimate P50)\tdry weighed kg"
	for _, el := range listMetals {
		head += "\t" + el + " kg\t" + el + " measured/estimate"
	}
	fmt.Fprintln(tw, head+"\tassays\tpayable")
	for _, l := range lots {
		ev := l.Evidence
		dry := "—"
		if ev.DryMass != nil {
			dry = text.Num(ev.DryMass.Kg)
		} else if l.WeighedKg > 0 {
			dry = text.Num(l.WeighedKg) + " wet?"
		}
		row := fmt.Sprintf("%s\t%s\t%s\t%d\t%.1f\t%s\t%s\t%s", intake.Printable(l.ID, 40), l.Received, intake.Printable(l.Supplier, 40), l.Items,
			l.NameplateKWh, l.Basis, text.Num(l.BlackMassKg), dry)
		for _, el := range listMetals {
			e := ev.Element(el)
			kg := text.Num(e.Kg)
			if m := e.Measured; m != nil && m.Censored && e.Basis == register.BasisMeasured {
				kg = "< " + text.Num(m.MaxKg) // below the detection limit: the range, not its middle
			}
			row += "\t" + kg + " " + basisMark(e.Basis) + "\t" + elementRatioText(e)
		}
		pay := "—"
		if ev.Payable != nil {
			pay = text.Money(*ev.Payable) + " " + l.Currency + " " + basisMark(ev.PayableBasis)
		}
		fmt.Fprintf(tw, "%s\t%d\t%s\n", row, l.Assays, pay)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintln(w, "m: assay (dry basis) × dry weighed mass; e: the estimate's P50 (lot show ID compares the two)")
	return nil
}

// ratioText is measured over estimate, "—" without both.
// elementRatioText is an element's measured/estimate: "< 0.46" when the measurement is below
// the detection limit.
func elementRatioText(e register.ElementEvidence) string {
	if e.RatioAtMost != nil {
		return fmt.Sprintf("< %.2f", *e.RatioAtMost)
	}
	return ratioText(e.Ratio)
}

func ratioText(r *float64) string {
	if r == nil {
		return "—"
	}
	return fmt.Sprintf("%.2f", *r)
}

func newLotTotalsCmd(lo *lotOptions) *cobra.Command {
	var month string
	cmd := &cobra.Command{
		Use:     "totals",
		Short:   "A month's intake by chemistry, the metal in the yard on its best evidence, and estimate against measurement per supplier",
		Example: "  blackmass lot totals --month 2026-11",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if month == "" {
				month = time.Now().Format("2006-01")
			}
			return runLotTotals(cmd.OutOrStdout(), lo, month)
		},
	}
	cmd.Flags().StringVar(&month, "month", "", "the month, YYYY-MM (default this month)")
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON")
	return cmd
}

func runLotTotals(w io.Writer, lo *lotOptions, month string) error {
	if err := register.CheckMonth(month); err != nil {
		return usageError{fmt.Errorf("--month: %w", err)}
	}
	t, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) (*register.Totals, error) {
		return reg.MonthTotals(ctx, month)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, t)
	}
	fmt.Fprintf(w, "blackmass lot totals for %s\n\nreceived by chemistry (the estimate):\n", t.Month)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  chemistry\tlots\titems\tkWh\tblack mass kg (P50)")
	for _, c := range t.ByChemistry {
		fmt.Fprintf(tw, "  %s\t%d\t%d\t%.1f\t%s\n", c.Chemistry, c.Lots, c.Items, c.NameplateKWh, text.Num(c.BlackMassKg))
	}
	tw.Flush()
	fmt.Fprintln(w, "\nmetal in the yard (every lot in the register on its best evidence, kg):")
	for _, el := range value.PayableMetals() {
		if kg, ok := t.InYardKg[el]; ok {
			b := t.InYardBasis[el]
			fmt.Fprintf(w, "  %s %s (%d lots assay × dry weighed mass, %d lots estimate P50)\n", el, text.Num(kg), b.Measured, b.Estimate)
		}
	}
	fmt.Fprintln(w, "\nestimate against assay, by supplier (mean latest assay − estimate, wt%; mean measured/estimate, kg):")
	if len(t.BySupplier) == 0 {
		fmt.Fprintln(w, "  no assayed lots this month")
	}
	for _, s := range t.BySupplier {
		var parts, ratios []string
		for _, el := range value.PayableMetals() {
			if d, ok := s.MeanDiffPct[el]; ok {
				parts = append(parts, fmt.Sprintf("%s %+.2f", el, d))
			}
			if r, ok := s.MeanRatio[el]; ok {
				ratios = append(ratios, fmt.Sprintf("%s %.2f", el, r))
			}
		}
		line := fmt.Sprintf("  %s (%d lots): %s", intake.Printable(s.Supplier, 60), s.AssayedLots, strings.Join(parts, ", "))
		if len(ratios) > 0 {
			line += fmt.Sprintf("; measured/estimate over %d weighed lots: %s", s.MeasuredLots, strings.Join(ratios, ", "))
		}
		fmt.Fprintln(w, line)
	}
	return nil
}
