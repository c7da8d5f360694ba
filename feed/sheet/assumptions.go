package sheet

import (
	"blackmass/feed/dist"
	"fmt"
	"slices"
	"strings"
)

func (w *writer) assumptions() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(Assumptions); err != nil {
		return err
	}
	s := Assumptions
	in := r.Inputs
	info := [][]any{{"program version", in.Version}, {"manifest file", in.File}, {"manifest SHA-256", in.SHA256},
		{"seed", int64(in.Seed)}, {"samples", in.Samples}, {"unknown labels as prior", in.UnknownAsPrior}}
	if l := r.Leach; l != nil {
		st := l.Settings
		info = append(info, []any{"leach route", l.Route}, []any{"acid strength (wt%)", st.AcidWtPct}, []any{"H2O2 strength (wt%)", st.H2O2WtPct},
			[]any{"acid excess (× stoichiometry)", st.AcidExcess}, []any{"free acid target (mol/L)", st.FreeAcidMolPerL},
			[]any{"H2O2 excess (× stoichiometry)", st.ReductantExcess}, []any{"pulp density (g/L)", st.PulpDensityGPerL},
			[]any{"gas volumes", l.GasReference})
	}
	for i, v := range info {
		if err := w.row(s, i+1, v...); err != nil {
			return err
		}
	}
	row := len(info) + 2
	if err := w.header(s, row, "what", "applies to", "min", "most likely", "max", "unit", "source", "key"); err != nil {
		return err
	}
	first := row + 1
	params := append(slices.Clone(r.Parameters), func() []dist.Param {
		if r.Leach != nil {
			return r.Leach.Extraction
		}
		return nil
	}()...)
	// Sources repeated row after row ("from memory") are said once, in a note below the table.
	memory := 0
	for _, p := range params {
		row++
		src := p.Source
		if src == "from memory" {
			src, memory = "from memory ¹", memory+1
		}
		if err := w.row(s, row, plainWords(p.Name), p.Scope, p.Min, p.Mode, p.Max, p.Unit, src, p.Name); err != nil {
			return err
		}
		// Wrapped sources need their rows tall enough: viewers do not grow rows on opening.
		if lines := (len([]rune(src)) + sourceLineChars - 1) / sourceLineChars; lines > 1 {
			_ = f.SetRowHeight(s, row, float64(lines)*12.75)
		}
	}
	w.style(s, fmt.Sprintf("G%d", first), fmt.Sprintf("G%d", row), w.wrap)
	w.style(s, fmt.Sprintf("C%d", first), fmt.Sprintf("E%d", row), w.num3)
	if memory > 0 {
		row += 2
		_ = w.row(s, row, fmt.Sprintf("¹ %d values rest on the developers' recollection of the literature, not on a source checked line by line: replace them with your own teardown and assay data where they matter.", memory))
	}
	if l := r.Leach; l != nil {
		row++
		for _, a := range l.Assumptions {
			row++
			w.paragraph(s, row, "H", "Leach model: "+a, 150)
		}
	}
	_ = f.SetColWidth(s, "A", "A", 34)
	_ = f.SetColWidth(s, "B", "B", 20)
	_ = f.SetColWidth(s, "C", "E", 10)
	_ = f.SetColWidth(s, "F", "F", 12)
	_ = f.SetColWidth(s, "G", "G", 60)
	_ = f.SetColWidth(s, "H", "H", 18)
	w.printSetup(s, true)
	return nil
}

// sourceLineChars is about how many characters a line of the 60-wide source column holds.
const sourceLineChars = 66

// plainWords turns a parameter key ("carryover_al_foil") into words a bench reads.
func plainWords(key string) string {
	words := map[string]string{"np": "N/P", "al": "aluminium", "cu": "copper", "lipf6": "LiPF6", "pvdf": "PVDF", "cam": "cathode active material", "ah": "Ah"}
	parts := strings.Split(key, "_")
	for i, p := range parts {
		if w, ok := words[p]; ok {
			parts[i] = w
		}
	}
	out := strings.Join(parts, " ")
	return strings.ToUpper(out[:1]) + out[1:]
}
