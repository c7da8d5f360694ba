package lot

import (
	"blackmass/cathode"
	"blackmass/feed/dist"
	"blackmass/feed/manifest"
)

// NonLithiumLine is the lines of one kind of battery that is not lithium-ion (NiMH, NiCd,
// lead-acid, alkaline, zinc-carbon, zinc-air): kept out of the black mass, counted and weighed.
type NonLithiumLine struct {
	Kind  string `json:"kind"`
	Name  string `json:"name"`
	Lines []int  `json:"lines"`
	Items int    `json:"items"`
	// MassKg is the measured mass of the lines that give one; LinesWithoutMass did not.
	MassKg           float64 `json:"measured_mass_kg"`
	LinesWithoutMass int     `json:"lines_without_mass,omitempty"`
	Warning          string  `json:"warning"`
}

// maxNonLithiumLineNums bounds the line numbers kept per kind; the counts stay exact.
const maxNonLithiumLineNums = 200

// addNonLithium counts a line of a battery that is not lithium-ion, apart from the black mass.
func (l *Lot) addNonLithium(ln manifest.Line, b *cathode.OtherBattery) {
	var nl *NonLithiumLine
	for i := range l.nonLithium {
		if l.nonLithium[i].Kind == b.Kind {
			nl = &l.nonLithium[i]
		}
	}
	if nl == nil {
		l.nonLithium = append(l.nonLithium, NonLithiumLine{Kind: b.Kind, Name: b.Name, Warning: b.Warning()})
		nl = &l.nonLithium[len(l.nonLithium)-1]
		l.warnOnce("other "+b.Kind, b.Warning())
	}
	if len(nl.Lines) < maxNonLithiumLineNums {
		nl.Lines = append(nl.Lines, ln.Num)
	}
	nl.Items += ln.Count
	if ln.MassKg > 0 {
		nl.MassKg = dist.Round(nl.MassKg+float64(ln.Count)*ln.MassKg, 9)
	} else {
		nl.LinesWithoutMass++
	}
}

// NonLithium lists the lines of batteries that are not lithium-ion, by kind.
func (l *Lot) NonLithium() []NonLithiumLine { return append([]NonLithiumLine(nil), l.nonLithium...) }
