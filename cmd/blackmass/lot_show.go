package main

import (
	"context"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/text"
	"blackmass/feed/value"
)

func newLotShowCmd(lo *lotOptions) *cobra.Command {
	cmd := &cobra.Command{
		Use:     "show ID",
		Short:   "Show what the register holds of a lot: its figures on their best evidence beside the estimate",
		Example: "  blackmass lot show KR-2611\n  blackmass lot show KR-2611 --json",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotShow(cmd.OutOrStdout(), lo, args[0])
		},
	}
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON (with the full report)")
	return cmd
}

func runLotShow(w io.Writer, lo *lotOptions, id string) error {
	d, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) (*register.Detail, error) {
		return reg.Show(ctx, id)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, d)
	}
	ev := d.Evidence
	vs := make([]string, len(d.Versions))
	for i, v := range d.Versions {
		vs[i] = strconv.Itoa(v)
	}
	fmt.Fprintf(w, "blackmass lot %s (version %d; versions kept: %s)\n", intake.Printable(d.ID, 64), d.Version, strings.Join(vs, ", "))
	from := ", no supplier given"
	if d.Supplier != "" {
		from = " from " + intake.Printable(d.Supplier, 80)
	}
	fmt.Fprintf(w, "received %s%s; added %s by blackmass %s\n", d.Received, from, d.AddedAt, d.ToolVersion)
	fmt.Fprintf(w, "manifest %s (sha256 %s…), %d lines, %d items, %.2f kWh\n", intake.Printable(d.ManifestName, 80), d.ManifestSHA256[:12],
		d.Lines, d.Items, d.NameplateKWh)
	fmt.Fprintf(w, "figures rest on: %s\n", basisText(d.Basis))
	fmt.Fprintf(w, "black mass: estimate %s kg (P50)", text.Num(d.BlackMassKg))
	if dm := ev.DryMass; dm != nil {
		fmt.Fprintf(w, "; weighed %s kg %s on %s, moisture %s wt%% (%s): %s ± %s kg dry", text.Num(dm.WeighedKg), dm.State, dm.WeighedOn,
			text.Num(dm.MoistureWtPct), dm.MoistureFrom, text.Num(dm.Kg), text.Num(dm.SigmaKg))
	}
	fmt.Fprintln(w)
	els := ev.PayableFirst(value.PayableMetals())
	fmt.Fprintln(w, "\nmetal in kg: the lot's figure, the measurement (assay × dry mass) and the estimate")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "metal\tbasis\tkg\tmeasured kg\t± kg\testimate kg P10\tP50\tP90\tmeasured/estimate\t")
	for _, e := range els {
		mkg, msd := "—", "—"
		if m := e.Measured; m != nil {
			mkg, msd = text.Num(m.Kg), text.Num(m.SigmaKg)
			if m.Censored {
				mkg, msd = "< "+text.Num(m.MaxKg), "range"
			}
		}
		kg := text.Num(e.Kg)
		if m := e.Measured; m != nil && m.Censored && e.Basis == register.BasisMeasured {
			kg = mkg // below the detection limit: the range, not its middle
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", e.Element, basisMark(e.Basis), kg, mkg, msd,
			text.Num(e.EstimateKgP10), text.Num(e.EstimateKgP50), text.Num(e.EstimateKgP90), elementRatioText(e))
	}
	tw.Flush()
	fmt.Fprintln(w, "\nmetal in wt% of the dry black mass: the assays combined and the estimate")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "metal\tassay wt%\t± wt%\tassays\testimate wt% P50\t\t")
	for _, e := range els {
		a, sd, n, flag := "—", "—", "0", ""
		if c := e.Assay; c != nil {
			a, sd, n = fmt.Sprintf("%.3g", c.WtPct), fmt.Sprintf("%.2g", c.SigmaWtPct), fmt.Sprint(c.Assays)
			if c.Censored {
				a, sd = "< "+fmt.Sprintf("%.3g", c.LimitWtPct), "range"
			}
			if c.Disagree {
				flag = fmt.Sprintf("disagree (chi-square %.1f on %d)", c.ChiSquare, c.DoF)
			}
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%.3g\t%s\t\n", e.Element, a, sd, n, e.EstimateWtPctP50, flag)
	}
	tw.Flush()
	fmt.Fprintln(w, "m: assay × dry weighed mass; e: the estimate's P50")
	if ev.Payable != nil {
		fmt.Fprintf(w, "\npayable value %s %s (%s); the estimate's %s %s (P50)\n", text.Money(*ev.Payable), d.Currency, ev.PayableBasis,
			text.Money(*d.Payable), d.Currency)
	}
	for _, n := range ev.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	showRecords(w, d)
	return nil
}

// basisText says in words what a lot's figures rest on.
func basisText(basis string) string {
	if basis == register.BasisMeasured {
		return "assay × dry weighed mass where assayed, the estimate elsewhere"
	}
	return "the estimate (no assay with a dry weighed mass)"
}

// showRecords lists a lot's assays, weighings and audit trail.
func showRecords(w io.Writer, d *register.Detail) {
	fmt.Fprintln(w)
	for _, a := range d.AssayList {
		moist := ""
		if a.MoistureWtPct != nil {
			moist = fmt.Sprintf(", moisture %s wt%% of the wet sample", text.Num(*a.MoistureWtPct))
		}
		fmt.Fprintf(w, "assay %d: %s, %s (%s)%s\n", a.ID, intake.Printable(a.Lab, 60), a.On, intake.Printable(a.FileName, 60), moist)
		for _, v := range a.Values {
			if v.Censored {
				fmt.Fprintf(w, "  %s %s (below the detection limit)\n", v.Element, v.Text())
			}
		}
	}
	for _, wg := range d.Weighings {
		fmt.Fprintf(w, "weighed %s: %s kg %s %s\n", wg.On, text.Num(wg.Kg), weighedAs(wg), intake.Printable(wg.Note, 80))
	}
	for _, a := range d.Audit {
		fmt.Fprintf(w, "  %s %s: %s\n", a.At, a.Action, intake.Printable(a.Detail, 200))
	}
}
