package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"slices"
	"strconv"
	"time"

	"github.com/spf13/cobra"

	"blackmass/feed/calibrate"
	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/run"
	"blackmass/feed/sheet"
	"blackmass/feed/text"
)

type calibrateOptions struct {
	dbPath, xlsxPath string
	keep, exclude    []string
	asJSON, force    bool
}

func newCalibrateCmd() *cobra.Command {
	o := &calibrateOptions{}
	cmd := &cobra.Command{
		Use:   "calibrate --db FILE",
		Short: "Fit the model's corrections from the register's assayed and weighed lots, and save them",
		Long: `calibrate reads every lot of the register that has a manifest, an assay and a weighing (its
assays combined, times the dry mass of its latest weighing, moisture taken off), and fits per element and per (chemistry,
format) a factor on what the model sends to the black mass, with today's model as the prior. The
calibration is saved in the register under the next version; estimate, demo and lot add use it only
with --calibrated. The report gives, per element, the bias and the P10-P90 coverage before and after
(each lot predicted from the others), and names the lots left out or disagreeing.`,
		Example: `  blackmass demo --seed-register bench.db
  blackmass calibrate --db bench.db
  blackmass calibrate --db bench.db --exclude KR-3107 --xlsx calibration.xlsx
  blackmass estimate lot.csv --calibrated --db bench.db`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error { return runCalibrate(cmd.OutOrStdout(), o) },
	}
	fl := cmd.Flags()
	fl.StringVar(&o.dbPath, "db", "", "the register file (default "+defaultDBHint()+")")
	fl.StringSliceVar(&o.keep, "keep", nil, "keep a lot the outlier rules would leave out (repeat, or separate with commas)")
	fl.StringSliceVar(&o.exclude, "exclude", nil, "leave a lot out of the fit (repeat, or separate with commas)")
	fl.BoolVar(&o.asJSON, "json", false, "write the calibration and its report as JSON")
	fl.StringVar(&o.xlsxPath, "xlsx", "", "also write the calibration workbook (estimate against assay) to this .xlsx file")
	fl.BoolVar(&o.force, "force", false, "overwrite an existing workbook")
	return cmd
}

// calibrationInputs reads the register's lots as a calibration takes them.
func calibrationInputs(ctx context.Context, reg *register.Register) ([]calibrate.Lot, []calibrate.Skipped, error) {
	return reg.CalibrationLots(ctx)
}

func runCalibrate(w io.Writer, o *calibrateOptions) error {
	if o.xlsxPath != "" {
		if err := checkWritable(o.xlsxPath, o.force); err != nil {
			return err
		}
	}
	reg, err := openExisting(o.dbPath)
	if err != nil {
		return err
	}
	defer reg.Close()
	ctx := context.Background()
	lots, skipped, err := calibrationInputs(ctx, reg)
	if err != nil {
		return err
	}
	for _, list := range []struct {
		flag string
		ids  []string
	}{{"--keep", o.keep}, {"--exclude", o.exclude}} {
		for _, id := range list.ids {
			if !slices.ContainsFunc(lots, func(l calibrate.Lot) bool { return l.ID == id }) {
				return usageError{fmt.Errorf("%s %s: not among the register's %d assayed and weighed lots", list.flag,
					intake.Printable(id, 64), len(lots))}
			}
		}
	}
	opt := calibrate.DefaultOptions(time.Now())
	opt.Keep, opt.Exclude = o.keep, o.exclude
	c, rep, err := calibrate.Fit(lots, opt)
	if errors.Is(err, calibrate.ErrTooFewLots) {
		return fmt.Errorf("register %s: %w; record more lots with lot add, lot assay and lot weigh "+
			"(%d assayed and weighed lots could not take part)", reg.Path(), err, len(skipped))
	}
	if err != nil {
		return fmt.Errorf("register %s: %w", reg.Path(), err)
	}
	if c.Version, err = reg.SaveCalibration(ctx, c); err != nil {
		return err
	}
	out := &calibrate.Outcome{Register: reg.Path(), Calibration: c, Report: rep, Skipped: skipped}
	if o.xlsxPath != "" {
		if err := writeNewFile(o.xlsxPath, o.force, func(w io.Writer) error { return sheet.WriteCalibration(w, out) }); err != nil {
			return err
		}
	}
	if o.asJSON {
		return writeJSON(w, out)
	}
	text.WriteCalibration(w, out)
	if o.xlsxPath != "" {
		fmt.Fprintf(w, "\nCalibration workbook written to %s\n", o.xlsxPath)
	}
	return nil
}

// openExisting opens a register that must already exist (default path if none given): reading a
// calibration never creates a register.
func openExisting(path string) (*register.Register, error) {
	if path == "" {
		var err error
		if path, err = defaultDBPath(); err != nil {
			return nil, fmt.Errorf("no register path: %w (give --db PATH)", err)
		}
	}
	if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("register %s does not exist: give --db with the register the lots are in", path)
	}
	return register.Open(path)
}

// calibratedFlags binds --calibrated (and, unless the command has its own, --db) to an estimate.
func bindCalibrated(cmd *cobra.Command, o *estimateOptions, db *string) {
	fl := cmd.Flags()
	fl.StringVar(&o.calibrated, "calibrated", "",
		"scale the estimate by a calibration of the register (--db): the latest, or --calibrated=N for version N")
	fl.Lookup("calibrated").NoOptDefVal = "latest"
	if db == nil {
		db = new(string)
		fl.StringVar(db, "db", "", "the register whose calibration --calibrated takes (default "+defaultDBHint()+")")
	}
	o.calDB = db
}

// loadCalibration reads the calibration --calibrated names into the run's options.
func (o *estimateOptions) loadCalibration(ro *run.Options) error {
	if o.calibrated == "" {
		return nil
	}
	version := 0
	if o.calibrated != "latest" {
		v, err := strconv.Atoi(o.calibrated)
		if err != nil || v < 1 {
			return usageError{fmt.Errorf("--calibrated=%s: want a calibration version (1, 2 ...) or no value for the latest",
				intake.Printable(o.calibrated, 20))}
		}
		version = v
	}
	path := ""
	if o.calDB != nil {
		path = *o.calDB
	}
	if path == "" {
		if p, err := defaultDBPath(); err == nil {
			if _, err := os.Stat(p); errors.Is(err, fs.ErrNotExist) {
				return usageError{fmt.Errorf("--calibrated: no --db given and no register at %s: give --db with the register that holds the calibration", p)}
			}
		}
	}
	reg, err := openExisting(path)
	if err != nil {
		return err
	}
	defer reg.Close()
	ctx := context.Background()
	var c *calibrate.Calibration
	if version == 0 {
		c, err = reg.LatestCalibration(ctx)
	} else {
		c, err = reg.Calibration(ctx, version)
	}
	if errors.Is(err, register.ErrNoCalibration) {
		return fmt.Errorf("%w: run blackmass calibrate --db %s first", err, reg.Path())
	}
	if err != nil {
		return err
	}
	ro.Calibration, ro.CalibrationSource = c, reg.Path()
	return nil
}
