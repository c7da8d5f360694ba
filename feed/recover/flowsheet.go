package recover

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"blackmass/data"
)

// Stage kinds, in the only order a flowsheet may list them.
const (
	KindImpurity  = "impurity"
	KindManganese = "manganese"
	KindSX        = "sx"
	KindCobalt    = "cobalt"
	KindNickel    = "nickel"
	KindLithium   = "lithium"
	KindEffluent  = "effluent"
)

// Kinds lists the stage kinds in flowsheet order.
var Kinds = []string{KindImpurity, KindManganese, KindSX, KindCobalt, KindNickel, KindLithium, KindEffluent}

// Step is one stage of a flowsheet and its settings; a setting a kind does not use stays zero.
type Step struct {
	Kind string `json:"kind"`
	// Base neutralises acid (impurity, manganese, sx saponification, hydroxide products):
	// NaOH, Na2CO3, CaCO3, Ca(OH)2 or LiOH.
	Base string `json:"base,omitempty"`
	// PH is the stage's end pH (impurity, manganese, hydroxide products) or the equilibrium pH (sx).
	PH           float64 `json:"ph,omitempty"`
	TemperatureC float64 `json:"temperature_c,omitempty"`
	// FeOxidant oxidises Fe(II) before the impurity precipitation: H2O2 or air.
	FeOxidant string `json:"fe_oxidant,omitempty"`
	// Copper is the impurity stage's copper route: cement (on iron powder, first) or none.
	Copper string `json:"copper,omitempty"`
	// Oxidant takes Mn(II) to MnO2: KMnO4, NaClO, O3, SO2 (with air) or Na2S2O8.
	Oxidant string `json:"oxidant,omitempty"`
	// OA is the solvent extraction's organic-to-aqueous ratio; Stages its counter-current stages
	// (0: from the Kremser equation for CoRecovery).
	OA         float64 `json:"oa,omitempty"`
	Stages     int     `json:"stages,omitempty"`
	CoRecovery float64 `json:"co_recovery,omitempty"`
	// Table is the sx stage's own distribution table (its file in TableFile), in place of
	// recover_sx.csv.
	TableFile string        `json:"table,omitempty"`
	Table     *Distribution `json:"-"`
	// Product: electrowin, hydroxide, carbonate or sulfate (cobalt, nickel); carbonate or
	// phosphate (lithium).
	Product string `json:"product,omitempty"`
	// CurrentDensityAPerM2 and CathodeAreaM2 give the electrowinning hours.
	CurrentDensityAPerM2 float64 `json:"current_density_a_per_m2,omitempty"`
	CathodeAreaM2        float64 `json:"cathode_area_m2,omitempty"`
	// Evaporate is the share of the water boiled off before the lithium precipitation.
	Evaporate float64 `json:"evaporate,omitempty"`
	// Line is the flowsheet file's line (0: not from a file).
	Line int `json:"-"`
}

// Flowsheet is the ordered list of stages a liquor goes through.
type Flowsheet struct {
	File  string `json:"file,omitempty"`
	Steps []Step `json:"steps"`
}

// DefaultStep is a stage with its default settings.
func DefaultStep(kind string) Step {
	switch kind {
	case KindImpurity:
		return Step{Kind: kind, Base: "NaOH", PH: 4.5, TemperatureC: 60, FeOxidant: "H2O2", Copper: "cement"}
	case KindManganese:
		return Step{Kind: kind, Oxidant: "KMnO4", Base: "NaOH", PH: 4.0, TemperatureC: 60}
	case KindSX:
		return Step{Kind: kind, PH: 5.0, OA: 3, CoRecovery: 0.995, Base: "NaOH", TemperatureC: 25}
	case KindCobalt:
		return Step{Kind: kind, Product: "electrowin", CurrentDensityAPerM2: 250, CathodeAreaM2: 1, TemperatureC: 60, PH: 9.5}
	case KindNickel:
		return Step{Kind: kind, Product: "hydroxide", Base: "NaOH", PH: 9.0, TemperatureC: 60,
			CurrentDensityAPerM2: 250, CathodeAreaM2: 1}
	case KindLithium:
		return Step{Kind: kind, Product: "carbonate", TemperatureC: 95, Evaporate: 0.5}
	case KindEffluent:
		return Step{Kind: kind, TemperatureC: 20}
	}
	return Step{Kind: kind}
}

