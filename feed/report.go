package feed

import (
	"blackmass/feed/assay"
	"blackmass/feed/dist"
	"blackmass/feed/leach"
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

// LabelResolution is how one chemistry label of the manifest was read.
type LabelResolution struct {
	Label      string `json:"label"`
	ResolvedAs string `json:"resolved_as"`
	// Kind is catalogued, family, blend, formula or unknown.
	Kind  string `json:"kind"`
	Lines int    `json:"lines"`
	// EnergyShare is the label's share of the lot's energy (nameplate, or the most likely
	// energy of lines known by weight only).
	EnergyShare float64 `json:"energy_share"`
	// Unrecognised reports a label that was not understood and was read as unknown.
	Unrecognised bool `json:"unrecognised,omitempty"`
}

// LotSummary counts what the manifest lists.
type LotSummary struct {
	Lines              int     `json:"lines"`
	Items              int     `json:"items"`
	Cells              int     `json:"cells"`
	NameplateKWh       float64 `json:"nameplate_kWh"`
	ChargeOnlyAh       float64 `json:"charge_only_Ah"`
	UnknownShareOfKWh  float64 `json:"unknown_chemistry_share_of_kWh"`
	LinesWithMass      int     `json:"lines_with_mass"`
	LinesFlaggedByMass int     `json:"lines_flagged_by_mass"`
	// LinesByMassOnly counts lines with a mass and no capacity; MassOnlyKg is their mass.
	LinesByMassOnly int     `json:"lines_by_mass_only"`
	MassOnlyKg      float64 `json:"mass_only_kg"`
}

// GroupResult is one (chemistry, format) group of lines.
type GroupResult struct {
	Chemistry    string    `json:"chemistry"`
	Components   []string  `json:"components"` // the catalogue keys the chemistry may hold
	Format       string    `json:"format"`
	Lines        int       `json:"lines"`
	Items        int       `json:"items"`
	NameplateKWh float64   `json:"nameplate_kWh"`
	ChargeOnlyAh float64   `json:"charge_only_Ah,omitempty"`
	MassOnlyKg   float64   `json:"mass_only_kg,omitempty"` // items known by weight only
	CathodeKg    dist.Stat `json:"cathode_active_kg"`
	BlackMassKg  dist.Stat `json:"black_mass_kg"`
}

// Report is everything an estimate produced. Renderers (text, JSON, workbook) read it and
// compute nothing new.
type Report struct {
	Inputs      Inputs                 `json:"inputs"`
	Lot         LotSummary             `json:"lot"`
	BlackMassKg dist.Stat              `json:"black_mass_kg"`
	Elements    map[string]dist.Amount `json:"elements"`
	Compounds   map[string]dist.Amount `json:"compounds"`
	Groups      []GroupResult          `json:"groups"`
	Labels      []LabelResolution      `json:"labels"`
	Lines       []LineResult           `json:"lines,omitempty"`
	Leach       *leach.Report          `json:"leach,omitempty"`
	// Value is the lot's worth at the prices given; nil when no prices were given.
	Value *Value `json:"value,omitempty"`
	// Order is what to order for the leach, in the containers named.
	Order *OrderSheet `json:"order,omitempty"`
	// Assay, Reconciliation and Mix are present when a lab assay was given.
	Assay          *assay.Assay          `json:"assay,omitempty"`
	Reconciliation *assay.Reconciliation `json:"reconciliation,omitempty"`
	Mix            *assay.MixFit         `json:"mix_fit,omitempty"`
	// Basis says what the figures rest on (estimate, assay+weighing ...); Weighing is the
	// quote's weighed mass, wet and dry; Missing the elements the assay lacked.
	Basis      string           `json:"basis,omitempty"`
	Weighing   *assay.Weighing  `json:"weighing,omitempty"`
	Missing    []assay.Missing  `json:"missing_elements,omitempty"`
	NonLithium []NonLithiumLine `json:"non_lithium,omitempty"`
	Parameters []dist.Param     `json:"parameters"`
	Warnings   []string         `json:"warnings"`
	Safety     []string         `json:"safety"`
	// ElementOrder lists the element symbols in display order (metals first).
	ElementOrder []string `json:"element_order"`
}

// Safety cautions shown with every estimate.
var safetyNotes = []string{
	"Charged cells: discharge and isolate terminals before opening or shredding; damaged or swollen cells can vent, ignite and re-ignite.",
	"Electrolyte: carbonate solvents are flammable; LiPF6 and PVDF residues form hydrogen fluoride (HF) with moisture, heat or acid.",
	"Black mass is a fine, conductive dust of nickel, cobalt and fluoride compounds: local exhaust ventilation and respiratory protection.",
	"Cobalt and nickel compounds are toxic, skin and respiratory sensitisers and carcinogens.",
	"These are planning estimates; follow local codes, the suppliers' safety data sheets and licensed practice.",
}

// QuoteReport is the report of a quote from an assay: the weighed black mass, its elements and
// species, and the leach plan, with the inputs that produced it; and, with prices, its value on
// the same draws.
func QuoteReport(q *assay.Quote, in Inputs, prices *PriceList) *Report {
	in.Seed, in.Samples = q.Seed, q.Samples
	r := &Report{Inputs: in, BlackMassKg: q.BlackMassKg, Elements: q.Elements, Compounds: q.Compounds, ElementOrder: q.ElementOrder,
		Leach: q.Leach, Warnings: q.Warnings, Safety: safetyNotes, Basis: q.Basis, Weighing: &q.Weighing, Missing: q.Missing}
	if prices != nil {
		els := q.ElementOrder
		kg := make([][]float64, len(els))
		for i, e := range els {
			kg[i] = q.ElementDraws[e]
		}
		var cost []float64
		if q.Leach != nil {
			cost = q.Leach.CostPerSample
		}
		r.Value = valueOf(els, kg, q.BlackMassDraws, prices, cost, 0)
	}
	return r
}
