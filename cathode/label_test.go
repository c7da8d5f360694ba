package cathode_test

import (
	"errors"
	"math"
	"strings"
	"testing"

	"blackmass/cathode"
	"blackmass/cathode/cathodetest"
)

func TestParseLabel(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	for _, c := range []struct {
		label, want string
		kind        cathode.Kind
		noted       bool
	}{
		{"NMC811", "NMC811", cathode.KindCatalogued, false},
		{"nmc811", "NMC811", cathode.KindCatalogued, false},
		{"NCM 8:1:1", "NMC811", cathode.KindCatalogued, false},
		{"nmc-622", "NMC622", cathode.KindCatalogued, false},
		{"NMC(532)", "NMC532", cathode.KindCatalogued, false},
		{"NCM523", "NMC532", cathode.KindCatalogued, false}, // NCM lists Ni:Co:Mn (trade usage)
		{"NMC 5-3-2", "NMC532", cathode.KindCatalogued, false},
		{"NMC333", "NMC111", cathode.KindCatalogued, false},
		{"NMC111", "NMC111", cathode.KindCatalogued, false},
		// The trade writes a grade's digits whichever letters it uses: NMC 523 is Ni5 Co2 Mn3.
		{"NMC 523", "NMC532", cathode.KindCatalogued, true},
		// 955 is 90:5:5 in the trade's shorthand (Ni 0.9, Co 0.05, Mn 0.05), not 9:5:5.
		{"NCM955", "LiNi0.9Mn0.05Co0.05O2", cathode.KindFormula, true},
		{"NMC 90:5:5", "LiNi0.9Mn0.05Co0.05O2", cathode.KindFormula, true},
		{"NCM900505", "LiNi0.9Mn0.05Co0.05O2", cathode.KindFormula, true},
		{"(NMC 1/1/1)", "", "", false},
		{"NMC 234", "", "", false},              // digits that read as no ratio at all
		{"0% LCO & 100% NMC811", "", "", false}, // a part of no share is no part (found by fuzzing: NaN shares)
		{"0%LCO&NMC0%", "", "", false},
		{"NCA", "NCA", cathode.KindCatalogued, false},
		{"lco", "LCO", cathode.KindCatalogued, false},
		{"LCO 4.2 V", "LCO-4.2V", cathode.KindCatalogued, false},
		{"high-voltage LCO", "LCO-HV", cathode.KindCatalogued, false},
		{"LCO (4.4V)", "LCO-HV", cathode.KindCatalogued, false},
		{"LiCoO2", "LCO", cathode.KindCatalogued, false}, // a formula alone says no era
		{"LFP (current)", "LFP-current", cathode.KindCatalogued, false},
		{"older LFP", "LFP-early", cathode.KindCatalogued, false},
		{"LiFePO4", "LFP", cathode.KindCatalogued, false},
		{"LiFePO4", "LFP", cathode.KindCatalogued, false},
		{"LiMn2O4", "LMO", cathode.KindCatalogued, false},
		{"LNMO", "LNMO", cathode.KindCatalogued, false},
		{"LiNi0.9Mn0.05Co0.05O2", "LiNi0.9Mn0.05Co0.05O2", cathode.KindFormula, true},
		{"LiNi1/3Mn1/3Co1/3O2", "NMC111", cathode.KindCatalogued, false},
		{"NMC", "NMC (grade unknown)", cathode.KindFamily, true},
		{"ncm", "NMC (grade unknown)", cathode.KindFamily, true},
		{"layered oxide", "layered oxide (unknown)", cathode.KindFamily, true},
		{"LiPo", "Li-polymer (unknown)", cathode.KindFamily, true},
		{"Li-polymer", "Li-polymer (unknown)", cathode.KindFamily, true},
		{"LMO+NMC532 70/30", "LMO+NMC532 70/30", cathode.KindBlend, false},
		{"LMO + NMC(532) 30:70", "LMO+NMC532 30/70", cathode.KindBlend, false},
		{"LMO + NMC532 (70:30)", "LMO+NMC532 70/30", cathode.KindBlend, false},
		{"LCO+NMC 50/50", "LCO+NMC (grade unknown) 50/50", cathode.KindBlend, true},
		{"70% LMO + 30% NMC532", "LMO+NMC532 70/30", cathode.KindBlend, false},
		{"LMO & NMC811", "LMO+NMC811 (split unknown)", cathode.KindBlend, true},
		{"LMO/NMC", "LMO+NMC (grade unknown) (split unknown)", cathode.KindBlend, true},
		{"LFP+LMO", "LFP+LMO (split unknown)", cathode.KindBlend, true},
		{"Li-ion", "unknown", cathode.KindUnknown, true},
		{"", "unknown", cathode.KindUnknown, true},
		{" unknown ", "unknown", cathode.KindUnknown, true},
	} {
		t.Run(c.label, func(t *testing.T) {
			ch, err := cat.ParseLabel(c.label)
			if c.want == "" {
				if err == nil {
					t.Errorf("ParseLabel(%q) = %s, want an error", c.label, ch.Key)
				}
				return
			}
			if err != nil {
				t.Fatalf("ParseLabel(%q): %v", c.label, err)
			}
			if ch.Key != c.want || ch.Kind != c.kind || (len(ch.Notes) > 0) != c.noted {
				t.Errorf("ParseLabel(%q) = %q kind=%s notes=%q, want %q kind=%s noted=%v", c.label, ch.Key, ch.Kind, ch.Notes, c.want, c.kind, c.noted)
			}
			if ch.Unknown != (c.kind == cathode.KindUnknown) {
				t.Errorf("ParseLabel(%q).Unknown = %v", c.label, ch.Unknown)
			}
			sum := 0.0
			for _, comp := range ch.Components {
				sum += comp.MassFraction
			}
			if math.Abs(sum-1) > 1e-12 {
				t.Errorf("ParseLabel(%q): component fractions sum to %v", c.label, sum)
			}
			if (c.kind == cathode.KindFamily || c.kind == cathode.KindUnknown) != ch.Uncertain() && !strings.Contains(c.want, "split unknown") && !strings.Contains(c.want, "grade unknown") {
				t.Errorf("ParseLabel(%q).Uncertain() = %v", c.label, ch.Uncertain())
			}
		})
	}
}

