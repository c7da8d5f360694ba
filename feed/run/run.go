package run

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"blackmass/cathode"
	"blackmass/feed/assay"
	"blackmass/feed/calibrate"
	"blackmass/feed/intake"
	"blackmass/feed/leach"
	"blackmass/feed/lot"
	"blackmass/feed/manifest"
	"blackmass/feed/recover"
	"blackmass/feed/report"
	"blackmass/feed/value"
)

// MaxXLSXBytes bounds an .xlsx manifest, read whole as the zip format needs.
const MaxXLSXBytes = 64 << 20

// Options are a run's settings. Validate checks them once, before anything is read; every
// stage then takes them as valid.
type Options struct {
	Seed    uint64
	Samples int
	// Leach plans the leach of the black mass; nil leaves the leach out. LeachPrices price its
	// reagents (the zero value: no reagent cost).
	Leach       *leach.Options
	LeachPrices leach.Prices
	// Prices values the lot; nil leaves the value out. Containers are the packages of the order
	// sheet.
	Prices     *value.PriceList
	Containers []value.Container
	// KeepLines keeps every line's detail in the report (JSON, the workbook, the register).
	KeepLines bool
	// MaxLines refuses a manifest of more lines (0: no bound), with MaxLinesReason as the why.
	MaxLines       int
	MaxLinesReason string
	// UnknownAsPrior, IgnoreColumns and Sheet steer the manifest's reading (intake.Options).
	UnknownAsPrior bool
	IgnoreColumns  []string
	Sheet          string
	// TempDir is where the .xlsx reader may put its temporary files ("" for the system's); the
	// caller owns it and removes it, also when interrupted.
	TempDir string
	// Inputs are recorded in the report as given (file, hash, seed and samples are filled in).
	Inputs report.Inputs
	// Assay, when given, is reconciled with the estimate (FlagSigma standard uncertainties) and
	// explained as a mix of chemistries (Mix).
	Assay     *assay.Assay
	FlagSigma float64
	Mix       *MixOptions
	// Calibration, when given, multiplies what reaches the black mass, per element and
	// (chemistry, format) group, by factors drawn from its posterior (seeded like every other
	// parameter); CalibrationSource names where it was read (the register's file). The report
	// names it; without it nothing is scaled.
	Calibration       *calibrate.Calibration
	CalibrationSource string
	// Recover takes the leach liquor through a flowsheet of recovery stages; nil leaves it out.
	Recover *recover.Flowsheet
	// RecoverPrices price the recovery's reagents (nil: no cost).
	RecoverPrices *recover.ReagentPrices
}

// MixOptions are the settings of the mix inference: the candidate chemistries (nil: the lot's
// own for an estimate, the whole catalogue for a quote) and the bootstrap draws.
type MixOptions struct {
	Candidates []*cathode.Entry
	Bootstrap  int
}

// OptionError is a setting out of its range or contradicting another: a usage error, whether
// the setting came as a flag or from a plan file.
type OptionError struct {
	Option string // the setting's name, as the flags spell it
	Err    error
}

func (e *OptionError) Error() string { return e.Err.Error() }
func (e *OptionError) Unwrap() error { return e.Err }

func optionErr(name, format string, a ...any) error {
	return &OptionError{Option: name, Err: fmt.Errorf(format, a...)}
}

// Validate checks every setting once, without side effects.
func (o *Options) Validate() error {
	if o.Samples < lot.MinSamples || o.Samples > lot.MaxSamples {
		return optionErr("samples", "samples must be from %d to %d, got %d", lot.MinSamples, lot.MaxSamples, o.Samples)
	}
	if o.MaxLines < 0 {
		return optionErr("max-lines", "a line bound is not negative, got %d", o.MaxLines)
	}
	if o.Leach != nil {
		if err := o.Leach.Validate(); err != nil {
			return leachOptionErr(err)
		}
	}
	if err := o.LeachPrices.Validate(); err != nil {
		return leachOptionErr(err)
	}
	for _, c := range o.Containers {
		if !(c.Litres > 0) && !(c.Kg > 0) {
			return optionErr("containers", "container %q holds nothing: give its capacity in L or kg", c.Name)
		}
	}
	if o.Assay != nil && !(o.FlagSigma > 0) {
		return optionErr("flag-sigma", "the reconciliation threshold is a positive number of standard uncertainties, got %g", o.FlagSigma)
	}
	if o.Recover != nil {
		if o.Leach == nil {
			return optionErr("recover", "recovery takes the leach's liquor: plan the leach too")
		}
		if err := o.Recover.Validate(); err != nil {
			return err
		}
	}
	if o.Mix != nil && o.Mix.Bootstrap < 1 {
		return optionErr("bootstrap", "the mix inference needs bootstrap draws, got %d", o.Mix.Bootstrap)
	}
	return o.checkCurrency()
}

