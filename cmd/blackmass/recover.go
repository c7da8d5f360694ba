package main

import (
	"fmt"
	"os"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/recover"
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
}

func (f *recoverFlags) bind(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.BoolVar(&f.on, "recover", false, "plan the recovery after the leach with the default flowsheet "+
		"(impurity removal, Mn, Co/Ni extraction, Co and Ni products, Li, effluent)")
	fl.StringVar(&f.file, "flowsheet", "", "plan the recovery with this flowsheet file (one stage a line; see the README)")
	fl.StringVar(&f.base, "recover-base", "", "base of the impurity and Mn stages: NaOH, Na2CO3, CaCO3, Ca(OH)2 or LiOH")
	fl.StringVar(&f.mnOxidant, "mn-oxidant", "", "Mn oxidant: KMnO4, NaClO, O3, SO2 or Na2S2O8")
	fl.StringVar(&f.coProduct, "co-product", "", "cobalt product: electrowin, hydroxide, carbonate or sulfate")
	fl.StringVar(&f.niProduct, "ni-product", "", "nickel product: electrowin, hydroxide, carbonate or sulfate")
	fl.StringVar(&f.liProduct, "li-product", "", "lithium product: carbonate or phosphate")
}

// set reports whether any recovery flag was given.
func (f *recoverFlags) set() bool {
	return f.on || f.file != "" || f.base != "" || f.mnOxidant != "" || f.coProduct != "" || f.niProduct != "" ||
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
		if fs, err = recover.ParseFlowsheet(r, f.file); err != nil {
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
		{"--co-product", f.coProduct, []string{recover.KindCobalt}, []string{"electrowin", "hydroxide", "carbonate", "sulfate"},
			func(s *recover.Step) { s.Product = f.coProduct }},
		{"--ni-product", f.niProduct, []string{recover.KindNickel}, []string{"electrowin", "hydroxide", "carbonate", "sulfate"},
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
