package intake_test

import (
	"errors"
	"math"
	"strings"
	"testing"
	"unicode/utf16"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/intake"
	"blackmass/feed/manifest"
)

// readAll reads a CSV manifest from in under the name m.csv.
func readAll(t *testing.T, in string) ([]manifest.Line, error) {
	t.Helper()
	var lines []manifest.Line
	_, err := intake.ReadCSV(strings.NewReader(in), "m.csv", intake.Options{Catalogue: cathodetest.Catalogue(t)}, func(l manifest.Line) error {
		lines = append(lines, l)
		return nil
	})
	return lines, err
}

// wantRefused checks that err is an *intake.Error naming m.csv, the line and (when col is not
// "") the column, with want in its text.
func wantRefused(t *testing.T, err error, line int, col, want string) {
	t.Helper()
	var ie *intake.Error
	if !errors.As(err, &ie) {
		t.Fatalf("error %v, want an intake.Error", err)
	}
	if ie.File != "m.csv" || ie.Line != line || (col != "" && ie.Column != col) || !strings.Contains(err.Error(), want) {
		t.Fatalf("error %q (line %d, column %q), want m.csv line %d column %q containing %q", err, ie.Line, ie.Column, line, col, want)
	}
}

// Two numbers run together are not one: "4x3" is not 43 cells, "13-4" not 134, "2 3" not 23.
func TestCellsPerPackRunTogether(t *testing.T) {
	t.Parallel()
	hdr := "chemistry,format,capacity,count,cells_per_pack\n"
	for _, v := range []string{"4x3", "13-4", "2 3", "4 x 3"} {
		_, err := readAll(t, hdr+"NMC532,pack,500 Wh,1,"+v+"\n")
		wantRefused(t, err, 2, "cells_per_pack", "series-parallel tag")
	}
	for v, want := range map[string]int{"12": 12, "4s3p": 12, "13S-4P": 52, "10s 3p": 30} {
		lines, err := readAll(t, hdr+"NMC532,pack,500 Wh,1,"+v+"\n")
		if err != nil || lines[0].CellsPerItem != want {
			t.Errorf("%q: %v cells, %v; want %d", v, lines, err, want)
		}
	}
}

// A line whose first field starts with '#' is a comment only when it holds nothing else; a data
// row with an id such as "#12" is read, and "#" heads the id column.
func TestHashLines(t *testing.T) {
	t.Parallel()
	in := "# lot KR-2611\nid,chemistry,format,capacity,count\n#12,LFP,prismatic,100 Wh,2\n  # a note\n#13,LFP,prismatic,100 Wh,3\n"
	lines, err := readAll(t, in)
	if err != nil {
		t.Fatal(err)
	}
	if len(lines) != 2 || lines[0].ID != "#12" || lines[1].ID != "#13" || lines[1].Num != 5 {
		t.Fatalf("read %+v", lines)
	}
	lines, err = readAll(t, "#,chemistry,format,capacity,count\n7,LFP,prismatic,100 Wh,2\n")
	if err != nil || len(lines) != 1 || lines[0].ID != "7" {
		t.Fatalf("# header: %+v, %v", lines, err)
	}
	// A note holding the separator under the table is free text: read past (with a note in the
	// reading's Info), never read as a line.
	lines, err = readAll(t, "chemistry,format,capacity,count\nLFP,prismatic,100 Wh,2\n# checked, ok\n")
	if err != nil || len(lines) != 1 {
		t.Fatalf("note under the table: %+v, %v", lines, err)
	}
}

// In a semicolon (decimal-comma) file "1.000" is a thousand, not one: refused as ambiguous.
func TestCountDotThousands(t *testing.T) {
	t.Parallel()
	_, err := readAll(t, "chemistry;format;capacity;count\nLFP;prismatic;100 Wh;1.000\n")
	wantRefused(t, err, 2, "count", "ambiguous")
	_, err = readAll(t, "chemistry,format,capacity,count\nLFP,prismatic,100 Wh,2.500\n")
	wantRefused(t, err, 2, "count", "ambiguous")
	lines, err := readAll(t, "chemistry;format;capacity;count\nLFP;prismatic;1,5 kWh;1000\n")
	if err != nil || lines[0].Count != 1000 || lines[0].EnergyWh != 1500 {
		t.Fatalf("%+v, %v", lines, err)
	}
}

// A mass unit on the count column would read a weight as a number of items: refused.
func TestUnitOnCountHeader(t *testing.T) {
	t.Parallel()
	for _, h := range []string{"qty (kg)", "Pieces [lb]", "count kg"} {
		_, err := readAll(t, "chemistry,format,capacity,"+h+"\nLFP,prismatic,100 Wh,20\n")
		wantRefused(t, err, 1, "column", "holds no quantity with a unit")
	}
	if _, err := readAll(t, "chemistry,format,capacity,Qty (pcs)\nLFP,prismatic,100 Wh,20\n"); err != nil {
		t.Fatal(err)
	}
}

// UTF-16 text (Excel's "Unicode text") is named as such, not read as one garbled column.
func TestUTF16Refused(t *testing.T) {
	t.Parallel()
	text := "chemistry,format,capacity,count\nLFP,prismatic,100 Wh,2\n"
	u := utf16.Encode([]rune(text))
	le := []byte{0xFF, 0xFE}
	noBOM := []byte{}
	for _, c := range u {
		le = append(le, byte(c), byte(c>>8))
		noBOM = append(noBOM, byte(c), byte(c>>8))
	}
	for name, in := range map[string][]byte{"with BOM": le, "without BOM": noBOM} {
		_, err := readAll(t, string(in))
		wantRefused(t, err, 0, "", "UTF-16")
		if !strings.Contains(err.Error(), "save it as UTF-8") {
			t.Errorf("%s: %v", name, err)
		}
	}
}

