package main

import (
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
)

// demoFile is the embedded demo lot.
const (
	demoFile     = "demo/lot-KR-2611.csv"
	demoLotID    = "KR-2611"
	demoSupplier = "Larkfield Municipal Drop-off Yard"
)

type estimateOptions struct {
	cat      catalogueOptions
	seed     uint64
	samples  int
	asJSON   bool
	noLines  bool
	unknown  string
	sheet    string
	lotID    string
	supplier string
	leach    leachFlags
	xlsxPath string
	force    bool
}

func (o *estimateOptions) bind(cmd *cobra.Command) {
	o.cat.bind(cmd)
	fl := cmd.Flags()
	fl.Uint64Var(&o.seed, "seed", 1, "Monte Carlo seed (same seed and input give the same result)")
	fl.IntVar(&o.samples, "samples", 4000, "Monte Carlo samples")
	fl.BoolVar(&o.asJSON, "json", false, "write the full report as JSON")
	fl.BoolVar(&o.noLines, "no-lines", false, "leave per-line detail out (for very large manifests)")
	fl.StringVar(&o.unknown, "unknown", "refuse", "unrecognised chemistry labels: refuse, or prior (treat as unknown, prior mix)")
	fl.StringVar(&o.sheet, "sheet", "", "sheet to read from an .xlsx manifest (default: Lines if present, else the first)")
	fl.StringVar(&o.lotID, "lot", "", "lot id recorded in the report")
	fl.StringVar(&o.supplier, "supplier", "", "supplier recorded in the report")
	fl.StringVar(&o.xlsxPath, "xlsx", "", "also write the intake workbook to this .xlsx file")
	fl.BoolVar(&o.force, "force", false, "overwrite an existing workbook")
	o.leach.bind(cmd)
}

func newEstimateCmd() *cobra.Command {
	o := &estimateOptions{}
	cmd := &cobra.Command{
		Use:   "estimate MANIFEST|-",
		Short: "Estimate a lot's black mass, metals and leach from a manifest (.csv or .xlsx)",
		Example: `  blackmass estimate lot.csv
  blackmass estimate lot.xlsx --json > lot.json
  cat lot.csv | blackmass estimate - --unknown prior --seed 7`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			name := args[0]
			var b []byte
			var err error
			if name == "-" {
				name = "stdin"
				b, err = io.ReadAll(cmd.InOrStdin())
			} else {
				b, err = os.ReadFile(name)
			}
			if err != nil {
				return err
			}
			return runEstimate(cmd.OutOrStdout(), o, name, b)
		},
	}
	o.bind(cmd)
	return cmd
}

func newDemoCmd() *cobra.Command {
	o := &estimateOptions{}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Run the estimate on the built-in demo lot (an invented scenario)",
		Args:  cobra.NoArgs,
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
			return runEstimate(cmd.OutOrStdout(), o, demoFile, b)
		},
	}
	o.bind(cmd)
	return cmd
}

func runEstimate(w io.Writer, o *estimateOptions, name string, b []byte) error {
	if o.xlsxPath != "" {
		if err := checkWritable(o.xlsxPath, o.force); err != nil {
			return err
		}
	}
	rep, err := buildEstimate(o, name, b)
	if err != nil {
		return err
	}
	return emit(w, o, rep)
}

// buildEstimate reads a manifest (CSV or xlsx bytes) and runs the estimate with the leach plan.
func buildEstimate(o *estimateOptions, name string, b []byte) (*feed.Report, error) {
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
	leachOpt, err := o.leach.options()
	if err != nil {
		return nil, err
	}
	lot := feed.NewLot(model, !o.noLines)
	mopt := feed.ManifestOptions{Catalogue: cat, UnknownAsPrior: o.unknown == "prior"}
	if isXLSX(name, b) {
		err = feed.ReadManifestXLSX(bytes.NewReader(b), name, o.sheet, mopt, lot.Add)
	} else {
		err = feed.ReadManifestCSV(bytes.NewReader(b), name, mopt, lot.Add)
	}
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(b)
	rep, _, err := lot.Estimate(feed.EstimateOptions{Seed: o.seed, Samples: o.samples, Leach: leachOpt,
		Inputs: feed.Inputs{File: filepath.ToSlash(name), SHA256: hex.EncodeToString(sum[:]), Version: version,
			LotID: o.lotID, Supplier: o.supplier, UnknownAsPrior: o.unknown == "prior"}})
	return rep, err
}

// emit writes the workbook (if asked) and then the report as JSON or text.
func emit(w io.Writer, o *estimateOptions, rep *feed.Report) error {
	if o.xlsxPath != "" {
		if err := writeWorkbook(o.xlsxPath, rep, o.force); err != nil {
			return err
		}
	}
	if o.asJSON {
		return writeJSON(w, rep)
	}
	writeReportText(w, rep)
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

func isXLSX(name string, b []byte) bool {
	return strings.EqualFold(filepath.Ext(name), ".xlsx") || bytes.HasPrefix(b, []byte("PK\x03\x04"))
}
