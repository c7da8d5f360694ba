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
	"blackmass/feed/intake"
	"blackmass/feed/leach"
	"blackmass/feed/value"
)

// leachFlags binds the leach plan's settings; defaults are leach.DefaultOptions.
type leachFlags struct {
	route      string
	opt        leach.Options
	prices     leach.Prices
	planPath   string
	extraction string
	containers string
	flags      *pflag.FlagSet
	fromPlan   map[string]bool // keys the plan file set
}

// planKeys are the flags a plan file may set ("calibrated" and "db" name a register's
// calibration, on the commands that take one).
var planKeys = []string{"route", "acid-strength", "h2o2-strength", "acid-excess", "free-acid", "h2o2-excess", "pulp-density",
	"liquor-volume", "acid-molarity", "h2o2-vol-pct", "acid-price", "h2o2-price", "reductant", "reductant-g-per-l", "temperature",
	"grow-volume", "extraction", "prices", "currency", "containers", "calibrated", "db"}

func (l *leachFlags) bind(cmd *cobra.Command) {
	d := leach.DefaultOptions()
	fl := cmd.Flags()
	l.flags = fl
	fl.StringVar(&l.planPath, "plan", "", "leach plan file: lines \"key = value\" with the leach flag names, and calibrated and db where the command takes them (flags on the command line win)")
	fl.StringVar(&l.route, "route", d.Route.String(), "leach route: sulfuric-peroxide, hydrochloric or sulfuric-selective")
	leachNumber(fl, &l.opt.AcidWtPct, "acid-strength", 0, "acid bought, wt% (default 98 for H2SO4, 32 for HCl)")
	leachNumber(fl, &l.opt.H2O2WtPct, "h2o2-strength", d.H2O2WtPct, "hydrogen peroxide bought, wt%")
	leachNumber(fl, &l.opt.AcidExcess, "acid-excess", d.AcidExcess, "acid as a factor over stoichiometry")
	leachNumber(fl, &l.opt.FreeAcidMolPerL, "free-acid", d.FreeAcidMolPerL, "free acid to leave in the liquor, mol/L")
	leachNumber(fl, &l.opt.ReductantExcess, "h2o2-excess", d.ReductantExcess, "peroxide as a factor over stoichiometry")
	leachNumber(fl, &l.opt.PulpDensityGPerL, "pulp-density", d.PulpDensityGPerL, "black mass per litre of liquor, g/L")
	leachNumber(fl, &l.opt.LiquorVolumeL, "liquor-volume", 0, "fixed liquor volume in L (instead of the pulp density)")
	leachNumber(fl, &l.opt.RecipeAcidMolPerL, "acid-molarity", 0, "bench recipe: acid molarity of the lixiviant, mol/L (replaces --acid-excess and --free-acid)")
	leachNumber(fl, &l.opt.RecipeH2O2VolPct, "h2o2-vol-pct", 0, "bench recipe: peroxide as vol% of the commercial solution (replaces --h2o2-excess)")
	leachNumber(fl, &l.prices.AcidPerKg, "acid-price", 0, "price per kg of commercial acid (any currency)")
	leachNumber(fl, &l.prices.ReductantPerKg, "h2o2-price", 0, "price per kg of the reductant as bought (same currency)")
	fl.StringVar(&l.opt.Reductant, "reductant", d.Reductant, "reductant of the sulfuric routes: H2O2, SO2, Na2S2O5 (metabisulfite), C6H8O6 (ascorbic acid) or none")
	leachNumber(fl, &l.opt.RecipeReductantGPerL, "reductant-g-per-l", 0, "bench recipe: a solid or gaseous reductant in g per litre of liquor")
	leachNumber(fl, &l.opt.TemperatureC, "temperature", d.TemperatureC, "leach temperature, °C (sets how much peroxide decomposes, how much the oxides' own oxygen reduces them when short of reductant, and the hot end of the saturation check)")
	fl.StringVar(&l.prices.Currency, "currency", "", "currency of the reagent prices (EUR, USD ...), shown with every cost")
	fl.StringVar(&l.containers, "containers", value.DefaultContainerList, "packages reagents are bought in, for the order sheet (capacity in mL, L, g or kg, then a name; comma-separated); the order names the one that fits")
	fl.BoolVar(&l.opt.GrowVolume, "grow-volume", false, "let the liquor volume grow when the reagents alone exceed it (default: refuse)")
	fl.StringVar(&l.extraction, "extraction", "", "your own test-leach extractions, e.g. Co=0.92,Ni=0.95,Li=0.99 (fractions or per cent; * for every metal)")
	_ = cmd.RegisterFlagCompletionFunc("route", cobra.FixedCompletions([]string{"sulfuric-peroxide", "hydrochloric", "sulfuric-selective"}, cobra.ShellCompDirectiveNoFileComp))
	_ = cmd.RegisterFlagCompletionFunc("reductant", cobra.FixedCompletions([]string{"H2O2", "SO2", "Na2S2O5", "C6H8O6", "none"}, cobra.ShellCompDirectiveNoFileComp))
}

// applyPlan sets, from the plan file, every leach flag not given on the command line.
func (l *leachFlags) applyPlan() error {
	l.fromPlan = map[string]bool{}
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
		l.fromPlan[key] = true
		if l.flags.Changed(key) {
			continue
		}
		if err := l.flags.Set(key, val); err != nil {
			return usageError{fmt.Errorf("%s:%d: %s %q: %v", l.planPath, n, key, intake.Printable(val, 40), err)}
		}
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("%s:%d: %v (a plan line is at most %d bytes)", l.planPath, n+1, err, maxPlanLine)
	}
	return nil
}