// The prior of an unknown item depends on what the item is, and each application's shares sum
// to one.
func TestUnknownByApplication(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	for _, c := range []struct{ text, app string }{
		{"returned phone battery", "phone"}, {"old laptop packs", "laptop"}, {"cordless drill 18V", "power_tool"},
		{"E-bike pack 36V", "ebike"}, {"EV module", "vehicle"}, {"home battery (storage)", "storage"},
		{"ups", "storage"}, {"power_tool", "power_tool"}, {"mixed bin", ""}, {"toolbox", ""},
	} {
		t.Run(c.text, func(t *testing.T) {
			if got := cat.Application(c.text); got != c.app {
				t.Errorf("Application(%q) = %q, want %q", c.text, got, c.app)
			}
		})
	}
	for _, app := range cat.Applications() {
		ch := cat.Unknown(app)
		sum := 0.0
		for _, x := range ch.Components {
			sum += x.MassFraction
		}
		if math.Abs(sum-1) > 1e-12 || !ch.Uncertain() || !ch.Unknown {
			t.Errorf("Unknown(%s): shares sum %v, uncertain %v", app, sum, ch.Uncertain())
		}
	}
	if lfp := share(cat.Unknown("laptop"), "LFP"); lfp > 0.05 {
		t.Errorf("laptop prior gives LFP %.2f; laptop packs are rarely LFP (from memory)", lfp)
	}
	if lfp := share(cat.Unknown("storage"), "LFP"); lfp < 0.5 {
		t.Errorf("storage prior gives LFP %.2f; stationary storage is mostly LFP (from memory)", lfp)
	}
}

