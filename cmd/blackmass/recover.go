package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/recover"
	"blackmass/feed/report"
	"blackmass/feed/run"
	"blackmass/feed/text"
	"blackmass/feed/value"
)

// recoverFlags choose the recovery flowsheet: --recover for the default, --flowsheet for the
// bench's own file, and the main choices on top of either.
type recoverFlags struct {
	on        bool
	file      string
	base      string
	mnOxidant string
	coProduct string
	niProduct string
	liProduct string
	prices    string // the recovery reagents' prices file
}

func (f *recoverFlags) bind(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.BoolVar(&f.on, "recover", false, "plan the recovery after the leach with the default flowsheet "+
		"(impurity removal, Mn, Co/Ni extraction, Co and Ni products, Li, effluent)")
	fl.StringVar(&f.file, "flowsheet", "", "plan the recovery with this flowsheet file (one stage a line; see the README)")
	fl.StringVar(&f.base, "recover-base", "", "base of the impurity and Mn stages: NaOH, Na2CO3, CaCO3, Ca(OH)2 or LiOH")
	fl.StringVar(&f.mnOxidant, "mn-oxidant", "", "Mn oxidant: KMnO4, NaClO, O3, SO2 or Na2S2O8")
	fl.StringVar(&f.coProduct, "co-product", "", "cobalt product: electrowin, hydroxide, carbonate, sulfate or oxalate")
	fl.StringVar(&f.niProduct, "ni-product", "", "nickel product: electrowin, hydroxide, carbonate, sulfate or oxalate")
	fl.StringVar(&f.liProduct, "li-product", "", "lithium product: carbonate or phosphate")
	fl.StringVar(&f.prices, "recover-prices", "", "the recovery reagents' prices CSV (reagent, price_per_kg as bought, "+
		"currency, source)")
}

// reagentPrices reads --recover-prices; nil without it.
func (f *recoverFlags) reagentPrices() (*recover.ReagentPrices, error) {
	if f.prices == "" {
		return nil, nil
	}
	r, err := os.Open(f.prices)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	return intake.ReadReagentPrices(r, f.prices)
}

// set reports whether any recovery flag was given.
func (f *recoverFlags) set() bool {
	return f.on || f.file != "" || f.prices != "" || f.base != "" || f.mnOxidant != "" || f.coProduct != "" || f.niProduct != "" ||
		f.liProduct != ""
}

// flowsheet is the flowsheet the flags ask for; nil when no recovery flag was given.
func (f *recoverFlags) flowsheet() (*recover.Flowsheet, error) {
	if !f.set() {
		return nil, nil
	}
	fs := recover.DefaultFlowsheet()
	if f.file != "" {
		r, err := os.Open(f.file)
		if err != nil {
			return nil, err
		}
		defer r.Close()
		// A table= file is read beside the flowsheet.
		open := func(p string) (io.ReadCloser, error) {
			if !filepath.IsAbs(p) {
				p = filepath.Join(filepath.Dir(f.file), p)
			}
			return os.Open(p)
		}
		if fs, err = recover.ParseFlowsheetWith(r, f.file, open); err != nil {
			return nil, err
		}
	}
	for _, c := range []struct {
		flag, v string
		kinds   []string
		choices []string
		set     func(*recover.Step)
	}{
		{"--recover-base", f.base, []string{recover.KindImpurity, recover.KindManganese},
			[]string{"NaOH", "Na2CO3", "CaCO3", "Ca(OH)2", "LiOH"}, func(s *recover.Step) { s.Base = f.base }},
		{"--mn-oxidant", f.mnOxidant, []string{recover.KindManganese}, []string{"KMnO4", "NaClO", "O3", "SO2", "Na2S2O8"},
			func(s *recover.Step) { s.Oxidant = f.mnOxidant }},
		{"--co-product", f.coProduct, []string{recover.KindCobalt}, []string{"electrowin", "hydroxide", "carbonate", "sulfate",
			"oxalate"},
			func(s *recover.Step) { s.Product = f.coProduct }},
		{"--ni-product", f.niProduct, []string{recover.KindNickel}, []string{"electrowin", "hydroxide", "carbonate", "sulfate",
			"oxalate"},
			func(s *recover.Step) { s.Product = f.niProduct }},
		{"--li-product", f.liProduct, []string{recover.KindLithium}, []string{"carbonate", "phosphate"},
			func(s *recover.Step) { s.Product = f.liProduct }},
	} {
		if c.v == "" {
			continue
		}
		if !slices.Contains(c.choices, c.v) {
			return nil, usageError{fmt.Errorf("%s %q: want one of %s", c.flag, intake.Printable(c.v, 20), strings.Join(c.choices, ", "))}
		}
		for i := range fs.Steps {
			if slices.Contains(c.kinds, fs.Steps[i].Kind) {
				c.set(&fs.Steps[i])
			}
		}
	}
	if err := fs.Validate(); err != nil {
		if f.file == "" {
			return nil, usageError{err}
		}
		return nil, err
	}
	return &fs, nil
}