// maxPlanLine bounds a plan file's line.
const maxPlanLine = 4096

func (l *leachFlags) options() (*leach.Options, error) {
	if err := l.applyPlan(); err != nil {
		return nil, err
	}
	r, err := cathode.ParseRoute(l.route)
	if err != nil {
		return nil, usageError{fmt.Errorf("--route: %w", err)}
	}
	o := l.opt
	o.Route = r
	if err := l.conflicts(r); err != nil {
		return nil, err
	}
	if l.extraction != "" {
		if o.ExtractionOverride, err = parseExtraction(l.extraction); err != nil {
			return nil, usageError{fmt.Errorf("--extraction: %w", err)}
		}
	}
	if o.AcidWtPct == 0 {
		o.AcidWtPct = leach.DefaultAcidWtPct(r)
	}
	if err := o.Validate(); err != nil {
		return nil, err // an *leach.OptionError: a usage error
	}
	return &o, l.prices.Validate()
}

// leachNumber binds a leach option's flag to the one range the leach holds it to (leach.Bounds),
// printed in the help.
func leachNumber(fl *pflag.FlagSet, p *float64, name string, def float64, usage string) {
	b, ok := leach.BoundOf(name)
	if !ok {
		panic("no leach bound for --" + name)
	}
	numberVar(fl, p, name, def, b.Min, b.Max, b.Why, fmt.Sprintf("%s; %g to %g", usage, b.Min, b.Max))
}

// set reports whether a leach setting was given, on the command line or in the plan file.
func (l *leachFlags) set(key string) bool { return l.flags.Changed(key) || l.fromPlan[key] }

// conflicts refuses settings that contradict each other, naming both.
func (l *leachFlags) conflicts(route cathode.Route) error {
	pairs := []struct{ a, b, why string }{
		{"acid-molarity", "acid-excess", "a bench recipe fixes the acid; the excess factor belongs to the planner's dosing"},
		{"acid-molarity", "free-acid", "a bench recipe fixes the acid; the free-acid target belongs to the planner's dosing"},
		{"h2o2-vol-pct", "h2o2-excess", "a bench recipe fixes the peroxide; the excess factor belongs to the planner's dosing"},
		{"reductant-g-per-l", "h2o2-excess", "a bench recipe fixes the reductant; the excess factor belongs to the planner's dosing"},
		{"h2o2-vol-pct", "reductant-g-per-l", "give the reductant once: vol% of a peroxide solution, or g/L of a solid or gas"},
		{"pulp-density", "liquor-volume", "the liquor volume follows from the pulp density, or is given: not both"},
	}
	for _, p := range pairs {
		if l.set(p.a) && l.set(p.b) {
			return usageError{fmt.Errorf("--%s and --%s disagree: %s", p.a, p.b, p.why)}
		}
	}
	if route == cathode.Hydrochloric {
		for _, k := range []string{"h2o2-vol-pct", "h2o2-excess", "h2o2-strength", "reductant", "reductant-g-per-l", "h2o2-price"} {
			if l.set(k) {
				return usageError{fmt.Errorf("--route hydrochloric and --%s disagree: the hydrochloric route adds no reductant (chloride is oxidised to Cl2)", k)}
			}
		}
	}
	if l.set("h2o2-vol-pct") && l.set("reductant") && !strings.EqualFold(l.opt.Reductant, "H2O2") {
		return usageError{fmt.Errorf("--h2o2-vol-pct and --reductant %s disagree: vol%% doses a peroxide solution; give a solid or gas with --reductant-g-per-l", l.opt.Reductant)}
	}
	return nil
}

// parseExtraction reads "Co=0.92,Ni=95%,*=0.9" into fractions per element.
func parseExtraction(s string) (map[string]float64, error) {
	out := map[string]float64{}
	// Only the symbols are checked here (is it an element, is it a metal), and those are
	// IUPAC's, not a table a user edits; the weights that turn wt% into moles come later, from
	// the tables the calculation is given.
	es := cathode.DefaultElements()
	for _, part := range strings.Split(s, ",") {
		el, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		el, val = strings.TrimSpace(el), strings.TrimSpace(val)
		if !ok || el == "" {
			return nil, fmt.Errorf("%q: want ELEMENT=fraction, e.g. Co=0.92", intake.Printable(part, 30))
		}
		if el != "*" && (es.Lookup(el) == nil || !cathode.IsMetal(el)) {
			return nil, fmt.Errorf("%q is not a metal symbol (case matters: Co, not CO)", intake.Printable(el, 10))
		}
		pct := strings.HasSuffix(val, "%")
		v, err := intake.ParseNumber(strings.TrimSuffix(val, "%"), false)
		if err != nil {
			return nil, fmt.Errorf("%s=%q: %v", el, intake.Printable(val, 20), err)
		}
		if pct {
			v /= 100
		}
		if v < 0 || v > 1 {
			return nil, fmt.Errorf("%s=%s: an extraction lies from 0 to 1, or 0 %% to 100 %% with the sign", el, val)
		}
		if _, dup := out[el]; dup {
			return nil, fmt.Errorf("%s given twice", el)
		}
		out[el] = v
	}
	return out, nil
}

// containerList parses --containers.
func (l *leachFlags) containerList() ([]value.Container, error) {
	var out []value.Container
	for _, part := range strings.Split(l.containers, ",") {
		if part = strings.TrimSpace(part); part == "" {
			continue
		}
		c, err := value.ParseContainer(part)
		if err != nil {
			return nil, usageError{fmt.Errorf("--containers: %w", err)}
		}
		out = append(out, c)
	}
	return out, nil
}
