// Package report holds the report of a run: the types every stage's result is gathered into,
// which the renderers (text, JSON, workbook) and the register read. It computes nothing.
package report

import (
	"iter"
	"time"

	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
	"blackmass/feed/lot"
	"blackmass/feed/recover"
	"blackmass/feed/value"
)

// Inputs records what produced a report, so it can be reproduced.
type Inputs struct {
	File           string `json:"file"`
	SHA256         string `json:"sha256"`
	Seed           uint64 `json:"seed"`
	Samples        int    `json:"samples"`
	Version        string `json:"program_version"`
	LotID          string `json:"lot_id,omitempty"`
	Supplier       string `json:"supplier,omitempty"`
	UnknownAsPrior bool   `json:"unknown_labels_as_prior"`
	// Sheet is the sheet read from an .xlsx manifest; Sheets lists the workbook's sheets.
	Sheet          string   `json:"sheet,omitempty"`
	Sheets         []string `json:"sheets,omitempty"`
	HeaderLine     int      `json:"header_line,omitempty"`
	IgnoredColumns []string `json:"ignored_columns,omitempty"`
}

// Report is everything an estimate produced. Renderers (text, JSON, workbook) read it and
// compute nothing new.
type Report struct {
	Inputs      Inputs                 `json:"inputs"`
	Lot         lot.LotSummary         `json:"lot"`
	BlackMassKg dist.Stat              `json:"black_mass_kg"`
	Elements    map[string]dist.Amount `json:"elements"`
	Compounds   map[string]dist.Amount `json:"compounds"`
	Groups      []lot.GroupResult      `json:"groups"`
	Labels      []lot.LabelResolution  `json:"labels"`
	Lines       []lot.LineResult       `json:"lines,omitempty"`
	// KeptLines, when Lines is nil, are the lines' detail made as it is read (EachLine), so a
	// large manifest's detail is never held whole; written as "lines" like Lines.
	KeptLines *lot.Lines    `json:"-"`
	Leach     *leach.Report `json:"leach,omitempty"`
	// Value is the lot's worth at the prices given; nil when no prices were given.
	Value *value.Value `json:"value,omitempty"`
	// Recovery is the plan of the stages after the leach; nil when none was asked for.
	Recovery *recover.Report `json:"recovery,omitempty"`
	// Order is what to order for the leach, in the containers named.
	Order *value.OrderSheet `json:"order,omitempty"`
	// Assay, Reconciliation and Mix are present when a lab assay was given.
	Assay          *assay.Assay          `json:"assay,omitempty"`
	Reconciliation *assay.Reconciliation `json:"reconciliation,omitempty"`
	Mix            *assay.MixFit         `json:"mix_fit,omitempty"`
	// Basis says what the figures rest on (estimate, assay+weighing ...); Weighing is the
	// quote's weighed mass, wet and dry; Missing the elements the assay lacked.
	Basis      string               `json:"basis,omitempty"`
	Weighing   *assay.Weighing      `json:"weighing,omitempty"`
	Missing    []assay.Missing      `json:"missing_elements,omitempty"`
	NonLithium []lot.NonLithiumLine `json:"non_lithium,omitempty"`
	Parameters []dist.Param         `json:"parameters"`
	Warnings   []string             `json:"warnings"`
	Safety     []string             `json:"safety"`
	// ElementOrder lists the element symbols in display order (metals first).
	ElementOrder []string `json:"element_order"`
	// Calibration names the calibration the elements were scaled by; nil: the model's own.
	Calibration *CalibrationUse `json:"calibration,omitempty"`
}

// CalibrationUse names a calibration a report used: its version in the register, the
// register's file, when it was fitted, from how many lots, for which elements.
type CalibrationUse struct {
	Version   int       `json:"version"`
	Register  string    `json:"register,omitempty"`
	CreatedAt time.Time `json:"created_at"`
	Lots      int       `json:"lots"`
	Elements  []string  `json:"elements"`
}

// LineCount is the number of lines with detail in the report.
func (r *Report) LineCount() int {
	if r.Lines == nil && r.KeptLines != nil {
		return r.KeptLines.Len()
	}
	return len(r.Lines)
}

// EachLine yields each line's detail in the manifest's order: Lines, or else the kept lines
// (each made when yielded).
func (r *Report) EachLine() iter.Seq2[int, lot.LineResult] {
	if r.Lines == nil && r.KeptLines != nil {
		return r.KeptLines.All()
	}
	return func(yield func(int, lot.LineResult) bool) {
		for i, l := range r.Lines {
			if !yield(i, l) {
				return
			}
		}
	}
}
