package cathode_test

import (
	"strings"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/data/datatest"

	"blackmass/cathode"
)

// Batteries that are not lithium-ion are recognised by the names benches write, and no
// lithium-ion label is taken for one.
func TestOtherBattery(t *testing.T) {
	t.Parallel()
	cat := cathodetest.Catalogue(t)
	for label, want := range map[string]string{
		"NiMH": "NiMH", "Ni-MH": "NiMH", "nickel metal hydride": "NiMH", "NiMH AA battery": "NiMH",
		"NiCd": "NiCd", "Ni-Cd battery": "NiCd", "NiCad": "NiCd", "nickel-cadmium": "NiCd",
		"lead-acid": "lead-acid", "SLA": "lead-acid", "VRLA": "lead-acid", "sealed lead acid battery": "lead-acid",
		"alkaline": "alkaline", "AA alkaline": "alkaline", "LR6": "alkaline",
		"zinc-carbon": "zinc-carbon", "Zn-C": "zinc-carbon", "carbon zinc cells": "zinc-carbon",
		"zinc-air": "zinc-air", "Zn-air button cells": "zinc-air",
	} {
		b := cat.OtherBattery(label)
		if b == nil || b.Kind != want {
			t.Errorf("OtherBattery(%q) = %+v, want %s", label, b, want)
			continue
		}
		if w := b.Warning(); !strings.Contains(w, "not lithium-ion") || !strings.Contains(w, b.Source) {
			t.Errorf("%s: warning %q", label, w)
		}
	}
	for _, label := range []string{"NMC811", "LFP", "Li-ion", "", "LMO+NMC532 70/30", "lithium"} {
		if b := cat.OtherBattery(label); b != nil {
			t.Errorf("OtherBattery(%q) = %s, a lithium-ion label", label, b.Kind)
		}
	}
	// The table's cadmium and lead rows say what they bring.
	if b := cat.OtherBattery("NiCd"); !strings.Contains(b.Hazard, "cadmium") {
		t.Errorf("NiCd hazard %q", b.Hazard)
	}
	if b := cat.OtherBattery("SLA"); !strings.Contains(b.Brings, "H2SO4") || !strings.Contains(b.Source, "from memory") {
		t.Errorf("lead-acid %+v", b)
	}
}

// A table whose word names a lithium-ion chemistry, or two kinds, is refused with its line.
func TestOtherBatteryTableErrors(t *testing.T) {
	t.Parallel()
	for name, edit := range map[string]func(string) string{
		"catalogue word": func(s string) string { return strings.Replace(s, "NiMH|Ni-MH|", "NiMH|LFP|", 1) },
		"two kinds":      func(s string) string { return strings.Replace(s, "NiCd|Ni-Cd|", "NiCd|NiMH|", 1) },
	} {
		fsys := datatest.Edited(t, map[string]func(string) string{"other_batteries.csv": edit})
		if _, err := cathode.LoadCatalogue(fsys); err == nil || !strings.Contains(err.Error(), "other_batteries.csv") {
			t.Errorf("%s: %v", name, err)
		}
	}
}