// DefaultFlowsheet is every stage with its defaults.
func DefaultFlowsheet() Flowsheet {
	var f Flowsheet
	for _, k := range Kinds {
		f.Steps = append(f.Steps, DefaultStep(k))
	}
	return f
}

// FlowsheetError is a flowsheet that cannot be run: its file, line and field.
type FlowsheetError struct {
	File  string
	Line  int
	Kind  string // the stage's kind, named when the flowsheet has no file (made from the defaults and flags)
	Field string
	Err   error
}

func (e *FlowsheetError) Error() string {
	loc := e.File
	if loc == "" {
		loc = "flowsheet"
		if e.Kind != "" {
			loc += ", " + e.Kind + " stage"
		}
	}
	if e.Line > 0 {
		loc += ":" + strconv.Itoa(e.Line)
	}
	if e.Field != "" {
		loc += ": " + e.Field
	}
	return loc + ": " + e.Err.Error()
}

func (e *FlowsheetError) Unwrap() error { return e.Err }

func (f Flowsheet) fail(st Step, field, format string, a ...any) error {
	return &FlowsheetError{File: f.File, Line: st.Line, Kind: st.Kind, Field: field, Err: fmt.Errorf(format, a...)}
}

// choices of each setting.
var (
	baseChoices      = []string{"NaOH", "Na2CO3", "CaCO3", "Ca(OH)2", "LiOH"}
	feOxChoices      = []string{"H2O2", "air"}
	oxidantChoices   = []string{"KMnO4", "NaClO", "O3", "SO2", "Na2S2O8"}
	metalProducts    = []string{"electrowin", "hydroxide", "carbonate", "sulfate", "oxalate"}
	lithiumProducts  = []string{"carbonate", "phosphate"}
	carbonateBaseMax = 6.3 // pKa1 of carbonic acid, 6.35 at 25 °C (from memory)
)

// Validate checks the order of the stages and every setting.
func (f Flowsheet) Validate() error {
	if len(f.Steps) == 0 {
		return &FlowsheetError{File: f.File, Err: fmt.Errorf("no stages: list at least one of %s", strings.Join(Kinds, ", "))}
	}
	last := -1
	for _, st := range f.Steps {
		k := slices.Index(Kinds, st.Kind)
		if k < 0 {
			return f.fail(st, "stage", "%q is not a stage (want %s)", st.Kind, strings.Join(Kinds, ", "))
		}
		if k <= last {
			return f.fail(st, "stage", "%s cannot come after %s: stages run in the order %s, each once",
				st.Kind, Kinds[last], strings.Join(Kinds, ", "))
		}
		last = k
		if st.Kind == KindCobalt && !slices.ContainsFunc(f.Steps, func(s Step) bool { return s.Kind == KindSX }) {
			return f.fail(st, "stage", "the cobalt product needs the sx stage before it, which makes the cobalt strip liquor")
		}
		if err := f.validateStep(st); err != nil {
			return err
		}
	}
	return nil
}

