package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"blackmass/cathode"
	"blackmass/feed"
	"blackmass/feed/assay"
	"blackmass/feed/intake"
)

func readAssay(path string) (*assay.Assay, []byte, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, err
	}
	a, err := intake.ReadAssay(strings.NewReader(string(b)), path)
	return a, b, err
}

// fitOptions are the flags of the mix inference.
type fitOptions struct {
	candidates string
	bootstrap  int
}

func (f *fitOptions) bind(cmd *cobra.Command) {
	cmd.Flags().StringVar(&f.candidates, "candidates", "", "comma-separated chemistries to fit (default: the whole catalogue; reconcile uses the lot's own)")
	intVar(cmd.Flags(), &f.bootstrap, "bootstrap", 500, 10, 20000, "enough for stable ranges; more only costs time", "bootstrap draws of the assay for the mix ranges")
}

func (f *fitOptions) fit(cat *cathode.Catalogue, a *assay.Assay, seed uint64) (*assay.MixFit, error) {
	cands := cat.Entries()
	if f.candidates != "" {
		cands = nil
		seen := map[string]bool{}
		for _, k := range strings.Split(f.candidates, ",") {
			ch, err := cat.ParseLabel(strings.TrimSpace(k))
			if err != nil {
				return nil, fmt.Errorf("--candidates: %w", err)
			}
			for _, c := range ch.Components {
				if !seen[c.Entry.Key] {
					seen[c.Entry.Key] = true
					cands = append(cands, c.Entry)
				}
			}
		}
	}
	return assay.InferMix(a, cands, f.bootstrap, seed)
}

// The black mass a quote accepts: a 1 g bench sample to a 100,000 t campaign.
const (
	minQuoteKg = 1e-3
	maxQuoteKg = 1e8
)

// quoteOptions are the quote command's settings.
type quoteOptions struct {
	estimateOptions
	mass, form string
	fit        fitOptions
}

