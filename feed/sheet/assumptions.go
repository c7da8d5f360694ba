package sheet

import (
	"blackmass/feed/dist"
	"fmt"
	"slices"
	"strings"

	"github.com/xuri/excelize/v2"
)

// assumptionsWidths are the Assumptions sheet's printed columns (A4 portrait at 100 %): what,
// applies to, min, most likely, max, unit, source (shortened to a line); the source in full is
// in the column after them, out of the print area.
var assumptionsWidths = []float64{19, 11, 6.5, 7, 6.5, 9, 37}

// fullSourceWidth is the width of the column holding each source in full.
const fullSourceWidth = 120

// shortSourceChars is about what one line of the printed source column holds at 8 pt, less its
// indent: (37 - 1.5) units × 1.2 characters per unit at 10 pt × 10/8.
const shortSourceChars = 52

// assumptions lists what produced the report, then every parameter of the model on one row: its
// range and unit, and its source beside it.
func (w *writer) assumptions() error {
	r := w.r
	p, err := w.newPage(Assumptions, false, assumptionsWidths...)
	if err != nil {
		return err
	}
	in := r.Inputs
	p.title("Assumptions: what the estimate rests on")
	// The input file, its hash, the seed and the samples are on the summary; the leach's doses
	// in the dosing calculator.
	info := [][]any{{"program version", in.Version}, {"unknown labels drawn from the prior", yesNo(in.UnknownAsPrior)}}
	if l := r.Leach; l != nil {
		info = append(info, []any{"leach route", l.Route}, []any{"pulp density (g/L)", l.Settings.PulpDensityGPerL},
			[]any{"temperature (°C)", l.Settings.TemperatureC})
	}
	for _, v := range info {
		p.add(boldText(v[0].(string)), v[1])
	}
	p.blank()
	p.add(note("One row per parameter: its range, unit and source. A source longer than a line is shortened on paper (…); column H of the file holds each in full."))
	head := p.header("parameter", "applies to", "min", "most likely", "max", "unit", "source")
	w.set(Assumptions, 8, head, cellValue{v: "source in full", b: head0})
	col, _ := excelize.ColumnNumberToName(8)
	_ = w.f.SetColWidth(Assumptions, col, col, fullSourceWidth)
	w.printTitles(Assumptions, head, head)
	params := slices.Clone(r.Parameters)
	if r.Leach != nil {
		params = append(params, r.Leach.Extraction...)
	}
	// Sources repeated row after row are said once; "from memory" is explained below the table.
	memory := 0
	prev := ""
	for _, pm := range params {
		src := pm.Source
		switch {
		case src == prev:
			src = "as the row above"
		case src == "from memory":
			src, memory = "from memory ¹", memory+1
		}
		prev = pm.Source
		row := p.add(as(denseWrap, paramWords(pm)), fineText(scopeWords(pm.Scope)), as(dense, pm.Min), as(dense, pm.Mode), as(dense, pm.Max),
			fineText(unitWords(pm.Unit)), fineText(shortText(src, shortSourceChars)))
		w.set(Assumptions, 8, row, cellValue{v: pm.Source, b: fineLine})
	}
	if memory > 0 {
		p.blank()
		p.paragraph(fmt.Sprintf("¹ %d values rest on the developers' recollection of the literature, not on a source checked line by line: replace them with your own teardown and assay data where they matter.", memory), small)
	}
	if l := r.Leach; l != nil {
		p.blank()
		p.section("How the leach is modelled")
		for _, a := range l.Assumptions {
			p.paragraph(a, fine)
		}
	}
	w.printArea(Assumptions, len(assumptionsWidths), p.row)
	return nil
}

// shortText cuts a text to about n characters at the end of a clause or a word, marking the cut.
func shortText(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	cut := string(r[:n-2])
	best := -1
	for _, sep := range []string{"; ", ". ", ": ", ", ", " ("} {
		if i := strings.LastIndex(cut, sep); i > best && i > n/2 {
			best = i
		}
	}
	if best < 0 {
		best = strings.LastIndex(cut, " ")
	}
	if best <= 0 {
		best = len(cut)
	}
	return strings.TrimRight(cut[:best], " ,;:.(") + " …"
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// paramWords names a parameter in words: a model key ("carryover_al_foil") turned into words,
// a metal of the extraction table by its name.
func paramWords(pm dist.Param) string {
	if strings.HasPrefix(pm.Scope, "extraction ") {
		return "extraction of " + pm.Name
	}
	return plainWords(pm.Name)
}

// scopeWords is what a parameter applies to, in words.
func scopeWords(scope string) string {
	switch {
	case scope == "all":
		return "every format"
	case strings.HasPrefix(scope, "extraction "):
		return "the leach"
	case strings.HasPrefix(scope, "chemistry "):
		return strings.TrimPrefix(scope, "chemistry ")
	}
	return scope
}

// unitWords spells a unit a bench reads.
func unitWords(u string) string {
	switch u {
	case "ratio":
		return "ratio"
	case "mass fraction":
		return "mass share"
	case "fraction":
		return "share"
	}
	return u
}

// plainWords turns a parameter key ("carryover_al_foil") into words a bench reads.
func plainWords(key string) string {
	if key == "" {
		return ""
	}
	words := map[string]string{"np": "N/P", "al": "aluminium", "cu": "copper", "lipf6": "LiPF6", "pvdf": "PVDF",
		"cam": "cathode active material", "ah": "Ah", "per": "per", "carryover": "carry-over of"}
	parts := strings.Split(key, "_")
	for i, p := range parts {
		if w, ok := words[p]; ok {
			parts[i] = w
		}
	}
	out := strings.Join(parts, " ")
	return strings.ToUpper(out[:1]) + out[1:]
}