func share(ch cathode.Chemistry, key string) float64 {
	for _, x := range ch.Components {
		if x.Entry.Key == key {
			return x.MassFraction
		}
	}
	return 0
}

func TestParseLabelUnknownListsNearest(t *testing.T) {
	cat := cathodetest.Catalogue(t)
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
	cat := cathodetest.Catalogue(t)
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
	fresh := cathodetest.Catalogue(t)
	if fresh.Lookup("LMFP") != nil {
		t.Error("DefaultCatalogue shares state between copies")
	}
	bad := strings.Replace(user, "LiMn0.6Fe0.4PO4", "LiQq", 1)
	if err := cat.Add(strings.NewReader(bad), "mine.csv"); err == nil || !strings.Contains(err.Error(), "mine.csv:2") {
		t.Errorf("bad user row error = %v, want it to name mine.csv:2", err)
	}
}

// A user catalogue cannot take over built-in labels, add unreachable keys, or pass off a
// compound that is not a cathode.
func TestUserCatalogueRefusals(t *testing.T) {
	head := "key,name,formula,family,aliases,voltage_min_V,voltage_mode_V,voltage_max_V,capacity_min_mAh_g,capacity_mode_mAh_g,capacity_max_mAh_g,specific_energy_min_Wh_kg,specific_energy_max_Wh_kg,source\n"
	for _, c := range []struct{ name, row, want string }{
		{"alias takes over", "MYLMO,x,LiMn2O4,spinel,NMC811|LFP,3.7,3.75,3.8,100,110,120,90,160,bench", "already names"},
		{"unknown word key", "Li-ion,x,LiMn2O4,spinel,,3.7,3.75,3.8,100,110,120,90,160,bench", "never be reached"},
		{"blend key", "A+B,x,LiMn2O4,spinel,,3.7,3.75,3.8,100,110,120,90,160,bench", "never be reached"},
		{"carbonate", "LC,x,Li2CO3,layered,,3.7,3.75,3.8,100,110,120,90,160,bench", "not a layered"},
		{"aluminate", "LA,x,LiAlO2,layered,,3.7,3.75,3.8,100,110,120,90,160,bench", ""},
		{"tiny capacity", "LT,x,LiMn2O4,spinel,,3.7,3.75,3.8,1e-300,110,120,90,160,bench", "capacity must lie"},
	} {
		t.Run(c.name, func(t *testing.T) {
			cat := cathodetest.Catalogue(t)
			err := cat.Add(strings.NewReader(head+c.row+"\n"), "mine.csv")
			if err == nil || (c.want != "" && !strings.Contains(err.Error(), c.want)) {
				t.Errorf("error %v, want %q", err, c.want)
			}
		})
	}
}

// Labels as they arrive on paperwork: generic words around the cathode's name, a second name in
// brackets; a bracket that disagrees is refused.
func TestParseLabelReworded(t *testing.T) {
	cat := cathodetest.Catalogue(t)
	for _, c := range []struct{ label, want string }{
		{"Li-ion NMC", "NMC (grade unknown)"}, {"LFP battery", "LFP"}, {"NCA cells", "NCA"},
		{"LiFePO4 (LFP)", "LFP"}, {"LFP (lithium iron phosphate)", "LFP"}, {"Lithium-ion LCO pack", "LCO"},
		{"NMC811 (high nickel)", "NMC811"}, {"LCO (LFP)", ""}, {"battery", "unknown"},
	} {
		t.Run(c.label, func(t *testing.T) {
			ch, err := cat.ParseLabel(c.label)
			if c.want == "" {
				if err == nil {
					t.Errorf("%q read as %s, want refused", c.label, ch.Key)
				}
				return
			}
			if err != nil || ch.Key != c.want {
				t.Errorf("%q = %q, %v; want %q", c.label, ch.Key, err, c.want)
			}
		})
	}
}
