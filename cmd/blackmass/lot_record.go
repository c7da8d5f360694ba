package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/feed/assay"
	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/text"
)

func newLotAssayCmd(lo *lotOptions) *cobra.Command {
	var lab, on string
	cmd := &cobra.Command{
		Use:     "assay ID ASSAY.csv --lab NAME",
		Short:   "Attach a lab assay to a lot (every assay is kept, below-limit values and moisture with it)",
		Example: `  blackmass lot assay KR-2611 testdata/assay-KR-2611.csv --lab "Tarn Valley Assay Lab" --date 2026-12-01`,
		Args:    cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotAssay(cmd.OutOrStdout(), lo, args[0], args[1], lab, on)
		},
	}
	cmd.Flags().StringVar(&lab, "lab", "", "the laboratory that made the assay")
	cmd.Flags().StringVar(&on, "date", "", "date of the assay, YYYY-MM-DD (default today)")
	return cmd
}

func runLotAssay(w io.Writer, lo *lotOptions, id, path, lab, on string) error {
	if on == "" {
		on = today()
	}
	if err := register.CheckAssay(lab, on); err != nil {
		return usageError{flagged("--date", err)}
	}
	b, err := readCapped(path, 1<<20)
	if err != nil {
		return err
	}
	a, err := intake.ReadAssay(bytes.NewReader(b), path)
	if err != nil {
		return err
	}
	reg, err := lo.open()
	if err != nil {
		return err
	}
	defer reg.Close()
	sum := sha256.Sum256(b)
	aid, err := reg.AddAssay(context.Background(), id, lab, on, filepath.Base(path), hex.EncodeToString(sum[:]), b, a)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "assay %d attached to lot %s (%d elements, %s, %s)\n", aid, intake.Printable(id, 64), len(a.Values), intake.Printable(lab, 60), on)
	for _, v := range a.Values {
		if v.Censored {
			fmt.Fprintf(w, "  %s %s: below the detection limit, kept as the range 0 to the limit\n", v.Element, v.Text())
		}
	}
	if a.Moisture != nil {
		fmt.Fprintf(w, "  moisture %s of the wet sample: a weighing with no moisture of its own is taken as wet at it\n", a.Moisture.Text())
	}
	return nil
}

// weighFlags are lot weigh's flags.
type weighFlags struct {
	mass, on, note, moisture, sigma string
	dry, wet                        bool
}

func newLotWeighCmd(lo *lotOptions) *cobra.Command {
	o := &weighFlags{}
	cmd := &cobra.Command{
		Use:   "weigh ID --mass WEIGHT [--moisture PCT | --dry | --wet]",
		Short: "Record the weighed black mass of a lot, wet (with its moisture) or dry",
		Example: `  blackmass lot weigh KR-2611 --mass "212 kg" --moisture 8 --date 2026-12-01
  blackmass lot weigh KR-2611 --mass "195 kg" --dry --sigma "0.5 kg" --note "after drying at 105 °C"`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			wg, err := o.weighing()
			if err != nil {
				return err
			}
			return lo.with(func(reg *register.Register) error {
				if err := reg.RecordWeighing(context.Background(), args[0], wg); err != nil {
					return err
				}
				fmt.Fprintf(cmd.OutOrStdout(), "lot %s weighed: %s kg on %s (%s)\n", intake.Printable(args[0], 64), text.Num(wg.Kg), wg.On, weighedAs(wg))
				if wg.State != register.StateDry && wg.MoistureWtPct == nil {
					return wetDryMass(cmd.OutOrStdout(), reg, args[0])
				}
				return nil
			})
		},
	}
	cmd.Flags().StringVar(&o.mass, "mass", "", "weighed black mass with its unit (kg, t, lb ...)")
	cmd.Flags().StringVar(&o.on, "date", "", "date weighed, YYYY-MM-DD (default today)")
	cmd.Flags().StringVar(&o.note, "note", "", "a note (sieve, scale, bags)")
	cmd.Flags().StringVar(&o.moisture, "moisture", "", "water in the weighed mass, wt% of the wet mass (the mass is wet)")
	cmd.Flags().BoolVar(&o.dry, "dry", false, "the mass was weighed dry")
	cmd.Flags().BoolVar(&o.wet, "wet", false, "the mass was weighed wet, its moisture that of the lot's assay")
	cmd.Flags().StringVar(&o.sigma, "sigma", "", "standard uncertainty of the weighing with its unit (default 1 % of the mass)")
	return cmd
}

