package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"maps"
	"os"
	"slices"
	"strings"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/run"
)

// Demo register: how many invented lots, and which one carries the unit slip.
const (
	demoRegisterLots = 30
	demoRegisterSlip = 7
)

// seedRegister writes a new register of invented lots, each with an invented assay and
// weighing drawn from run.DemoTruth, for trying calibrate. It never touches an existing file,
// and removes what it made if a step fails.
func seedRegister(w io.Writer, o *estimateOptions) (err error) {
	path := o.seedReg
	if o.calibrated != "" || o.xlsxPath != "" || o.asJSON {
		return usageError{errors.New("--seed-register writes a register only: leave out --calibrated, --xlsx and --json")}
	}
	if _, err := os.Lstat(path); !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("%s exists: --seed-register writes a new register only", path)
	}
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	ro.KeepLines = true
	lots, err := run.DemoLots(t, ro, demoRegisterLots, o.seed, demoRegisterSlip)
	if err != nil {
		return err
	}
	reg, err := register.Open(path)
	if err != nil {
		return err
	}
	defer func() {
		_ = reg.Close()
		if err != nil {
			for _, suffix := range []string{"", "-wal", "-shm"} {
				_ = os.Remove(path + suffix)
			}
		}
	}()
	ctx := context.Background()
	var slips []string
	for _, l := range lots {
		sum := sha256.Sum256(l.Manifest)
		if _, err := reg.Add(ctx, register.Lot{ID: l.ID, Supplier: l.Supplier, Received: l.Received, ToolVersion: version,
			ManifestName: l.ManifestName, ManifestSHA256: hex.EncodeToString(sum[:]), Manifest: l.Manifest, Settings: l.Report.Inputs,
			Report: l.Report}, false); err != nil {
			return err
		}
		a, err := intake.ReadAssay(bytes.NewReader(l.Assay), l.AssayName)
		if err != nil {
			return err
		}
		asum := sha256.Sum256(l.Assay)
		_, err = reg.AddAssay(ctx, l.ID, "INVENTED demo lab", l.AssayedOn, l.AssayName, hex.EncodeToString(asum[:]), l.Assay, a)
		if err != nil {
			return err
		}
		if err := reg.Weigh(ctx, l.ID, l.WeighedOn, l.WeighedKg, "INVENTED demo weighing, dry"); err != nil {
			return err
		}
		if l.Slip != "" {
			slips = append(slips, l.ID+": "+l.Slip)
		}
	}
	var truth []string
	for _, el := range slices.Sorted(maps.Keys(run.DemoTruth)) {
		truth = append(truth, fmt.Sprintf("%s ×%.2f", el, run.DemoTruth[el]))
	}
	fmt.Fprintf(w, "register %s seeded with %d INVENTED lots, each with an invented manifest, assay and weighing\n",
		reg.Path(), len(lots))
	fmt.Fprintf(w, "drawn from an invented bench whose black mass differs from the model by %s (every chemistry and format)\n",
		strings.Join(truth, ", "))
	for _, s := range slips {
		fmt.Fprintln(w, "spoiled on purpose: "+s)
	}
	fmt.Fprintf(w, "next: blackmass calibrate --db %s\n", reg.Path())
	return nil
}
