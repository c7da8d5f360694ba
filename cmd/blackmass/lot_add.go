package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/run"
	"blackmass/feed/text"
)

func newLotAddCmd(lo *lotOptions) *cobra.Command {
	o := &estimateOptions{}
	var received string
	var replace bool
	cmd := &cobra.Command{
		Use:   "add MANIFEST --lot ID",
		Short: "Estimate a lot and record it in the register",
		Example: `  blackmass lot add lot.csv --lot KR-2702 --supplier "Fenwick Street recycling point" --received 2026-11-30
  blackmass lot add lot.xlsx --lot KR-2702 --replace --prices prices.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotAdd(cmd.OutOrStdout(), lo, o, args[0], received, replace)
		},
	}
	o.bind(cmd)
	bindCalibrated(cmd, o, &lo.dbPath)
	cmd.Flags().StringVar(&received, "received", "", "date the lot was received, YYYY-MM-DD (default today)")
	cmd.Flags().BoolVar(&replace, "replace", false, "record a new version of a lot id already in the register (the old one is kept)")
	return cmd
}

func runLotAdd(w io.Writer, lo *lotOptions, o *estimateOptions, path, received string, replace bool) error {
	if o.lotID == "" {
		return usageError{errors.New("give the lot id with --lot")}
	}
	if received == "" {
		received = today()
	}
	if err := register.CheckLot(o.lotID, received); err != nil {
		return usageError{flagged("--received", err)}
	}
	b, err := readCapped(path, maxManifestBytes)
	if err != nil {
		return err
	}
	o.keepLines = true
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	rep, err := estimate(t, ro, run.Manifest{Name: path, R: bytes.NewReader(b)})
	if err != nil {
		return err
	}
	reg, err := lo.create()
	if err != nil {
		return err
	}
	defer reg.Close()
	sum := sha256.Sum256(b)
	v, err := reg.Add(context.Background(), register.Lot{ID: o.lotID, Supplier: o.supplier, Received: received, ToolVersion: version,
		ManifestName: filepath.Base(path), ManifestSHA256: hex.EncodeToString(sum[:]), Manifest: b, Settings: rep.Inputs, Report: rep}, replace)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "lot %s recorded (version %d) in %s: %d items, %.2f kWh, black mass %s kg (P50)\n", intake.Printable(o.lotID, 64), v, reg.Path(),
		rep.Lot.Items, rep.Lot.NameplateKWh, text.Num(rep.BlackMassKg.P50))
	fmt.Fprintln(w)
	text.Write(w, rep, "lot add", true) // the estimate's summary, with every warning and the caution
	return nil
}

// readCapped reads a file of at most max bytes.
func readCapped(path string, max int64) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, err
	}
	if int64(len(b)) > max {
		return nil, fmt.Errorf("%s: larger than %d MB", path, max>>20)
	}
	return b, nil
}
