package cathode_test

import (
	"io"
	"strings"
	"testing"

	"blackmass/cathode/cathodetest"
)

const userHead = "key,name,formula,family,aliases,voltage_min_V,voltage_mode_V,voltage_max_V,capacity_min_mAh_g,capacity_mode_mAh_g,capacity_max_mAh_g,specific_energy_min_Wh_kg,specific_energy_max_Wh_kg,source\n"

// A prior whose shares do not sum to 1 or 100 says a row is missing: refused, not scaled up.
// Percentages summing to 100 and fractions rounded to two places are read.
func TestPriorSums(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ in, want string }{
		{"application,chemistry,share,source\nphone,LCO,0.4,x\nphone,NMC532,0.2,x\n", "phone sum to 0.6"},
		{"application,chemistry,share,source\nphone,LCO,40,x\nphone,NMC532,20,x\n", "phone sum to 60"},
		{"application,chemistry,share,source\nphone,LCO,0.5,x\nphone,LCO,0.5,x\n", "mine.csv:3: LCO is listed twice for phone (first on line 2)"},
		{"application,chemistry,share,source\nphone,LCO,0x1p-1,x\nphone,NMC532,0.5,x\n", `mine.csv:2: column share: "0x1p-1" is not a number`},
		{"application,chemistry,share,source\nphone,LCO,0.5,x\nphone,NMC532,0_5,x\n", `mine.csv:3: column share: "0_5" is not a number`},
	} {
		cat := cathodetest.Catalogue(t)
		if err := cat.SetPrior(strings.NewReader(c.in), "mine.csv"); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("SetPrior(%q) = %v, want %q", c.in, err, c.want)
		}
	}
	for _, in := range []string{
		"application,chemistry,share,source\nphone,LCO,60,x\nphone,NMC532,40,x\n",
		"application,chemistry,share,source\nphone,LCO,0.33,x\nphone,NMC532,0.33,x\nphone,NMC622,0.33,x\n",
	} {
		cat := cathodetest.Catalogue(t)
		if err := cat.SetPrior(strings.NewReader(in), "mine.csv"); err != nil {
			t.Fatalf("SetPrior(%q): %v", in, err)
		}
		sum := 0.0
		for _, x := range cat.Unknown("phone").Components {
			sum += x.MassFraction
		}
		if sum < 1-1e-12 || sum > 1+1e-12 {
			t.Errorf("phone shares sum to %v", sum)
		}
	}
}

// A --catalog row cannot replace a built-in chemistry (every line labelled with it would change
// without a word), nor a row of its own file; numbers are plain decimals as in the manifests.
func TestUserCatalogueKeysAndNumbers(t *testing.T) {
	t.Parallel()
	row := "LMFP,x,LiMn0.6Fe0.4PO4,olivine,,3.6,3.7,3.8,140,150,155,120,200,bench\n"
	for _, c := range []struct{ in, want string }{
		{"NMC811,x,LiNi0.8Mn0.1Co0.1O2,layered,,3.6,3.7,3.8,180,195,205,200,300,bench\n", `mine.csv:2: key "NMC811" is already in the catalogue`},
		{row + row, `mine.csv:3: key "LMFP" is already in the catalogue`},
		{strings.Replace(row, "3.7", "0x1.dp1", 1), `"0x1.dp1" is not a number`},
		{strings.Replace(row, "150", "1_50", 1), `"1_50" is not a number`},
	} {
		cat := cathodetest.Catalogue(t)
		if err := cat.Add(strings.NewReader(userHead+c.in), "mine.csv"); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Add(%q) = %v, want %q", c.in, err, c.want)
		}
	}
}

// endless yields its pattern forever.
type endless struct {
	pattern string
	at      int
}

func (e *endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = e.pattern[e.at%len(e.pattern)]
		e.at++
	}
	return len(p), nil
}

// An endless --catalog or --prior stream is refused at the side-file cap.
func TestSideFilesCapped(t *testing.T) {
	t.Parallel()
	cat := cathodetest.Catalogue(t)
	err := cat.Add(io.MultiReader(strings.NewReader(userHead), &endless{pattern: "# more\n"}), "mine.csv")
	if err == nil || !strings.Contains(err.Error(), "mine.csv: larger than 1024 KiB") {
		t.Errorf("catalogue: %v", err)
	}
	err = cat.SetPrior(io.MultiReader(strings.NewReader("application,chemistry,share,source\n"), &endless{pattern: "phone,LCO,1,x\n"}), "prior.csv")
	if err == nil || !strings.Contains(err.Error(), "prior.csv: larger than 1024 KiB") {
		t.Errorf("prior: %v", err)
	}
}