// weighing checks the flags, before the register is opened: a bad one is a usage error and
// nothing is written.
func (o *weighFlags) weighing() (register.WeighingEvidence, error) {
	kg, err := intake.ParseMassKg(o.mass)
	if err != nil {
		return register.WeighingEvidence{}, usageError{fmt.Errorf("--mass %q: %w", intake.Printable(o.mass, 40), err)}
	}
	wg := register.WeighingEvidence{On: o.on, Kg: kg, Note: o.note}
	if wg.On == "" {
		wg.On = today()
	}
	switch {
	case o.dry && (o.wet || o.moisture != ""):
		return wg, usageError{errors.New("--dry with --wet or --moisture: a mass is weighed one way")}
	case o.dry:
		wg.State = register.StateDry
	case o.wet || o.moisture != "":
		wg.State = register.StateWet
	}
	if o.moisture != "" {
		m, err := assay.ParseMoisture(o.moisture)
		if err != nil {
			return wg, usageError{fmt.Errorf("--moisture: %w", err)}
		}
		wg.MoistureWtPct = &m.WtPct
	}
	if o.sigma != "" {
		if wg.SigmaKg, err = intake.ParseMassKg(o.sigma); err != nil {
			return wg, usageError{fmt.Errorf("--sigma %q: %w", intake.Printable(o.sigma, 40), err)}
		}
		if wg.SigmaKg > wg.Kg {
			return wg, usageError{fmt.Errorf("--sigma %q: larger than the mass weighed (%s kg)", intake.Printable(o.sigma, 40), text.Num(wg.Kg))}
		}
	}
	if err := register.CheckWeighing(wg); err != nil {
		return wg, usageError{flagged("--date", err)}
	}
	return wg, nil
}

// wetDryMass says, after a wet weighing without a moisture of its own, what dry mass the lot now
// rests on: the assay's moisture taken off, or not known yet.
func wetDryMass(w io.Writer, reg *register.Register, id string) error {
	d, err := reg.Show(context.Background(), id)
	if err != nil {
		return err
	}
	if dm := d.Evidence.DryMass; dm != nil {
		fmt.Fprintf(w, "  dry mass %s ± %s kg (moisture %s wt%%, %s)\n", text.Num(dm.Kg), text.Num(dm.SigmaKg), text.Num(dm.MoistureWtPct), dm.MoistureFrom)
		return nil
	}
	fmt.Fprintln(w, "  dry mass not known yet: no assay of the lot gives a moisture; its metal stays on the estimate until one does"+
		" (or weigh again with --moisture)")
	return nil
}

// flagged names the flag of a date error ("--date: date ..."); other errors name their own.
func flagged(flag string, err error) error {
	if strings.HasPrefix(err.Error(), "date ") {
		return fmt.Errorf("%s: %w", flag, err)
	}
	return err
}

// weighedAs says how a weighing was recorded.
func weighedAs(w register.WeighingEvidence) string {
	switch {
	case w.MoistureWtPct != nil:
		return fmt.Sprintf("wet at %s wt%% moisture: %s kg dry", text.Num(*w.MoistureWtPct), text.Num(w.Kg*(1-*w.MoistureWtPct/100)))
	case w.State == register.StateDry:
		return "dry"
	case w.State == register.StateWet:
		return "wet, at the moisture of the lot's latest assay that gives one"
	}
	return "neither wet nor dry said: taken as wet at an assay's moisture if one gives it, else as dry"
}
