package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/data"
	"blackmass/feed/intake"
	"blackmass/feed/report"
	"blackmass/feed/run"
	"blackmass/feed/sheet"
	"blackmass/feed/text"
	"blackmass/feed/value"
)

// demoFile is the embedded demo lot.
const (
	demoFile     = "demo/lot-KR-2611.csv"
	demoLotID    = "KR-2611"
	demoSupplier = "Larkfield Municipal Drop-off Yard"
)

type estimateOptions struct {
	cat       catalogueOptions
	seed      uint64
	samples   int
	asJSON    bool
	noLines   bool
	unknown   string
	sheet     string
	ignore    []string
	lotID     string
	supplier  string
	leach     leachFlags
	recover   recoverFlags
	xlsxPath  string
	force     bool
	prices    string
	demo      bool   // the built-in demo: prices default to the invented demo file
	keepLines bool   // keep per-line detail whatever the output (the register stores the lines)
	quiet     bool   // the summary only
	paper     string // the workbook's paper: a4 or letter
	command   string // the command's name, for the report's header
	// calibrated names the calibration to apply ("latest" or a version; "" none), from the
	// register at calDB.
	calibrated string
	calDB      *string
	seedReg    string // demo: seed this register with invented lots instead of estimating
}

func (o *estimateOptions) bind(cmd *cobra.Command) {
	o.cat.bind(cmd)
	fl := cmd.Flags()
	fl.Uint64Var(&o.seed, "seed", 1, "Monte Carlo seed (same seed and input give the same result)")
	intVar(fl, &o.samples, "samples", 4000, 10, 200_000, "from 10 samples, for any percentiles at all, to 200,000, beyond which memory grows for no better percentiles", "Monte Carlo samples")
	fl.BoolVar(&o.asJSON, "json", false, "write the full report as JSON")
	fl.BoolVar(&o.noLines, "no-lines", false, "leave per-line detail out (for very large manifests)")
	fl.BoolVarP(&o.quiet, "quiet", "q", false, "print the summary only")
	fl.StringVar(&o.unknown, "unknown", "refuse", "unrecognised chemistry labels: refuse, or prior (treat as unknown, prior mix)")
	_ = cmd.RegisterFlagCompletionFunc("unknown", cobra.FixedCompletions([]string{"refuse", "prior"}, cobra.ShellCompDirectiveNoFileComp))
	fl.StringVar(&o.sheet, "sheet", "", "sheet to read from an .xlsx manifest (default: Lines if present, else the first visible sheet with a header)")
	fl.StringSliceVar(&o.ignore, "ignore-column", nil, "leave a manifest column out of the reading (repeat, or separate with commas); every other column must be recognised")
	fl.StringVar(&o.lotID, "lot", "", "lot id recorded in the report")
	fl.StringVar(&o.supplier, "supplier", "", "supplier recorded in the report")
	fl.StringVar(&o.xlsxPath, "xlsx", "", "also write the intake workbook to this .xlsx file")
	fl.BoolVar(&o.force, "force", false, "overwrite an existing workbook")
	fl.StringVar(&o.paper, "paper", "a4", "the workbook's paper size: a4 or letter")
	_ = cmd.RegisterFlagCompletionFunc("paper", cobra.FixedCompletions([]string{"a4", "letter"}, cobra.ShellCompDirectiveNoFileComp))
	fl.StringVar(&o.prices, "prices", "", "prices CSV (item, basis, price_per_kg, currency, payable, source): adds the lot's value; "+
		"product rows (Li2CO3, CoSO4·7H2O, Co cathode ...; basis product) value the recovery's products")
	o.leach.bind(cmd)
	o.recover.bind(cmd)
}

func newEstimateCmd() *cobra.Command {
	o := &estimateOptions{command: "estimate"}
	cmd := &cobra.Command{
		Use:   "estimate MANIFEST|-",
		Short: "Estimate a lot's black mass, metals and leach from a manifest (.csv or .xlsx)",
		Example: `  blackmass estimate lot.csv
  blackmass estimate lot.xlsx --json > lot.json
  cat lot.csv | blackmass estimate - --unknown prior --seed 7`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			name, in, closeIn, err := openInput(cmd, args[0])
			if err != nil {
				return err
			}
			defer closeIn()
			return runEstimate(cmd.OutOrStdout(), o, name, in)
		},
	}
	o.bind(cmd)
	bindCalibrated(cmd, o, nil)
	return cmd
}