// checkCurrency refuses reagent prices in another currency than the prices file's, and
// recovery reagent prices in another than the leach's.
func (o *Options) checkCurrency() error {
	if rp := o.RecoverPrices; rp != nil && rp.Currency != "" {
		if cur := o.LeachPrices.Currency; cur != "" && !strings.EqualFold(cur, rp.Currency) {
			return optionErr("currency", "--currency %s and the recovery prices' %s (%s) disagree: give every price in one currency",
				cur, rp.Currency, rp.File)
		}
	}
	if o.Leach == nil || o.Prices == nil {
		return nil
	}
	if cur := o.LeachPrices.Currency; cur != "" && !strings.EqualFold(cur, o.Prices.Currency) {
		return optionErr("currency", "--currency %s and the prices file's %s disagree: give the reagent prices in %s",
			cur, o.Prices.Currency, o.Prices.Currency)
	}
	return nil
}

// Manifest is a manifest to read: its name (a path, or "stdin") and its content. A CSV
// manifest is streamed (hashed on the way), so memory does not grow with its length; an .xlsx
// workbook is read whole, as the zip format needs.
type Manifest struct {
	Name string
	R    io.Reader
}

// Estimate assembles a run: it reads the manifest into a lot, draws the lot's black mass,
// plans the leach on the same draws, values the lot, sets an assay beside it when one is given,
// and returns the report. Nothing is written.
func Estimate(t *Tables, o Options, m Manifest) (*report.Report, error) {
	if err := o.Validate(); err != nil {
		return nil, err
	}
	l := lot.NewLot(t.Model, o.KeepLines)
	info, sum, err := read(t, o, m, l.Add)
	if err != nil {
		return nil, err
	}
	res, s, err := l.EstimateWith(o.Seed, o.Samples, calibrationFactors(o.Calibration))
	if err != nil {
		return nil, err
	}
	in := o.Inputs
	in.File, in.SHA256, in.Seed, in.Samples = filepath.ToSlash(m.Name), sum, o.Seed, s.N
	in.UnknownAsPrior = o.UnknownAsPrior
	in.Sheet, in.Sheets, in.HeaderLine, in.IgnoredColumns = info.Sheet, info.Sheets, info.HeaderLine, info.IgnoredColumns
	r := fromLot(in, res)
	calibrated(r, o)
	if len(info.Sheets) > 1 {
		r.Warnings = append([]string{fmt.Sprintf("read sheet %q of %s", info.Sheet, strings.Join(info.Sheets, ", "))}, r.Warnings...)
	}
	r.Warnings = append(r.Warnings, info.Notes...)
	if len(info.IgnoredColumns) > 0 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("columns left out as asked: %s", strings.Join(info.IgnoredColumns, ", ")))
	}
	if o.Leach != nil {
		in := leach.Input{Formulas: s.Formulas, Kg: s.Compounds, BlackMassKg: s.BlackMass, Draws: s.Draws, Tables: t.Leach,
			Prices: o.LeachPrices}
		if r.Leach, err = leach.Plan(in, *o.Leach); err != nil {
			return nil, err
		}
	}
	if o.Prices != nil {
		r.Value = value.Of(s.ElementNames, s.Elements, s.BlackMass, o.Prices, costPerSample(r.Leach), res.ModeKWh)
	}
	if o.Assay != nil {
		r.Assay = o.Assay
		r.Reconciliation = assay.Reconcile(r.Elements, o.Assay, o.FlagSigma)
		if o.Mix != nil {
			mx := *o.Mix
			if mx.Candidates == nil {
				mx.Candidates = lotCandidates(t.Catalogue, res.Groups)
			}
			if r.Mix, err = assay.InferMix(o.Assay, mx.Candidates, mx.Bootstrap, o.Seed); err != nil {
				return nil, err
			}
		}
	}
	if err := planRecovery(t, o, r); err != nil {
		return nil, err
	}
	return finish(r, o)
}