// A quote left open is reported on the line where it opened, not at the end of the input.
func TestUnterminatedQuoteLine(t *testing.T) {
	t.Parallel()
	in := "chemistry,format,capacity,count\nLFP,prismatic,100 Wh,2\n\"LFP,prismatic,100 Wh,2\n" + strings.Repeat("LFP,prismatic,100 Wh,2\n", 20000)
	_, err := readAll(t, in)
	wantRefused(t, err, 3, "", "never closed")
}

// An absurd value is echoed as typed, not as a 301-digit number.
func TestAbsurdEchoedAsGiven(t *testing.T) {
	t.Parallel()
	_, err := readAll(t, "chemistry,format,capacity,count\nLCO,pouch,1e300 Wh,1\n")
	wantRefused(t, err, 2, "capacity", `"1e300 Wh"`)
	if len(err.Error()) > 200 || strings.Contains(err.Error(), "0000000000") {
		t.Fatalf("error %q reformats the value", err)
	}
}

// Lines ended by a bare carriage return, alone or mixed with LF and CRLF, are lines: no line
// runs into the next as an extra column.
func TestBareCarriageReturns(t *testing.T) {
	t.Parallel()
	for name, in := range map[string]string{
		"mixed":   "chemistry,format,capacity,count\nLFP,prismatic,100 Wh,2\rLFP,prismatic,100 Wh,3\r\nLFP,prismatic,100 Wh,4\n",
		"CR only": "chemistry,format,capacity,count\rLFP,prismatic,100 Wh,2\rLFP,prismatic,100 Wh,3\rLFP,prismatic,100 Wh,4\r",
	} {
		lines, err := readAll(t, in)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(lines) != 3 || lines[2].Count != 4 || lines[2].Num != 4 {
			t.Fatalf("%s: %+v", name, lines)
		}
	}
}

// The reading rules hold for any input: an accepted line has a count and cells in range and an
// id a workbook keeps; a refusal is an intake.Error naming the file, short, with no raw control
// character; a UTF-16 byte-order mark is always refused by name; and a bare carriage return
// reads exactly as a newline.
func FuzzReadManifestRules(f *testing.F) {
	f.Add("id,chemistry,format,capacity,count,cells_per_pack\n#1,NMC532,pack,500 Wh,2,13s4p\n# note\n")
	f.Add("chemistry;format;capacity;count\rLFP;pack;1,5 kWh;1.000\r")
	f.Add("chemistry,format,capacity,qty (kg)\nLFP,pack,1 kWh,4x3\n")
	f.Add("\xff\xfec\x00h\x00")
	cat := cathodetest.Catalogue(f)
	read := func(s string) ([]manifest.Line, error) {
		var lines []manifest.Line
		_, err := intake.ReadCSV(strings.NewReader(s), "fuzz.csv", intake.Options{Catalogue: cat, UnknownAsPrior: true}, func(l manifest.Line) error {
			lines = append(lines, l)
			return nil
		})
		return lines, err
	}
	f.Fuzz(func(t *testing.T, s string) {
		lines, err := read(s)
		for _, l := range lines {
			if l.Count < 1 || l.Count > 10_000_000 || l.CellsPerItem < 0 || l.CellsPerItem > 20_000 || intake.CheckFreeText("id", l.ID) != nil && len(l.ID) <= 200 {
				t.Fatalf("accepted %+v", l)
			}
		}
		if err != nil {
			var ie *intake.Error
			if !errors.As(err, &ie) || ie.File != "fuzz.csv" || len(err.Error()) > 2000 || strings.ContainsAny(err.Error(), "\x00\x1b\r") {
				t.Fatalf("error %q", err)
			}
		}
		if strings.HasPrefix(s, "\xff\xfe") && (err == nil || !strings.Contains(err.Error(), "UTF-")) {
			t.Fatalf("UTF-16 read: %v", err)
		}
		lf := strings.ReplaceAll(strings.ReplaceAll(s, "\r\n", "\n"), "\r", "\n")
		lines2, err2 := read(lf)
		if (err == nil) != (err2 == nil) || len(lines) != len(lines2) || err != nil && err.Error() != err2.Error() {
			t.Fatalf("CR and LF read differently: %d lines, %v; %d lines, %v", len(lines), err, len(lines2), err2)
		}
	})
}

// SI prefixes are told apart by case: m is milli, M is mega (SI Brochure, 9th edition, BIPM
// 2019, table 7). "2000 mWh" is 2 Wh, never two megawatt-hours; the other units keep their
// case-free spellings.
func TestMilliAndMegaWattHours(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		in   string
		want float64
	}{
		{"2000 mWh", 2}, {"2000mwh", 2}, {"1500 mWH", 1.5}, {"0.002 MWh", 2000}, {"0.001 MWH", 1000},
		{"5 kWh", 5000}, {"5 KWH", 5000}, {"11 WH", 11}, {"3000 MAH", 3}, {"3000 mAh", 3},
	} {
		v, _, err := intake.Quantity(c.in, intake.CapacityUnits, "", false)
		if err != nil || math.Abs(v-c.want) > 1e-9*c.want {
			t.Errorf("%q: got %v, %v; want %v", c.in, v, err, c.want)
		}
	}
}
