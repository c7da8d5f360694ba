package main

import (
	"fmt"
	"io"
	"maps"
	"math"
	"slices"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"blackmass/cathode"
)

func newChemCmd() *cobra.Command {
	var cat catalogueOptions
	var asJSON, list bool
	cmd := &cobra.Command{
		Use:   "chem LABEL|FORMULA... | --list",
		Short: "Show composition, capacity and leach stoichiometry of cathode chemistries",
		Example: `  blackmass chem NMC811 LCO LFP
  blackmass chem "NCM 8:1:1" "LMO+NMC532 70/30" LiNi0.9Mn0.05Co0.05O2
  blackmass chem --json LiCoO2
  blackmass chem --list`,
		Args: func(cmd *cobra.Command, args []string) error {
			if list {
				return cobra.NoArgs(cmd, args)
			}
			return cobra.MinimumNArgs(1)(cmd, args)
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			t, err := cat.tables()
			if err != nil {
				return err
			}
			c := t.Catalogue
			if list {
				return writeCatalogueList(cmd.OutOrStdout(), c, asJSON)
			}
			var out []chemJSON
			for _, a := range args {
				ch, err := c.ParseLabel(a)
				if err != nil {
					return err
				}
				j := chemJSON{Label: a, Key: ch.Key, Unknown: ch.Unknown, Notes: ch.Notes}
				for _, comp := range ch.Components {
					p, err := cathode.Describe(comp.Entry)
					if err != nil {
						return fmt.Errorf("%s: %w", a, err)
					}
					j.Components = append(j.Components, newMaterialJSON(p, comp.MassFraction))
				}
				out = append(out, j)
			}
			w := cmd.OutOrStdout()
			if asJSON {
				return writeJSON(w, out)
			}
			for i, j := range out {
				if i > 0 {
					fmt.Fprintln(w)
				}
				writeChemText(w, j)
			}
			return nil
		},
	}
	cat.bind(cmd)
	cmd.Flags().BoolVar(&asJSON, "json", false, "write JSON (one object per label)")
	cmd.Flags().BoolVar(&list, "list", false, "list the catalogue: chemistries, family labels and the applications of the unknown-chemistry prior")
	return cmd
}

type rangeJSON struct {
	Min  float64 `json:"min"`
	Mode float64 `json:"mode"`
	Max  float64 `json:"max"`
}

type routeJSON struct {
	Route          string  `json:"route"`
	Acid           string  `json:"acid"`
	AcidKgPerKg    float64 `json:"acid_kg_per_kg"`
	H2O2KgPerKg    float64 `json:"h2o2_kg_per_kg"`
	O2MolPerKg     float64 `json:"o2_mol_per_kg"`
	Cl2MolPerKg    float64 `json:"cl2_mol_per_kg"`
	H2MolPerKg     float64 `json:"h2_mol_per_kg"`
	ElectronsPerFU float64 `json:"electrons_per_formula_unit"`
	Equation       string  `json:"equation"`
}

type materialJSON struct {
	Key                  string             `json:"key"`
	Name                 string             `json:"name"`
	Formula              string             `json:"formula"`
	Family               string             `json:"family"`
	Catalogued           bool               `json:"catalogued"`
	MassFraction         float64            `json:"cathode_mass_fraction"`
	MolarMass            float64            `json:"molar_mass_g_mol"`
	ElementsWtPct        map[string]float64 `json:"elements_wt_pct"`
	TheoreticalCapacity  float64            `json:"theoretical_capacity_mAh_g"`
	PracticalCapacity    rangeJSON          `json:"practical_capacity_mAh_g"`
	NominalVoltage       rangeJSON          `json:"nominal_voltage_V"`
	SpecificEnergy       [2]float64         `json:"cell_specific_energy_band_Wh_kg"`
	TransitionMetalState *float64           `json:"transition_metal_oxidation_state,omitempty"`
	States               []stateJSON        `json:"oxidation_states,omitempty"`
	Source               string             `json:"source"`
	Routes               []routeJSON        `json:"routes"`
}