// read reads the manifest into add, checking its length against the line bound, and returns
// what was read with the manifest's SHA-256.
func read(t *Tables, o Options, m Manifest, add func(manifest.Line) error) (intake.Info, string, error) {
	mopt := intake.Options{Catalogue: t.Catalogue, UnknownAsPrior: o.UnknownAsPrior, IgnoreColumns: o.IgnoreColumns, Sheet: o.Sheet,
		TempDir: o.TempDir}
	h := sha256.New()
	br := bufio.NewReaderSize(m.R, 64<<10)
	head, _ := br.Peek(4)
	var info intake.Info
	var err error
	if strings.EqualFold(filepath.Ext(m.Name), ".xlsx") || bytes.HasPrefix(head, []byte("PK\x03\x04")) {
		var b []byte
		if b, err = io.ReadAll(io.LimitReader(io.TeeReader(br, h), MaxXLSXBytes+1)); err != nil {
			return info, "", err
		}
		if len(b) > MaxXLSXBytes {
			return info, "", fmt.Errorf("%s: an .xlsx manifest larger than %d MB: save it as CSV, which is read as a stream",
				m.Name, MaxXLSXBytes>>20)
		}
		info, err = intake.ReadXLSX(bytes.NewReader(b), m.Name, mopt, add)
	} else {
		info, err = intake.ReadCSV(io.TeeReader(br, h), m.Name, mopt, add)
	}
	if err != nil {
		return info, "", err
	}
	if o.MaxLines > 0 && info.Lines > o.MaxLines {
		return info, "", fmt.Errorf("%s: %d lines are more than %d: %s", m.Name, info.Lines, o.MaxLines, o.MaxLinesReason)
	}
	if _, err := io.Copy(h, br); err != nil { // hash anything the reader left unread
		return info, "", err
	}
	return info, hex.EncodeToString(h.Sum(nil)), nil
}

// fromLot starts a report from the lot's part of it.
func fromLot(in report.Inputs, res *lot.Result) *report.Report {
	return &report.Report{Inputs: in, Lot: res.Lot, BlackMassKg: res.BlackMassKg, Elements: res.Elements,
		Compounds: res.Compounds, Groups: res.Groups, Labels: res.Labels, Lines: res.Lines, KeptLines: res.Kept,
		Parameters: res.Parameters, Warnings: res.Warnings, Safety: SafetyNotes(), ElementOrder: res.ElementOrder,
		NonLithium: res.NonLithium}
}

// lotCandidates are the catalogue entries the lot's own chemistries may hold.
func lotCandidates(cat *cathode.Catalogue, groups []lot.GroupResult) []*cathode.Entry {
	var out []*cathode.Entry
	seen := map[string]bool{}
	for _, g := range groups {
		for _, k := range g.Components {
			if seen[k] {
				continue
			}
			seen[k] = true
			if e := cat.Lookup(k); e != nil {
				out = append(out, e)
			}
		}
	}
	return out
}

func costPerSample(l *leach.Report) []float64 {
	if l == nil {
		return nil
	}
	return l.CostPerSample
}

// finish adds the order sheet and refuses a report holding a non-finite number.
func finish(r *report.Report, o Options) (*report.Report, error) {
	if r.Leach != nil {
		cur := o.LeachPrices.Currency
		if r.Value != nil {
			cur = r.Value.Currency
		}
		if cur == "" && o.RecoverPrices != nil {
			cur = o.RecoverPrices.Currency
		}
		r.Order = value.Order(r.Leach, recoveryPurchases(r.Recovery, o.RecoverPrices), r.BlackMassKg.P50, o.Containers, cur)
	}
	if err := r.CheckFinite(); err != nil {
		return nil, err
	}
	return r, nil
}

// SafetyNotes are the cautions shown with every report.
func SafetyNotes() []string {
	return []string{
		"Charged cells: discharge and isolate terminals before opening or shredding; damaged or swollen cells can vent, ignite and re-ignite.",
		"Electrolyte: carbonate solvents are flammable; LiPF6 and PVDF residues form hydrogen fluoride (HF) with moisture, heat or acid.",
		"Black mass is a fine, conductive dust of nickel, cobalt and fluoride compounds: local exhaust ventilation and respiratory protection.",
		"Cobalt and nickel compounds are toxic, skin and respiratory sensitisers and carcinogens.",
		"These are planning estimates; follow local codes, the suppliers' safety data sheets and licensed practice.",
	}
}
