package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"blackmass/cathode"
	"blackmass/feed/leach"
	"blackmass/feed/recover"
	"blackmass/feed/run"
)

// version is set at build time with -ldflags "-X main.version=...".
var version = "dev"

// Main runs the command line and returns the process exit code: 0 on success, 1 for bad input
// data or a failed run (printed once to stderr), 2 for a usage error.
func Main(args []string, in io.Reader, out, errOut io.Writer) int {
	root := newRootCmd()
	tout, terr := &termWriter{w: out}, &termWriter{w: errOut}
	root.SetArgs(args)
	root.SetIn(in)
	root.SetOut(tout)
	root.SetErr(terr)
	errOut = terr
	err := root.Execute()
	if err == nil && tout.err != nil {
		err = fmt.Errorf("writing the output: %w", tout.err)
	}
	if err != nil {
		fmt.Fprintln(errOut, "blackmass:", err)
		var ue usageError
		var oe *run.OptionError
		var le *leach.OptionError      // a leach option out of its range is a mistake in the command line
		var fe *recover.FlowsheetError // with no file, the flowsheet came from the flags
		if errors.As(err, &ue) || errors.As(err, &oe) || errors.As(err, &le) || (errors.As(err, &fe) && fe.File == "") ||
			strings.HasPrefix(err.Error(), "unknown command") {
			fmt.Fprintln(errOut, "run 'blackmass help' for usage")
			return exitUsage
		}
		return exitError
	}
	return exitOK
}

// Exit codes: success, bad input or a failed run, and a command line that cannot be run.
const (
	exitOK    = 0
	exitError = 1
	exitUsage = 2
)

// usageError marks a mistake in the command line (unknown flag, bad flag value, wrong number of
// arguments) rather than in the input data.
type usageError struct{ error }

func (u usageError) Unwrap() error { return u.error }

// markUsageErrors makes flag and argument errors of every command usage errors.
func markUsageErrors(c *cobra.Command) {
	c.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return usageError{err} })
	if c.PreRunE == nil && c.PreRun == nil {
		c.PreRunE = refuseEmptyFlags
	}
	if args := c.Args; args != nil {
		c.Args = func(cmd *cobra.Command, a []string) error {
			if err := args(cmd, a); err != nil {
				return usageError{err}
			}
			return nil
		}
	}
	for _, sub := range c.Commands() {
		markUsageErrors(sub)
	}
}

// refuseEmptyFlags refuses a text flag given with an empty value (--moisture "", --calibrated=):
// read as the flag left off, a script's unset variable would turn a wet weighing dry or drop a
// calibration without a word.
func refuseEmptyFlags(cmd *cobra.Command, _ []string) error {
	var err error
	cmd.Flags().Visit(func(f *pflag.Flag) {
		if err == nil && f.Value.Type() == "string" && strings.TrimSpace(f.Value.String()) == "" {
			err = usageError{fmt.Errorf("--%s: an empty value; give one, or leave the flag off", f.Name)}
		}
	})
	return err
}

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "blackmass",
		Short: "Estimate the metals, leach reagents and leach liquor of a lot of scrap lithium-ion cells",
		Long: `blackmass turns a manifest of scrap lithium-ion cells and packs into the mass of every
metal in the black mass (with P10/P50/P90 uncertainty), the acid and peroxide its leach will
consume, the expected leach-liquor composition, and an .xlsx intake sheet for the lot.

Estimates support planning only. Charged cells, acids, peroxide, toxic metals and flammable or
toxic gases (H2, Cl2, HF) are hazards: follow local codes, safety data sheets and licensed practice.`,
		Version:       version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetVersionTemplate("{{.Name}} {{.Version}}\n")
	root.SetUsageTemplate(usageTemplate)
	root.AddCommand(newChemCmd(), newEstimateCmd(), newDemoCmd(), newQuoteCmd(), newReconcileCmd(), newInferCmd(), newLotCmd(), newCalibrateCmd(), newRecoverCmd())
	markUsageErrors(root)
	return root
}

// catalogueOptions are the flags every command that resolves chemistry labels shares.
type catalogueOptions struct {
	catalogPath string
	priorPath   string
}

func (o *catalogueOptions) bind(cmd *cobra.Command) {
	cmd.Flags().StringVar(&o.catalogPath, "catalog", "", "extra chemistry catalogue CSV (same columns as data/chemistries.csv)")
	cmd.Flags().StringVar(&o.priorPath, "prior", "", "unknown-chemistry shares CSV (columns application, chemistry, share, source), replacing data/prior.csv rows")
}

// tables loads the embedded tables once, the user's catalogue and prior added to them.
func (o *catalogueOptions) tables() (*run.Tables, error) {
	t, err := run.DefaultTables()
	if err != nil {
		return nil, err
	}
	if err := o.extend(t.Catalogue); err != nil {
		return nil, err
	}
	return t, nil
}

// extend adds --catalog and --prior to the catalogue.
func (o *catalogueOptions) extend(cat *cathode.Catalogue) error {
	if o.catalogPath != "" {
		f, err := os.Open(o.catalogPath)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := cat.Add(f, o.catalogPath); err != nil {
			return err
		}
	}
	if o.priorPath != "" {
		f, err := os.Open(o.priorPath)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := cat.SetPrior(f, o.priorPath); err != nil {
			return err
		}
	}
	return nil
}