func (f Flowsheet) validateStep(st Step) error {
	oneOf := func(field, v string, choices []string) error {
		if !slices.Contains(choices, v) {
			return f.fail(st, field, "%q: want one of %s", v, strings.Join(choices, ", "))
		}
		return nil
	}
	if !(st.TemperatureC >= 0 && st.TemperatureC <= 100) {
		return f.fail(st, "temperature", "%g °C: an aqueous stage at atmospheric pressure runs from 0 to 100 °C", st.TemperatureC)
	}
	switch st.Kind {
	case KindImpurity, KindManganese:
		lo, hi := 2.0, 6.5
		if st.Kind == KindManganese {
			lo, hi = 1.5, 6.0
		}
		if !(st.PH >= lo && st.PH <= hi) {
			return f.fail(st, "ph", "%g cannot be reached as this stage's end: from %g to %g (above it nickel and cobalt "+
				"hydroxides form)", st.PH, lo, hi)
		}
		if err := oneOf("base", st.Base, baseChoices); err != nil {
			return err
		}
		if st.Kind == KindImpurity {
			if err := oneOf("fe-oxidant", st.FeOxidant, feOxChoices); err != nil {
				return err
			}
			if err := oneOf("copper", st.Copper, []string{"cement", "none"}); err != nil {
				return err
			}
		} else if err := oneOf("oxidant", st.Oxidant, oxidantChoices); err != nil {
			return err
		}
	case KindSX:
		lo := 2.0 // the phosphinic acid's tables start there
		if st.Table != nil {
			lo = 0
		}
		if !(st.PH >= lo && st.PH <= 7) {
			return f.fail(st, "ph", "%g: the extraction's equilibrium pH runs from %g to 7", st.PH, lo)
		}
		if !(st.OA > 0 && st.OA <= 10) {
			return f.fail(st, "oa", "%g: the O/A ratio is more than 0 and at most 10", st.OA)
		}
		if st.Stages < 0 || st.Stages > 20 {
			return f.fail(st, "stages", "%d: from 1 to 20, or 0 for the Kremser equation", st.Stages)
		}
		if st.Stages == 0 && !(st.CoRecovery > 0 && st.CoRecovery < 1) {
			return f.fail(st, "co-recovery", "%g: a share above 0 and below 1", st.CoRecovery)
		}
		if err := oneOf("base", st.Base, []string{"NaOH"}); err != nil {
			return err
		}
		if st.TableFile != "" && st.Table == nil {
			return f.fail(st, "table", "%s was not read", st.TableFile)
		}
		if st.Table != nil {
			if err := st.Table.check(st.PH); err != nil {
				return err
			}
			if _, ok := st.Table.points["Co"]; !ok {
				return &FlowsheetError{File: st.Table.File, Field: "metal", Err: errors.New("no Co points: the extraction is designed on Co")}
			}
		}
	case KindCobalt, KindNickel:
		if err := oneOf("product", st.Product, metalProducts); err != nil {
			return err
		}
		if st.Product == "electrowin" && !(st.CurrentDensityAPerM2 > 0 && st.CathodeAreaM2 > 0) {
			return f.fail(st, "current-density", "electrowinning needs a positive current density and cathode area")
		}
		if st.Product == "hydroxide" && !(st.PH >= 7 && st.PH <= 12) {
			return f.fail(st, "ph", "%g: a hydroxide product precipitates from pH 7 to 12", st.PH)
		}
	case KindLithium:
		if err := oneOf("product", st.Product, lithiumProducts); err != nil {
			return err
		}
		if !(st.Evaporate >= 0 && st.Evaporate < 0.95) {
			return f.fail(st, "evaporate", "%g: the share of water boiled off, from 0 to below 0.95", st.Evaporate)
		}
	}
	if st.Base != "" && bases[st.Base].co2 > 0 && st.PH > carbonateBaseMax {
		return f.fail(st, "base", "%s releases its CO2 only below pH %g: use NaOH for pH %g", st.Base, carbonateBaseMax, st.PH)
	}
	return nil
}

// ParseFlowsheet reads a flowsheet file: one stage a line, its kind first, then settings as
// key=value; '#' starts a comment. A setting left out takes the stage's default. A table=
// setting needs ParseFlowsheetWith, which can open it.
func ParseFlowsheet(r io.Reader, name string) (Flowsheet, error) {
	return ParseFlowsheetWith(r, name, nil)
}