func newQuoteCmd() *cobra.Command {
	o := &quoteOptions{estimateOptions: estimateOptions{command: "quote"}}
	cmd := &cobra.Command{
		Use:   "quote ASSAY.csv --mass WEIGHT",
		Short: "Quote the leach of black mass already shredded, from a lab assay and its weight",
		Example: `  blackmass quote assay.csv --mass 1.2t
  blackmass quote assay.csv --mass "850 kg" --form oxide --route hydrochloric --json
  blackmass quote assay.csv --mass 236kg --prices prices.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runQuote(cmd.OutOrStdout(), o, args[0])
		},
	}
	o.bind(cmd)
	cmd.Flags().StringVar(&o.mass, "mass", "", "black-mass weight with unit (kg, t, g, lb, oz)")
	cmd.Flags().StringVar(&o.form, "form", "layered", "form of Co/Ni/Mn: layered (untreated), oxide (reduction-roasted) or metal")
	_ = cmd.RegisterFlagCompletionFunc("form", cobra.FixedCompletions([]string{"layered", "oxide", "metal"}, cobra.ShellCompDirectiveNoFileComp))
	_ = cmd.MarkFlagRequired("mass")
	for _, f := range []string{"unknown", "no-lines", "sheet", "prior", "ignore-column"} { // manifest-only flags
		_ = cmd.Flags().MarkHidden(f)
	}
	o.fit.bind(cmd)
	return cmd
}

// runQuote quotes the leach of a weighed black mass from its assay.
func runQuote(w io.Writer, o *quoteOptions, path string) error {
	kg, err := intake.ParseMassKg(o.mass)
	if err != nil {
		return fmt.Errorf("--mass %q: %w", intake.Printable(o.mass, 40), err)
	}
	if kg < minQuoteKg || kg > maxQuoteKg {
		return fmt.Errorf("--mass %q: %.4g kg is outside %g g to %g t (a bench sample to a large lot)", intake.Printable(o.mass, 40), kg, minQuoteKg*1000, maxQuoteKg/1000)
	}
	tm, err := assay.ParseTMForm(o.form)
	if err != nil {
		return err
	}
	if o.xlsxPath != "" {
		if err := checkWritable(o.xlsxPath, o.force); err != nil {
			return err
		}
	}
	a, b, err := readAssay(path)
	if err != nil {
		return err
	}
	lo, err := o.leach.options()
	if err != nil {
		return err
	}
	cat, err := o.cat.load()
	if err != nil {
		return err
	}
	tabs, err := feed.DefaultTables()
	if err != nil {
		return err
	}
	sum := sha256.Sum256(b)
	q, err := assay.QuoteFrom(a, assay.QuoteOptions{BlackMassKg: kg, TMForm: tm, Seed: o.seed, Samples: o.samples, Leach: *lo,
		Tables: tabs.Leach, Prices: o.leach.prices})
	if err != nil {
		return err
	}
	prices, err := o.loadPrices()
	if err != nil {
		return err
	}
	rep := feed.QuoteReport(q, feed.Inputs{File: filepath.ToSlash(path), SHA256: hex.EncodeToString(sum[:]), Version: version, LotID: o.lotID, Supplier: o.supplier}, prices)
	rep.Assay = a
	if rep.Mix, err = o.fit.fit(cat, a, o.seed); err != nil {
		return err
	}
	return emit(w, &o.estimateOptions, rep)
}

// reconcileOptions are the reconcile command's settings.
type reconcileOptions struct {
	estimateOptions
	threshold float64
	fit       fitOptions
}

func newReconcileCmd() *cobra.Command {
	o := &reconcileOptions{estimateOptions: estimateOptions{command: "reconcile"}}
	cmd := &cobra.Command{
		Use:   "reconcile MANIFEST ASSAY.csv",
		Short: "Set a lot's estimate beside a lab assay of its black mass, element by element",
		Example: `  blackmass reconcile data/demo/lot-KR-2611.csv testdata/assay-KR-2611.csv
  blackmass reconcile lot.csv assay.csv --flag-sigma 3 --json`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			name, in, closeIn, err := openInput(cmd, args[0])
			if err != nil {
				return err
			}
			defer closeIn()
			return runReconcile(cmd.OutOrStdout(), o, name, in, args[1])
		},
	}
	o.bind(cmd)
	numberVar(cmd.Flags(), &o.threshold, "flag-sigma", 2, 0.1, 10, "a number of standard uncertainties", "flag elements whose difference exceeds this many combined standard uncertainties")
	o.fit.bind(cmd)
	return cmd
}

// runReconcile estimates the lot and sets it beside the assay.
func runReconcile(w io.Writer, o *reconcileOptions, name string, in io.Reader, assayPath string) error {
	a, _, err := readAssay(assayPath)
	if err != nil {
		return err
	}
	rep, err := buildEstimate(&o.estimateOptions, name, in)
	if err != nil {
		return err
	}
	cat, err := o.cat.load()
	if err != nil {
		return err
	}
	rep.Assay = a
	rep.Reconciliation = assay.Reconcile(rep.Elements, a, o.threshold)
	if o.fit.candidates == "" { // by default, explain the assay with the lot's own chemistries
		var keys []string
		for _, g := range rep.Groups {
			keys = append(keys, g.Components...)
		}
		o.fit.candidates = strings.Join(keys, ",")
	}
	if rep.Mix, err = o.fit.fit(cat, a, o.seed); err != nil {
		return err
	}
	return emit(w, &o.estimateOptions, rep)
}

// inferOptions are the infer command's settings.
type inferOptions struct {
	cat    catalogueOptions
	fit    fitOptions
	seed   uint64
	asJSON bool
}

func newInferCmd() *cobra.Command {
	o := &inferOptions{}
	cmd := &cobra.Command{
		Use:   "infer ASSAY.csv",
		Short: "Infer the chemistry mix that best explains a black-mass assay (non-negative least squares)",
		Example: `  blackmass infer testdata/assay-KR-2611.csv
  blackmass infer assay.csv --candidates NMC622,LFP,LCO --bootstrap 2000 --json`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runInfer(cmd.OutOrStdout(), o, args[0])
		},
	}
	o.cat.bind(cmd)
	o.fit.bind(cmd)
	cmd.Flags().Uint64Var(&o.seed, "seed", 1, "bootstrap seed")
	cmd.Flags().BoolVar(&o.asJSON, "json", false, "write JSON")
	return cmd
}

// runInfer fits the chemistry mix to the assay.
func runInfer(w io.Writer, o *inferOptions, path string) error {
	a, _, err := readAssay(path)
	if err != nil {
		return err
	}
	c, err := o.cat.load()
	if err != nil {
		return err
	}
	m, err := o.fit.fit(c, a, o.seed)
	if err != nil {
		return err
	}
	if o.asJSON {
		return writeJSON(w, m)
	}
	writeMixText(w, m)
	return nil
}

func writeMixText(w io.Writer, m *assay.MixFit) {
	fmt.Fprintf(w, "chemistry mix that best explains the assay (%d bootstrap draws)\n", m.Bootstrap)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "component\tbest kg/kg\tP10\tP50\tP90\t95 % range\tcathode share P50\t")
	for _, c := range m.Components {
		share := ""
		if c.CathodeShare != nil {
			share = fmt.Sprintf("%.3f", c.CathodeShare.P50)
		}
		fmt.Fprintf(tw, "%s\t%.4f\t%.4f\t%.4f\t%.4f\t%.4f–%.4f\t%s\t\n", c.Name, c.Best, c.KgPerKg.P10, c.KgPerKg.P50, c.KgPerKg.P90, c.Interval95[0], c.Interval95[1], share)
	}
	tw.Flush()
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
		fmt.Fprintf(tw, "%s\t%.2f\t%.2f\t%.2f\t%.2f\t%+.1f\t%s\t\n", c.Element, c.EstimateWtPct, c.EstimateSigma, c.AssayWtPct, c.AssaySigma, c.Z, flag)
	}
	tw.Flush()
	for _, c := range rc.Comparisons {
		if c.Flag {
			fmt.Fprintf(w, "  %s: %s\n", c.Element, c.Interpretation)
		}
	}
}
