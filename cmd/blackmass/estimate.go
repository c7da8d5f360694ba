package main

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/data"
	"blackmass/feed"
	"blackmass/feed/intake"
	"blackmass/feed/sheet"
)

// maxXLSXBytes bounds an .xlsx manifest, read whole as the zip format needs.
const maxXLSXBytes = 64 << 20

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
	xlsxPath  string
	force     bool
	prices    string
	demo      bool   // the built-in demo: prices default to the invented demo file
	keepLines bool   // keep per-line detail whatever the output (the register stores the lines)
	quiet     bool   // the summary only
	paper     string // the workbook's paper: a4 or letter
	command   string // the command's name, for the report's header
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
	fl.StringVar(&o.prices, "prices", "", "prices CSV (item, basis, price_per_kg, currency, payable, source): adds the lot's value")
	o.leach.bind(cmd)
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
			return runEstimate(cmd.OutOrStdout(), o, demoFile, bytes.NewReader(b))
		},
	}
	o.bind(cmd)
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
	rep, err := buildEstimate(o, name, in)
	if err != nil {
		return err
	}
	return emit(w, o, rep)
}

// buildEstimate reads a manifest and runs the estimate with the leach plan. A CSV manifest is
// streamed (hashed on the way), so memory does not grow with its length; an .xlsx workbook is
// read whole, as the zip format needs.
func buildEstimate(o *estimateOptions, name string, in io.Reader) (*feed.Report, error) {
	if o.unknown != "refuse" && o.unknown != "prior" {
		return nil, fmt.Errorf("--unknown must be refuse or prior, got %q", o.unknown)
	}
	cat, err := o.cat.load()
	if err != nil {
		return nil, err
	}
	model, err := feed.DefaultModel()
	if err != nil {
		return nil, err
	}
	tabs, err := feed.DefaultTables()
	if err != nil {
		return nil, err
	}
	leachOpt, err := o.leach.options()
	if err != nil {
		return nil, err
	}
	// Per-line detail is kept only for the outputs that print it (JSON and the workbook): the
	// text report never does, and keeping it costs memory in proportion to the manifest.
	lot := feed.NewLot(model, o.keepLines || (!o.noLines && (o.asJSON || o.xlsxPath != "")))
	mopt := intake.Options{Catalogue: cat, UnknownAsPrior: o.unknown == "prior", IgnoreColumns: o.ignore, Sheet: o.sheet}
	h := sha256.New()
	br := bufio.NewReaderSize(in, 64<<10)
	head, _ := br.Peek(4)
	var info intake.Info
	if strings.EqualFold(filepath.Ext(name), ".xlsx") || bytes.HasPrefix(head, []byte("PK\x03\x04")) {
		var b []byte
		if b, err = io.ReadAll(io.LimitReader(io.TeeReader(br, h), maxXLSXBytes+1)); err != nil {
			return nil, err
		}
		if len(b) > maxXLSXBytes {
			return nil, fmt.Errorf("%s: an .xlsx manifest larger than %d MB: save it as CSV, which is read as a stream", name, maxXLSXBytes>>20)
		}
		info, err = intake.ReadXLSX(bytes.NewReader(b), name, mopt, lot.Add)
	} else {
		info, err = intake.ReadCSV(io.TeeReader(br, h), name, mopt, lot.Add)
	}
	if err != nil {
		return nil, err
	}
	if o.xlsxPath != "" && !o.noLines && info.Lines > sheet.MaxLines {
		return nil, fmt.Errorf("%s: %d lines do not fit the workbook's Lines sheet (at most %d rows below its header): add --no-lines to leave the per-line sheet out, or split the manifest", name, info.Lines, sheet.MaxLines)
	}
	if _, err := io.Copy(h, br); err != nil { // hash anything the reader left unread
		return nil, err
	}
	sum := h.Sum(nil)
	prices, err := o.loadPrices()
	if err != nil {
		return nil, err
	}
	rep, _, err := lot.Estimate(feed.EstimateOptions{Seed: o.seed, Samples: o.samples, Leach: leachOpt, Prices: prices,
		LeachTables: tabs.Leach, LeachPrices: o.leach.prices,
		Inputs: feed.Inputs{File: filepath.ToSlash(name), SHA256: hex.EncodeToString(sum[:]), Version: version,
			LotID: o.lotID, Supplier: o.supplier, UnknownAsPrior: o.unknown == "prior",
			Sheet: info.Sheet, Sheets: info.Sheets, HeaderLine: info.HeaderLine, IgnoredColumns: info.IgnoredColumns}})
	if err != nil {
		return nil, err
	}
	if len(info.Sheets) > 1 {
		rep.Warnings = append([]string{fmt.Sprintf("read sheet %q of %s", info.Sheet, strings.Join(info.Sheets, ", "))}, rep.Warnings...)
	}
	if len(info.IgnoredColumns) > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("columns left out as asked: %s", strings.Join(info.IgnoredColumns, ", ")))
	}
	return rep, nil
}

// demoPrices is the embedded, invented price file of the demo.
const demoPrices = "demo/prices-invented.csv"

// loadPrices reads --prices (or the plan's prices key); the demo uses its invented prices.
func (o *estimateOptions) loadPrices() (*feed.PriceList, error) {
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

// emit adds the order sheet, then writes the workbook (if asked) and the report as JSON or text.
func emit(w io.Writer, o *estimateOptions, rep *feed.Report) error {
	if rep.Leach != nil {
		cs, err := o.leach.containerList()
		if err != nil {
			return err
		}
		cur := o.leach.prices.Currency
		if v := rep.Value; v != nil {
			if cur != "" && !strings.EqualFold(cur, v.Currency) {
				return usageError{fmt.Errorf("--currency %s and the prices file's %s disagree: give the reagent prices in %s", cur, v.Currency, v.Currency)}
			}
			cur = v.Currency
		}
		rep.Order = feed.Order(rep, cs, cur)
	}
	if err := rep.CheckFinite(); err != nil {
		return err
	}
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
		return writeJSON(w, rep)
	}
	writeReportText(w, rep, o.command, o.quiet)
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