type recoverCmdOptions struct {
	flags   recoverFlags
	seed    uint64
	samples int
	volume  string
	asJSON  bool
	prices  string
}

func newRecoverCmd() *cobra.Command {
	o := &recoverCmdOptions{}
	cmd := &cobra.Command{
		Use:   "recover LIQUOR.csv",
		Short: "Plan the recovery stages for a measured leach liquor (element,value,unit: g/L or mg/L)",
		Example: `  blackmass recover liquor.csv --volume 1200L
  blackmass recover liquor.csv --volume 1.2m3 --mn-oxidant NaClO --co-product sulfate --json
  blackmass recover liquor.csv --volume 800L --flowsheet bench.flowsheet`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error { return runRecover(cmd, o, args[0]) },
	}
	o.flags.bind(cmd)
	fl := cmd.Flags()
	_ = fl.MarkHidden("recover") // always on here
	fl.Uint64Var(&o.seed, "seed", 1, "Monte Carlo seed")
	intVar(fl, &o.samples, "samples", 2000, 10, 200_000, "from 10 to 200,000", "Monte Carlo samples of the stages' parameters")
	fl.StringVar(&o.volume, "volume", "", "the liquor's volume: 1200L, 1.2m3 (or a volume row in the file)")
	fl.BoolVar(&o.asJSON, "json", false, "write the report as JSON")
	fl.StringVar(&o.prices, "prices", "", "prices CSV: product rows (Li2CO3, CoSO4·7H2O, Co cathode ...) price the products; "+
		"without one, Co, Ni, Cu metal and Li (LCE)")
	return cmd
}

func runRecover(cmd *cobra.Command, o *recoverCmdOptions, path string) error {
	o.flags.on = true
	fsheet, err := o.flags.flowsheet()
	if err != nil {
		return err
	}
	vol, err := parseVolume(o.volume)
	if err != nil {
		return usageError{err}
	}
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	m, err := intake.ReadLiquor(f, path)
	if err != nil {
		return err
	}
	if vol > 0 {
		m.VolumeL = vol
	}
	t, err := run.DefaultTables()
	if err != nil {
		return err
	}
	eo := estimateOptions{prices: o.prices}
	prices, err := eo.loadPrices()
	if err != nil {
		return err
	}
	rp, err := o.flags.reagentPrices()
	if err != nil {
		return err
	}
	ro := run.Options{Seed: o.seed, Samples: o.samples, Recover: fsheet, Prices: prices, RecoverPrices: rp,
		Containers: value.DefaultContainers(), Inputs: report.Inputs{Version: version}}
	rep, err := run.RecoverLiquor(t, ro, m)
	if err != nil {
		return err
	}
	if o.asJSON {
		return writeJSON(cmd.OutOrStdout(), rep)
	}
	w := cmd.OutOrStdout()
	lq := rep.Liquor
	fmt.Fprintf(w, "liquor %s: %g L, %s, free acid %g mol/L; Monte Carlo %d samples, seed %d\n", lq.File, lq.VolumeL,
		lq.Anion, lq.FreeAcidMolPerL, rep.Inputs.Samples, rep.Inputs.Seed)
	text.WriteRecovery(w, rep.Recovery)
	text.WriteOrder(w, rep.Order)
	return nil
}

// parseVolume reads 1200L, 1200 L, 1.2m3 or 1200 (litres); "" is no volume.
func parseVolume(s string) (float64, error) {
	t := strings.ToLower(strings.ReplaceAll(strings.TrimSpace(s), " ", ""))
	if t == "" {
		return 0, nil
	}
	f := 1.0
	switch {
	case strings.HasSuffix(t, "m3"):
		t, f = strings.TrimSuffix(t, "m3"), 1000
	case strings.HasSuffix(t, "l"):
		t = strings.TrimSuffix(t, "l")
	}
	v, err := intake.ParseNumber(t, false)
	if err != nil || !(v > 0) || v*f > 1e7 {
		return 0, fmt.Errorf("--volume %q: want a positive volume up to 10,000 m3, such as 1200L or 1.2m3", intake.Printable(s, 20))
	}
	return v * f, nil
}
