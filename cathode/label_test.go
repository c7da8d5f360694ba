package cathode_test

import (
	"errors"
	"math"
	"strings"
	"testing"

	"blackmass/cathode"
)

func TestParseLabel(t *testing.T) {
	cat, err := cathode.DefaultCatalogue()
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		label, want string
		unknown     bool
		noted       bool
	}{
		{"NMC811", "NMC811", false, false},
		{"nmc811", "NMC811", false, false},
		{"NCM 8:1:1", "NMC811", false, false},
		{"nmc-622", "NMC622", false, false},
		{"NMC(532)", "NMC532", false, false},
		{"NCM523", "NMC532", false, false}, // NCM lists Ni:Co:Mn (trade usage)
		{"NMC 5-3-2", "NMC532", false, false},
		{"NMC333", "NMC111", false, false},
		{"NMC111", "NMC111", false, false},
		{"(NMC 1/1/1)", "", false, false},
		{"NCA", "NCA", false, false},
		{"lco", "LCO", false, false},
		{"LiFePO4", "LFP", false, false},
		{"LiMn2O4", "LMO", false, false},
		{"LNMO", "LNMO", false, false},
		{"LiNi0.9Mn0.05Co0.05O2", "LiNi0.9Mn0.05Co0.05O2", false, true},
		{"NMC 90:5:5", "LiNi0.9Mn0.05Co0.05O2", false, true},
		{"LMO+NMC532 70/30", "LMO+NMC532 70/30", false, false},
		{"LMO + NMC(532) 30:70", "LMO+NMC532 30/70", false, false},
		{"LFP+LMO", "LFP+LMO 50/50", false, true},
		{"Li-ion", "unknown", true, true},
		{"", "unknown", true, true},
		{" unknown ", "unknown", true, true},
	} {
		ch, err := cat.ParseLabel(c.label)
		if c.want == "" {
			if err == nil {
				t.Errorf("ParseLabel(%q) = %s, want an error", c.label, ch.Key)
			}
			continue
		}
		if err != nil {
			t.Errorf("ParseLabel(%q): %v", c.label, err)
			continue
		}
		if ch.Key != c.want || ch.Unknown != c.unknown || (len(ch.Notes) > 0) != c.noted {
			t.Errorf("ParseLabel(%q) = %q unknown=%v notes=%q, want %q unknown=%v noted=%v", c.label, ch.Key, ch.Unknown, ch.Notes, c.want, c.unknown, c.noted)
		}
		sum := 0.0
		for _, comp := range ch.Components {
			sum += comp.MassFraction
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("ParseLabel(%q): component fractions sum to %v", c.label, sum)
		}
	}
}

func TestParseLabelUnknownListsNearest(t *testing.T) {
	cat, _ := cathode.DefaultCatalogue()
	for _, c := range []struct{ label, near string }{{"NMC812x", "NMC811"}, {"LFO", "LFP"}, {"NCAA", "NCA"}} {
		_, err := cat.ParseLabel(c.label)
		if !errors.Is(err, cathode.ErrUnknownLabel) {
			t.Fatalf("ParseLabel(%q) = %v, want ErrUnknownLabel", c.label, err)
		}
		if !strings.Contains(err.Error(), c.near) || strings.Count(err.Error(), ",") < 2 {
			t.Errorf("ParseLabel(%q) error %q should list three nearest labels including %s", c.label, err, c.near)
		}
	}
	for _, bad := range []string{"LMO+NMC532 70/30/10", "LMO+LMO", "LMO+", "NMC 8:1", "LiAlO2x", "NaCl", "LiAlO2"} {
		if _, err := cat.ParseLabel(bad); err == nil {
			t.Errorf("ParseLabel(%q) should fail", bad)
		}
	}
}

func TestUserCatalogue(t *testing.T) {
	cat, _ := cathode.DefaultCatalogue()
	user := "key,name,formula,family,aliases,voltage_min_V,voltage_mode_V,voltage_max_V,capacity_min_mAh_g,capacity_mode_mAh_g,capacity_max_mAh_g,specific_energy_min_Wh_kg,specific_energy_max_Wh_kg,source\n" +
		"LMFP,lithium manganese iron phosphate,LiMn0.6Fe0.4PO4,olivine,,3.6,3.7,3.8,140,150,155,120,200,bench test data\n"
	if err := cat.Add(strings.NewReader(user), "mine.csv"); err != nil {
		t.Fatal(err)
	}
	ch, err := cat.ParseLabel("lmfp")
	if err != nil || ch.Key != "LMFP" {
		t.Fatalf("ParseLabel(lmfp) = %v, %v", ch.Key, err)
	}
	// The default catalogue is not changed by a copy's additions.
	fresh, _ := cathode.DefaultCatalogue()
	if fresh.Lookup("LMFP") != nil {
		t.Error("DefaultCatalogue shares state between copies")
	}
	bad := strings.Replace(user, "LiMn0.6Fe0.4PO4", "LiQq", 1)
	if err := cat.Add(strings.NewReader(bad), "mine.csv"); err == nil || !strings.Contains(err.Error(), "mine.csv:2") {
		t.Errorf("bad user row error = %v, want it to name mine.csv:2", err)
	}
}
