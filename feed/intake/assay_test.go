package intake_test

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"blackmass/feed/intake"
)

func readAssayFile(t *testing.T, name string) (string, error) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "assay", name))
	if err != nil {
		t.Fatal(err)
	}
	a, err := intake.ReadAssay(strings.NewReader(string(b)), name)
	if err != nil {
		return "", err
	}
	var out []string
	for _, v := range a.Values {
		out = append(out, v.Element+" "+v.Text())
	}
	if a.Moisture != nil {
		out = append(out, "moisture "+a.Moisture.Text())
	}
	return strings.Join(out, ", "), nil
}

// Values below the detection limit in the forms lab sheets use are read as censored, with the
// limit in the row's unit (from the value itself or the LOD column); the moisture row is kept
// apart from the elements.
func TestReadAssayBelowDetection(t *testing.T) {
	t.Parallel()
	got, err := readAssayFile(t, "censored-WB-0412.csv")
	if err != nil {
		t.Fatal(err)
	}
	// 50 ppm = 0.005 wt%, 30 ppm = 0.003, 20 mg/kg = 0.002, 15 ppm = 0.0015 (1 wt% = 10^4 ppm).
	want := "Li 3.4 wt%, Co 8.1 wt%, Ni 12.6 wt%, Mn 4 wt%, Cu < 0.05 wt%, Al < 0.005 wt%, Fe < 0.02 wt%, " +
		"Zn < 0.003 wt%, Mg < 0.002 wt%, Cr < 0.0015 wt%, C 33 wt%, moisture 6.5 wt%"
	if got != want {
		t.Errorf("read\n %s\nwant\n %s", got, want)
	}
	b, _ := os.ReadFile(filepath.Join("..", "..", "testdata", "assay", "censored-WB-0412.csv"))
	a, err := intake.ReadAssay(strings.NewReader(string(b)), "censored-WB-0412.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range a.Values {
		if !v.Censored {
			continue
		}
		// The mean and standard deviation of a uniform distribution on [0, L]: L/2 and L/√12.
		if math.Abs(v.WtPct-v.LimitWtPct/2) > 1e-15 || math.Abs(v.SigmaWtPct-v.LimitWtPct/math.Sqrt(12)) > 1e-15 {
			t.Errorf("%s: %+v", v.Element, v)
		}
	}
}

// Bad assays name file, line and column.
func TestReadAssayBelowDetectionErrors(t *testing.T) {
	t.Parallel()
	for name, want := range map[string]string{
		"bad-nd-no-limit.csv": `bad-nd-no-limit.csv:4: value "n.d.": below the detection limit, but no limit given`,
		"bad-unit-clash.csv":  `bad-unit-clash.csv:4: value "< 50 ppm": its unit "ppm" disagrees with the unit column's "wt%"`,
	} {
		if _, err := readAssayFile(t, name); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: %v, want %q", name, err, want)
		}
	}
	for in, want := range map[string]string{
		"element,value,unit,lod\nCo,<LOD,wt%,0\n":    `a.csv:2: lod "0": want a detection limit`,
		"element,value,unit\nCo,<,wt%\n":             `a.csv:2: value "<": below the detection limit, but no limit given`,
		"element,value,unit\nMoisture,97,wt%\n":      `a.csv:2: value "97": moisture must be below 95 wt%`,
		"element,value,unit\nH2O,5,wt%\nwater,4,%\n": `a.csv:3: element "water": given twice (first on line 2)`,
		"element,value,unit\nH2O,5,wt%\n":            `no assay rows`,
	} {
		if _, err := intake.ReadAssay(strings.NewReader(in), "a.csv"); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("ReadAssay(%q) = %v, want %q", in, err, want)
		}
	}
}

// Cadmium and lead are what nickel-cadmium and lead-acid cells shredded with a lot bring into
// it, and an ICP report on black mass lists them: both read, a lead below detection as censored.
func TestReadAssayCadmiumLead(t *testing.T) {
	t.Parallel()
	in := "element,value,unit,uncertainty,LOD\nCo,14.0,wt%,0.4,\nCd,0.12,wt%,0.01,\nPb,ND,ppm,,25\n"
	a, err := intake.ReadAssay(strings.NewReader(in), "icp.csv")
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, v := range a.Values {
		got = append(got, v.Element+" "+v.Text())
	}
	// 25 ppm = 0.0025 wt% (1 wt% = 10^4 ppm).
	if s, want := strings.Join(got, ", "), "Co 14 wt%, Cd 0.12 wt%, Pb < 0.0025 wt%"; s != want {
		t.Errorf("read %s, want %s", s, want)
	}
}

// A value with no number in it is refused as not a number (not as a unit that disagrees), and
// an unquoted decimal comma that splits a row gets the same hint as in a manifest.
func TestReadAssayNotANumber(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]string{
		"element,value,unit\nNi,abc,wt%\n":                  `a.csv:2: value "abc": not a number`,
		"element,value,unit\nNi,N/A,wt%\n":                  `a.csv:2: value "N/A": not a number`,
		"element,value,unit\nNi,12,5,wt%\n":                 `columns 2 and 3 hold "12" and "5": a number written with a decimal comma ("12,5")`,
		"element,value,unit,uncertainty\nNi,12.5,wt%,0,4\n": `columns 4 and 5 hold "0" and "4"`,
	} {
		if _, err := intake.ReadAssay(strings.NewReader(in), "a.csv"); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("ReadAssay(%q) = %v, want %q", in, err, want)
		}
	}
}

// An assay saved with semicolons as separators and decimal commas (as spreadsheets in
// decimal-comma locales save CSV) reads as the same assay written with commas and points.
func TestReadAssaySemicolons(t *testing.T) {
	t.Parallel()
	semi := "# lab export\nelement;value;unit;uncertainty;LOD\nCo;14,2;wt%;0,5;\nNi;9,8;wt%;0,4;\nFe;n.d.;wt%;;0,05\nMoisture;4,0;wt%;0,3;\n"
	comma := "element,value,unit,uncertainty,LOD\nCo,14.2,wt%,0.5,\nNi,9.8,wt%,0.4,\nFe,n.d.,wt%,,0.05\nMoisture,4.0,wt%,0.3,\n"
	text := func(in string) string {
		a, err := intake.ReadAssay(strings.NewReader(in), "a.csv")
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, v := range a.Values {
			out = append(out, fmt.Sprintf("%s %s ± %g", v.Element, v.Text(), v.SigmaWtPct))
		}
		return strings.Join(out, ", ") + "; moisture " + a.Moisture.Text()
	}
	if s, c := text(semi), text(comma); s != c {
		t.Errorf("semicolons read\n %s\ncommas\n %s", s, c)
	}
}