// stateJSON is one transition metal's oxidation state in the solid.
type stateJSON struct {
	Element string  `json:"element"`
	State   float64 `json:"state"`
}

type chemJSON struct {
	Label      string         `json:"label"`
	Key        string         `json:"key"`
	Unknown    bool           `json:"unknown"`
	Notes      []string       `json:"notes,omitempty"`
	Components []materialJSON `json:"components"`
}

func toRange(r cathode.Range) rangeJSON { return rangeJSON{r.Min, r.Mode, r.Max} }

func newMaterialJSON(p cathode.Profile, frac float64) materialJSON {
	e := p.Entry
	m := materialJSON{Key: e.Key, Name: e.Name, Formula: e.Formula.String(), Family: e.Family, Catalogued: e.Catalogued,
		MassFraction: frac, MolarMass: p.MolarMassGPerMol, ElementsWtPct: map[string]float64{},
		TheoreticalCapacity: p.TheoreticalCapacityMAhPerG, PracticalCapacity: toRange(e.CapacityMAhPerG),
		NominalVoltage: toRange(e.VoltageV), SpecificEnergy: [2]float64{e.SpecificEnergyWhPerKg.Min, e.SpecificEnergyWhPerKg.Max},
		Source: e.Source}
	if !math.IsNaN(p.TransitionMetalState) {
		s := p.TransitionMetalState
		m.TransitionMetalState = &s
		for _, t := range p.States {
			m.States = append(m.States, stateJSON{t.Symbol, t.Amount})
		}
	}
	for _, t := range p.MassFractions {
		m.ElementsWtPct[t.Symbol] = 100 * t.Amount
	}
	for _, r := range p.Routes {
		m.Routes = append(m.Routes, routeJSON{r.Route.String(), r.Acid, r.AcidKgPerKg, r.H2O2KgPerKg, r.O2MolPerKg, r.Cl2MolPerKg, r.H2MolPerKg, r.ElectronsPerMol, r.Equation})
	}
	return m
}

// compactAbove is the number of components above which chem prints one line per component
// (a family, a blend or the unknown prior) rather than each one's full profile.
const compactAbove = 2

