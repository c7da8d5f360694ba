package intake_test

import (
	"io"
	"strings"
	"testing"
	"unicode/utf16"

	"blackmass/feed/intake"
)

// endless yields its pattern forever: a side file given as a pipe that never closes.
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

const pricesHead = "item,basis,price_per_kg,currency,payable,source\n"

// A misspelt prices column is refused by name, not read past (the price would be missing).
func TestPricesUnknownColumn(t *testing.T) {
	t.Parallel()
	_, err := intake.ReadPrices(strings.NewReader("item,basis,price_per_kg,currency,payable,payables,source\nCo,metal,30,EUR,0.7,0.8,invented\n"), "p.csv")
	if err == nil || !strings.Contains(err.Error(), `p.csv:1: column "payables"`) {
		t.Fatalf("error %v", err)
	}
	if _, err := intake.ReadPrices(strings.NewReader(pricesHead+"Co,metal,30,EUR,0.7,invented\n"), "p.csv"); err != nil {
		t.Fatal(err)
	}
}

// UTF-16 side files are named as such (not "no source column").
func TestSideFilesUTF16(t *testing.T) {
	t.Parallel()
	enc := func(s string) string {
		b := []byte{0xFF, 0xFE}
		for _, c := range utf16.Encode([]rune(s)) {
			b = append(b, byte(c), byte(c>>8))
		}
		return string(b)
	}
	_, err := intake.ReadPrices(strings.NewReader(enc(pricesHead+"Co,metal,30,EUR,0.7,invented\n")), "p.csv")
	if err == nil || !strings.Contains(err.Error(), "p.csv: the file is UTF-16") {
		t.Errorf("prices: %v", err)
	}
	_, err = intake.ReadAssay(strings.NewReader(enc("element,value,unit\nCo,20,wt%\n")), "a.csv")
	if err == nil || !strings.Contains(err.Error(), "a.csv: the file is UTF-16") {
		t.Errorf("assay: %v", err)
	}
}

// A value beyond the assay's header is refused, naming its line and column.
func TestAssayFieldBeyondHeader(t *testing.T) {
	t.Parallel()
	_, err := intake.ReadAssay(strings.NewReader("element,value,unit,uncertainty\nCo,20,wt%,0.5\nNi,10,wt%,0.2,5\n"), "a.csv")
	if err == nil || !strings.Contains(err.Error(), `a.csv:3: column 5 "5": a value beyond the header's 4 columns`) {
		t.Fatalf("error %v", err)
	}
}

// An endless side file is refused at the cap, not read until memory runs out.
func TestSideFilesCapped(t *testing.T) {
	t.Parallel()
	_, err := intake.ReadPrices(io.MultiReader(strings.NewReader(pricesHead), &endless{pattern: "Co,metal,30,EUR,0.7,invented\n"}), "p.csv")
	if err == nil || !strings.Contains(err.Error(), "p.csv") || !strings.Contains(err.Error(), "larger than 1024 KiB") {
		t.Errorf("prices: %v", err)
	}
	_, err = intake.ReadAssay(io.MultiReader(strings.NewReader("element,value,unit,notes\nCo,1,wt%,"), &endless{pattern: "x"}), "a.csv")
	if err == nil || !strings.Contains(err.Error(), "a.csv") || !strings.Contains(err.Error(), "larger than 1024 KiB") {
		t.Errorf("assay: %v", err)
	}
}

// Free text given on the command line is capped at input with an error naming the flag.
func TestCheckFreeText(t *testing.T) {
	t.Parallel()
	if err := intake.CheckFreeText("--supplier", "Larkfield Municipal Drop-off Yard"); err != nil {
		t.Fatal(err)
	}
	for v, want := range map[string]string{
		strings.Repeat("a", 40000): "--supplier: 40000 characters, longer than the 200 allowed",
		"ab\x07":                   "U+0007",
		"\xff":                     "not valid UTF-8",
	} {
		if err := intake.CheckFreeText("--supplier", v); err == nil || !strings.Contains(err.Error(), want) || len(err.Error()) > 200 {
			t.Errorf("%.20q: %v, want %q", v, err, want)
		}
	}
}

// A prices file carries the recovery's products by formula or name beside the elements, each
// at its own price per kg as sold; an item that is neither a metal nor a product is refused by
// file, line and column.
func TestPricesProducts(t *testing.T) {
	t.Parallel()
	in := pricesHead + "Co,metal,30,EUR,0.7,a\nLi2CO3,product,9.5,EUR,,b\nCoSO4.7H2O,,5.2,EUR,,c\n" +
		"nickel hydroxide,product,9,EUR,100%,d\nNi,product,16,EUR,,e\n"
	pl, err := intake.ReadPrices(strings.NewReader(in), "p.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(pl.Prices) != 1 || pl.Prices[0].Element != "Co" {
		t.Errorf("elements %+v", pl.Prices)
	}
	want := []struct {
		item  string
		price float64
		line  int
	}{{"Li2CO3", 9.5, 3}, {"CoSO4·7H2O", 5.2, 4}, {"Ni(OH)2", 9, 5}, {"Ni cathode", 16, 6}}
	if len(pl.Products) != len(want) {
		t.Fatalf("products %+v", pl.Products)
	}
	for i, w := range want {
		if p := pl.Products[i]; p.Item != w.item || p.PerKg != w.price || p.Line != w.line {
			t.Errorf("product %d: %+v, want %+v", i, p, w)
		}
	}
	for _, c := range []struct{ in, want string }{
		{"Unobtainium oxide,product,3,EUR,,x\n", `p.csv:2: item "Unobtainium oxide": neither a metal symbol`},
		{"Co,metal,30,EUR,0.7,a\nLiOH·H2O,,3,EUR,,x\n", `p.csv:3: item "LiOH·H2O": neither a metal symbol`},
		{"Li2CO3,LCE,9,EUR,,x\n", `p.csv:2: basis "LCE"`},
		{"Li2CO3,product,9,EUR,0.8,x\n", `p.csv:2: payable "0.8"`},
		{"Li2CO3,product,9,EUR,,x\nlithium carbonate,product,9,EUR,,x\n", `p.csv:3: item "lithium carbonate": product Li2CO3 priced twice`},
		{"Co,metal,30,EUR,0.7,a\nLi2CO3,product,9,USD,,x\n", `p.csv:3: currency "USD"`},
	} {
		if _, err := intake.ReadPrices(strings.NewReader(pricesHead+c.in), "p.csv"); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.in, err, c.want)
		}
	}
}
