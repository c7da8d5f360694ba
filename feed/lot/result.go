package lot

import "blackmass/feed/dist"

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
	// ElementsKg is the kg of each element the group's lines send to the black mass, as modelled
	// (a calibration's factors scale the lot's elements, not these): a calibration reads them.
	ElementsKg map[string]dist.Stat `json:"elements_kg,omitempty"`
}
