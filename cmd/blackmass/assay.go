package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/assay"
	"blackmass/feed/intake"
	"blackmass/feed/run"
	"blackmass/feed/text"
)

// readAssay reads an assay file, never more than one byte past the side files' cap (the
// reader then refuses it by name), so that an endless file is not read into memory.
func readAssay(path string) (*assay.Assay, []byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, data.MaxTableBytes+1))
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
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

// options reads --candidates (nil when not given) and --bootstrap.
func (f *fitOptions) options(cat *cathode.Catalogue) (*run.MixOptions, error) {
	mx := &run.MixOptions{Bootstrap: f.bootstrap}
	if f.candidates == "" {
		return mx, nil
	}
	seen := map[string]bool{}
	for _, k := range strings.Split(f.candidates, ",") {
		ch, err := cat.ParseLabel(strings.TrimSpace(k))
		if err != nil {
			return nil, usageError{fmt.Errorf("--candidates: %w", err)}
		}
		for _, c := range ch.Components {
			if !seen[c.Entry.Key] {
				seen[c.Entry.Key] = true
				mx.Candidates = append(mx.Candidates, c.Entry)
			}
		}
	}
	return mx, nil
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
	moisture   string
	missingLi  string
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
	cmd.Flags().StringVar(&o.moisture, "moisture", "", "water in the weighed mass, wt% of the wet mass (default: the assay's moisture row, else dry)")
	cmd.Flags().StringVar(&o.missingLi, "missing-li", "stoichiometric", "lithium assumed when the assay has none: stoichiometric, none, or a wt%")
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
		return usageError{fmt.Errorf("--mass %q: %w", intake.Printable(o.mass, 40), err)}
	}
	if kg < minQuoteKg || kg > maxQuoteKg {
		return usageError{fmt.Errorf("--mass %q: %.4g kg is outside %g g to %g t (a bench sample to a large lot)",
			intake.Printable(o.mass, 40), kg, minQuoteKg*1000, maxQuoteKg/1000)}
	}
	tm, err := assay.ParseTMForm(o.form)
	if err != nil {
		return usageError{err}
	}
	qo := assay.QuoteOptions{BlackMassKg: kg, TMForm: tm}
	if o.moisture != "" {
		if qo.Moisture, err = assay.ParseMoisture(o.moisture); err != nil {
			return usageError{fmt.Errorf("--moisture: %w", err)}
		}
	}
	if qo.MissingLi, err = assay.ParseMissingLi(o.missingLi); err != nil {
		return usageError{fmt.Errorf("--missing-li: %w", err)}
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
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	if ro.Mix, err = o.fit.options(t.Catalogue); err != nil {
		return err
	}
	sum := sha256.Sum256(b)
	ro.Inputs.File, ro.Inputs.SHA256 = filepath.ToSlash(path), hex.EncodeToString(sum[:])
	rep, err := run.Quote(t, ro, a, qo)
	if err != nil {
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
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	// By default the assay is explained with the lot's own chemistries (nil candidates).
	if ro.Mix, err = o.fit.options(t.Catalogue); err != nil {
		return err
	}
	ro.Assay, ro.FlagSigma = a, o.threshold
	rep, err := estimate(t, ro, run.Manifest{Name: name, R: in})
	if err != nil {
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
	t, err := o.cat.tables()
	if err != nil {
		return err
	}
	mx, err := o.fit.options(t.Catalogue)
	if err != nil {
		return err
	}
	if mx.Candidates == nil {
		mx.Candidates = t.Catalogue.Entries()
	}
	m, err := assay.InferMix(a, mx.Candidates, mx.Bootstrap, o.seed)
	if err != nil {
		return err
	}
	if o.asJSON {
		return writeJSON(w, m)
	}
	text.WriteMix(w, m)
	return nil
}