func writeChemText(w io.Writer, j chemJSON) {
	fmt.Fprintf(w, "%s  →  %s\n", j.Label, j.Key)
	for _, n := range j.Notes {
		fmt.Fprintf(w, "  note: %s\n", n)
	}
	if len(j.Components) > compactAbove {
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "\n  component\tmean share\tformula\tcapacity mAh/g\tCo wt%\tNi wt%\tMn wt%\tLi wt%")
		for _, m := range j.Components {
			fmt.Fprintf(tw, "  %s\t%.1f %%\t%s\t%g\t%.1f\t%.1f\t%.1f\t%.2f\n", m.Key, 100*m.MassFraction, m.Formula, m.PracticalCapacity.Mode,
				m.ElementsWtPct["Co"], m.ElementsWtPct["Ni"], m.ElementsWtPct["Mn"], m.ElementsWtPct["Li"])
		}
		tw.Flush()
		fmt.Fprintln(w, "  (blackmass chem KEY for a component's full profile and leach stoichiometry)")
		return
	}
	for _, m := range j.Components {
		fmt.Fprintf(w, "\n  %s  %s (%s)", m.Formula, m.Name, m.Family)
		if len(j.Components) > 1 {
			fmt.Fprintf(w, "  %.1f %% of cathode mass", 100*m.MassFraction)
		}
		fmt.Fprintln(w)
		fmt.Fprintf(w, "    molar mass              %.3f g/mol\n", m.MolarMass)
		var els []string
		for _, t := range slices.Sorted(maps.Keys(m.ElementsWtPct)) {
			els = append(els, fmt.Sprintf("%s %.3f", t, m.ElementsWtPct[t]))
		}
		fmt.Fprintf(w, "    elements (wt%%)          %s\n", strings.Join(els, "  "))
		if m.TransitionMetalState != nil {
			var each []string
			for _, st := range m.States {
				each = append(each, fmt.Sprintf("%s %+.3g", st.Element, st.State))
			}
			fmt.Fprintf(w, "    oxidation states        %s (average %+.3f)\n", strings.Join(each, ", "), *m.TransitionMetalState)
		}
		fmt.Fprintf(w, "    theoretical capacity    %.1f mAh/g\n", m.TheoreticalCapacity)
		fmt.Fprintf(w, "    practical capacity      %g / %g / %g mAh/g (min / most likely / max)\n", m.PracticalCapacity.Min, m.PracticalCapacity.Mode, m.PracticalCapacity.Max)
		fmt.Fprintf(w, "    nominal cell voltage    %g / %g / %g V\n", m.NominalVoltage.Min, m.NominalVoltage.Mode, m.NominalVoltage.Max)
		fmt.Fprintf(w, "    cell specific energy    %g – %g Wh/kg (plausible band)\n", m.SpecificEnergy[0], m.SpecificEnergy[1])
		fmt.Fprintf(w, "    source                  %s\n", m.Source)
		fmt.Fprintln(w, "    per kg of material, at stoichiometry:")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "      route\tacid kg (100 %)\tH2O2 kg (100 %)\tO2 mol\tCl2 mol\tH2 mol")
		for _, r := range m.Routes {
			fmt.Fprintf(tw, "      %s\t%.3f %s\t%.3f\t%.2f\t%.2f\t%.2f\n", r.Route, r.AcidKgPerKg, r.Acid, r.H2O2KgPerKg, r.O2MolPerKg, r.Cl2MolPerKg, r.H2MolPerKg)
		}
		tw.Flush()
		for _, r := range m.Routes {
			note := ""
			if r.Route == cathode.SulfuricSelective.String() && r.AcidKgPerKg == 0 && !strings.Contains(r.Equation, "+") {
				note = "  (left whole: the selective route leaves oxides for a second, reductive leach)"
			}
			fmt.Fprintf(w, "    %-20s %s%s\n", r.Route, r.Equation, note)
		}
	}
}

// writeCatalogueList lists what labels resolve to: the catalogued chemistries, the family labels
// and the applications the unknown-chemistry prior knows.
func writeCatalogueList(w io.Writer, c *cathode.Catalogue, asJSON bool) error {
	type entryJSON struct {
		Key          string   `json:"key"`
		Name         string   `json:"name"`
		Formula      string   `json:"formula"`
		Family       string   `json:"family"`
		Aliases      []string `json:"aliases"`
		CapacityMode float64  `json:"capacity_mode_mAh_g"`
		VoltageMode  float64  `json:"voltage_mode_V"`
	}
	var entries []entryJSON
	for _, e := range c.Entries() {
		entries = append(entries, entryJSON{e.Key, e.Name, e.Formula.String(), e.Family, e.Aliases, e.CapacityMAhPerG.Mode, e.VoltageV.Mode})
	}
	families := c.FamilyLabels()
	apps := c.Applications()
	if asJSON {
		return writeJSON(w, map[string]any{"chemistries": entries, "family_labels": families, "applications": apps})
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "key\tformula\tfamily\tcapacity mAh/g\tV\taliases")
	for _, e := range entries {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%g\t%g\t%s\n", e.Key, e.Formula, e.Family, e.CapacityMode, e.VoltageMode, strings.Join(e.Aliases, ", "))
	}
	tw.Flush()
	fmt.Fprintln(w, "\nfamily labels (member uncertain):")
	for _, f := range families {
		fmt.Fprintf(w, "  %s: %s\n", f.Key, strings.Join(f.Words, ", "))
	}
	fmt.Fprintf(w, "\nunknown chemistry takes the prior of its application or format: %s\n", strings.Join(apps, ", "))
	fmt.Fprintln(w, "NMC/NCM ratios (NCM 8:1:1, NMC 622, NCM955), formulas (LiNi0.9Mn0.05Co0.05O2) and blends (LMO+NMC532 70/30) resolve too.")
	return nil
}