func newDemoCmd() *cobra.Command {
	o := &estimateOptions{command: "demo"}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Run the estimate on the built-in demo lot (an invented scenario, with invented prices)",
		Example: `  blackmass demo
  blackmass demo --xlsx KR-2611.xlsx --acid-price 0.25 --h2o2-price 0.8
  blackmass demo --route hydrochloric --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			b, err := fs.ReadFile(data.FS, demoFile)
			if err != nil {
				return err
			}
			if o.lotID == "" {
				o.lotID = demoLotID
			}
			if o.supplier == "" {
				o.supplier = demoSupplier
			}
			o.demo = true
			if o.seedReg != "" {
				return seedRegister(cmd.OutOrStdout(), o)
			}
			return runEstimate(cmd.OutOrStdout(), o, demoFile, bytes.NewReader(b))
		},
	}
	o.bind(cmd)
	bindCalibrated(cmd, o, nil)
	cmd.Flags().StringVar(&o.seedReg, "seed-register", "", "write a new register of invented, assayed and weighed lots (for trying calibrate)")
	return cmd
}

// openInput opens a manifest path, or standard input for "-".
func openInput(cmd *cobra.Command, path string) (name string, r io.Reader, closeFn func(), err error) {
	if path == "-" {
		return "stdin", cmd.InOrStdin(), func() {}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return "", nil, nil, err
	}
	return path, f, func() { _ = f.Close() }, nil
}

func runEstimate(w io.Writer, o *estimateOptions, name string, in io.Reader) error {
	if o.xlsxPath != "" {
		if err := checkWritable(o.xlsxPath, o.force); err != nil {
			return err
		}
	}
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	rep, err := estimate(t, ro, run.Manifest{Name: name, R: in})
	if err != nil {
		return err
	}
	return emit(w, o, rep)
}

// runOptions loads the tables (with the user's catalogue and prior) and turns the flags into a
// run's options.
func (o *estimateOptions) runOptions() (*run.Tables, run.Options, error) {
	var ro run.Options
	if o.unknown != "refuse" && o.unknown != "prior" {
		return nil, ro, usageError{fmt.Errorf("--unknown must be refuse or prior, got %q", intake.Printable(o.unknown, 20))}
	}
	for _, f := range []struct{ name, v string }{{"--lot", o.lotID}, {"--supplier", o.supplier}} {
		if err := intake.CheckFreeText(f.name, f.v); err != nil {
			return nil, ro, usageError{err}
		}
	}
	t, err := o.cat.tables()
	if err != nil {
		return nil, ro, err
	}
	leachOpt, err := o.leach.options()
	if err != nil {
		return nil, ro, err
	}
	cs, err := o.leach.containerList()
	if err != nil {
		return nil, ro, err
	}
	prices, err := o.loadPrices()
	if err != nil {
		return nil, ro, err
	}
	fsheet, err := o.recover.flowsheet()
	if err != nil {
		return nil, ro, err
	}
	rp, err := o.recover.reagentPrices()
	if err != nil {
		return nil, ro, err
	}
	ro = run.Options{Recover: fsheet, RecoverPrices: rp, Seed: o.seed, Samples: o.samples, Leach: leachOpt, LeachPrices: o.leach.prices, Prices: prices, Containers: cs,
		// Per-line detail is kept only for the outputs that print it (JSON and the workbook): the
		// text report never does, and keeping it costs memory in proportion to the manifest.
		KeepLines:      o.keepLines || (!o.noLines && (o.asJSON || o.xlsxPath != "")),
		UnknownAsPrior: o.unknown == "prior", IgnoreColumns: o.ignore, Sheet: o.sheet,
		Inputs: report.Inputs{Version: version, LotID: o.lotID, Supplier: o.supplier}}
	if o.xlsxPath != "" && !o.noLines {
		ro.MaxLines = sheet.MaxLines
		ro.MaxLinesReason = "they do not fit the workbook's Lines sheet: add --no-lines to leave the per-line sheet out, or split the manifest"
	}
	return t, ro, o.loadCalibration(&ro)
}

// demoPrices is the embedded, invented price file of the demo.
const demoPrices = "demo/prices-invented.csv"

// loadPrices reads --prices (or the plan's prices key); the demo uses its invented prices.
func (o *estimateOptions) loadPrices() (*value.PriceList, error) {
	switch {
	case o.prices != "":
		f, err := os.Open(o.prices)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		return intake.ReadPrices(f, o.prices)
	case o.demo:
		b, err := fs.ReadFile(data.FS, demoPrices)
		if err != nil {
			return nil, err
		}
		return intake.ReadPrices(bytes.NewReader(b), demoPrices+" (INVENTED prices, for the demo only)")
	}
	return nil, nil
}

// emit writes the workbook (if asked) and the report as JSON or text.
func emit(w io.Writer, o *estimateOptions, rep *report.Report) error {
	if o.xlsxPath != "" {
		paper := sheet.PaperA4
		switch strings.ToLower(o.paper) {
		case "a4", "":
		case "letter":
			paper = sheet.PaperLetter
		default:
			return usageError{fmt.Errorf("--paper %q: want a4 or letter", intake.Printable(o.paper, 20))}
		}
		if err := writeWorkbook(o.xlsxPath, rep, o.force, paper); err != nil {
			return err
		}
	}
	if o.asJSON {
		return rep.WriteJSON(w)
	}
	text.Write(w, rep, o.command, o.quiet)
	if o.xlsxPath != "" {
		fmt.Fprintf(w, "\nIntake workbook written to %s\n", o.xlsxPath)
	}
	return nil
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// estimate runs the estimate with a private scratch directory for the .xlsx reader.
func estimate(t *run.Tables, ro run.Options, m run.Manifest) (*report.Report, error) {
	scratch, done := scratchDir()
	defer done()
	ro.TempDir = scratch
	return run.Estimate(t, ro, m)
}
