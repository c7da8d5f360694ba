package main

import (
	"bufio"
	"fmt"
	"os"
	"slices"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed"
	"blackmass/feed/intake"
)

// leachFlags binds the leach plan's settings; defaults are feed.DefaultLeachOptions.
type leachFlags struct {
	route    string
	opt      feed.LeachOptions
	planPath string
	flags    *pflag.FlagSet
}

// planKeys are the flags a plan file may set.
var planKeys = []string{"route", "acid-strength", "h2o2-strength", "acid-excess", "free-acid", "h2o2-excess", "pulp-density",
	"liquor-volume", "acid-molarity", "h2o2-vol-pct", "acid-price", "h2o2-price"}

func (l *leachFlags) bind(cmd *cobra.Command) {
	d := feed.DefaultLeachOptions()
	fl := cmd.Flags()
	l.flags = fl
	fl.StringVar(&l.planPath, "plan", "", "leach plan file: lines \"key = value\" with the leach flag names (flags on the command line win)")
	fl.StringVar(&l.route, "route", d.Route.String(), "leach route: sulfuric-peroxide, hydrochloric or sulfuric-selective")
	numberVar(fl, &l.opt.AcidWtPct, "acid-strength", 0, 1, 100, "a mass fraction in per cent", "acid bought, wt% (default 98 for H2SO4, 32 for HCl)")
	numberVar(fl, &l.opt.H2O2WtPct, "h2o2-strength", d.H2O2WtPct, 1, 100, "a mass fraction in per cent", "hydrogen peroxide bought, wt%")
	numberVar(fl, &l.opt.AcidExcess, "acid-excess", d.AcidExcess, 0.1, 10, "a factor over stoichiometry", "acid as a factor over stoichiometry")
	numberVar(fl, &l.opt.FreeAcidMolPerL, "free-acid", d.FreeAcidMolPerL, 0, 10, "above any practical leach liquor", "free acid to leave in the liquor, mol/L")
	numberVar(fl, &l.opt.ReductantExcess, "h2o2-excess", d.ReductantExcess, 0, 10, "a factor over stoichiometry", "peroxide as a factor over stoichiometry")
	numberVar(fl, &l.opt.PulpDensityGPerL, "pulp-density", d.PulpDensityGPerL, 1, 1000, "a slurry past 1000 g/L cannot be stirred", "black mass per litre of liquor, g/L")
	numberVar(fl, &l.opt.LiquorVolumeL, "liquor-volume", 0, 0.001, 1e7, "from 1 mL to 10,000 m³", "fixed liquor volume in L (instead of the pulp density)")
	numberVar(fl, &l.opt.RecipeAcidMolPerL, "acid-molarity", 0, 0.01, 18.4, "98 % sulfuric acid is 18.4 mol/L (CRC Handbook)", "bench recipe: acid molarity of the lixiviant, mol/L (replaces --acid-excess and --free-acid)")
	numberVar(fl, &l.opt.RecipeH2O2VolPct, "h2o2-vol-pct", 0, 0.01, 100, "a volume fraction in per cent", "bench recipe: peroxide as vol% of the commercial solution (replaces --h2o2-excess)")
	numberVar(fl, &l.opt.AcidPricePerKg, "acid-price", 0, 0, 1e6, "a price per kg", "price per kg of commercial acid (any currency)")
	numberVar(fl, &l.opt.H2O2PricePerKg, "h2o2-price", 0, 0, 1e6, "a price per kg", "price per kg of commercial peroxide (same currency)")
}

// applyPlan sets, from the plan file, every leach flag not given on the command line.
func (l *leachFlags) applyPlan() error {
	if l.planPath == "" {
		return nil
	}
	f, err := os.Open(l.planPath)
	if err != nil {
		return err
	}
	defer f.Close()
	sc := bufio.NewScanner(data.SkipBOM(f))
	sc.Buffer(make([]byte, 0, 4096), maxPlanLine)
	seen := map[string]int{}
	n := 0
	for sc.Scan() {
		n++
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		key, val, ok := strings.Cut(line, "=")
		key, val = strings.TrimSpace(key), strings.TrimSpace(val)
		if !ok || !slices.Contains(planKeys, key) {
			return fmt.Errorf("%s:%d: %q: want \"key = value\" with a key among %s", l.planPath, n, intake.Printable(line, 60), strings.Join(planKeys, ", "))
		}
		if first, dup := seen[key]; dup {
			return fmt.Errorf("%s:%d: %s given twice (first on line %d)", l.planPath, n, key, first)
		}
		seen[key] = n
		if l.flags.Changed(key) {
			continue
		}
		if err := l.flags.Set(key, val); err != nil {
			return fmt.Errorf("%s:%d: %s %q: %v", l.planPath, n, key, intake.Printable(val, 40), err)
		}
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("%s:%d: %v (a plan line is at most %d bytes)", l.planPath, n+1, err, maxPlanLine)
	}
	return nil
}

// maxPlanLine bounds a plan file's line.
const maxPlanLine = 4096

func (l *leachFlags) options() (*feed.LeachOptions, error) {
	if err := l.applyPlan(); err != nil {
		return nil, err
	}
	r, err := cathode.ParseRoute(l.route)
	if err != nil {
		return nil, err
	}
	o := l.opt
	o.Route = r
	if o.AcidWtPct == 0 {
		o.AcidWtPct = 98
		if r == cathode.Hydrochloric {
			o.AcidWtPct = 32
		}
	}
	return &o, nil
}