// ParseFlowsheetWith is ParseFlowsheet with open reading an sx stage's table= file (nil: none
// can be read).
func ParseFlowsheetWith(r io.Reader, name string, open func(path string) (io.ReadCloser, error)) (Flowsheet, error) {
	f := Flowsheet{File: name}
	sc := bufio.NewScanner(data.CapBytes(r, data.MaxTableBytes))
	line := 0
	for sc.Scan() {
		line++
		text, _, _ := strings.Cut(sc.Text(), "#")
		fields := strings.Fields(text)
		if len(fields) == 0 {
			continue
		}
		kind := strings.ToLower(fields[0])
		if !slices.Contains(Kinds, kind) {
			return f, &FlowsheetError{File: name, Line: line, Field: "stage",
				Err: fmt.Errorf("%q is not a stage (want %s)", fields[0], strings.Join(Kinds, ", "))}
		}
		st := DefaultStep(kind)
		st.Line = line
		for _, kv := range fields[1:] {
			if err := setField(&st, kv); err != nil {
				return f, &FlowsheetError{File: name, Line: line, Field: strings.SplitN(kv, "=", 2)[0], Err: err}
			}
		}
		if st.TableFile != "" {
			if err := readTable(&st, open); err != nil {
				return f, &FlowsheetError{File: name, Line: line, Field: "table", Err: err}
			}
		}
		f.Steps = append(f.Steps, st)
	}
	if err := sc.Err(); err != nil {
		return f, &FlowsheetError{File: name, Line: line + 1, Err: err}
	}
	return f, f.Validate()
}

// readTable reads a step's distribution table with open.
func readTable(st *Step, open func(string) (io.ReadCloser, error)) error {
	if open == nil {
		return errors.New("a distribution table is read only from a flowsheet file")
	}
	rc, err := open(st.TableFile)
	if err != nil {
		return err
	}
	defer rc.Close()
	st.Table, err = ParseDistribution(rc, st.TableFile)
	return err
}

// setField sets one key=value of a step.
func setField(st *Step, kv string) error {
	k, v, ok := strings.Cut(kv, "=")
	if !ok || v == "" {
		return fmt.Errorf("%q: want key=value", kv)
	}
	num := func(dst *float64) error {
		x, err := data.ParseDecimal(v)
		if err != nil {
			return fmt.Errorf("%q is not a number", v)
		}
		*dst = x
		return nil
	}
	switch strings.ToLower(k) {
	case "base":
		st.Base = v
	case "ph":
		return num(&st.PH)
	case "temperature":
		return num(&st.TemperatureC)
	case "fe-oxidant":
		st.FeOxidant = v
	case "copper":
		st.Copper = v
	case "oxidant":
		st.Oxidant = v
	case "oa":
		return num(&st.OA)
	case "stages":
		n, err := strconv.Atoi(v)
		if err != nil {
			return fmt.Errorf("%q is not a whole number", v)
		}
		st.Stages = n
	case "co-recovery":
		return num(&st.CoRecovery)
	case "table":
		st.TableFile = v
	case "product":
		st.Product = v
	case "current-density":
		return num(&st.CurrentDensityAPerM2)
	case "cathode-area":
		return num(&st.CathodeAreaM2)
	case "evaporate":
		return num(&st.Evaporate)
	default:
		return fmt.Errorf("%q is not a setting (base, ph, temperature, fe-oxidant, copper, oxidant, oa, stages, co-recovery, table, "+
			"product, current-density, cathode-area, evaporate)", k)
	}
	return nil
}

// String writes the step as a flowsheet line.
func (st Step) String() string {
	var b strings.Builder
	b.WriteString(st.Kind)
	add := func(k, v string) {
		if v != "" && v != "0" {
			fmt.Fprintf(&b, " %s=%s", k, v)
		}
	}
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	switch st.Kind {
	case KindImpurity:
		add("base", st.Base)
		add("ph", g(st.PH))
		add("fe-oxidant", st.FeOxidant)
		add("copper", st.Copper)
	case KindManganese:
		add("oxidant", st.Oxidant)
		add("base", st.Base)
		add("ph", g(st.PH))
	case KindSX:
		add("ph", g(st.PH))
		add("oa", g(st.OA))
		add("stages", strconv.Itoa(st.Stages))
		add("table", st.TableFile)
		if st.Stages == 0 {
			add("co-recovery", g(st.CoRecovery))
		}
	case KindCobalt, KindNickel:
		add("product", st.Product)
		if st.Product == "hydroxide" {
			add("ph", g(st.PH))
		}
		if st.Product == "electrowin" {
			add("current-density", g(st.CurrentDensityAPerM2))
			add("cathode-area", g(st.CathodeAreaM2))
		}
	case KindLithium:
		add("product", st.Product)
		add("evaporate", g(st.Evaporate))
	}
	add("temperature", g(st.TemperatureC))
	return b.String()
}
