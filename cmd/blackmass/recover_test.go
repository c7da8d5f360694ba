package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// demo --recover shows the whole chain in text and JSON; the balance holds in the demo's samples.
func TestDemoRecover(t *testing.T) {
	code, out, errs := cli(t, "", "demo", "--recover", "--samples", "300")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"recovery plan", "1. impurity", "3. sx", "Co cathode", "Li2CO3", "where each element goes",
		"water balance", "recovery cautions", "licensed practice", "products' value"} {
		if !strings.Contains(out, want) {
			t.Errorf("text lacks %q", want)
		}
	}
	code, out, errs = cli(t, "", "demo", "--recover", "--samples", "300", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Recovery struct {
			Stages          []struct{ Kind string }
			BalanceResidual map[string]float64 `json:"balance_max_relative_residual"`
			Products        []struct{ Name string }
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if len(rep.Recovery.Stages) != 7 || len(rep.Recovery.Products) < 3 {
		t.Errorf("JSON recovery: %d stages, %d products", len(rep.Recovery.Stages), len(rep.Recovery.Products))
	}
	for el, r := range rep.Recovery.BalanceResidual {
		if !(r < 1e-3) {
			t.Errorf("demo: %s balance residual %g", el, r)
		}
	}
}

// quote --recover plans the recovery of the quoted black mass's liquor; a sulfate product asked
// by a flag on a chloride liquor is refused as a usage error.
func TestQuoteRecover(t *testing.T) {
	assay := filepath.Join("..", "..", "testdata", "assay-KR-2611.csv")
	code, out, errs := cli(t, "", "quote", assay, "--mass", "1.2t", "--recover", "--samples", "200", "--li-product", "phosphate")
	if code != 0 || !strings.Contains(out, "Li3PO4") || !strings.Contains(out, "recovery plan") {
		t.Errorf("quote --recover: exit %d, %s", code, errs)
	}
	code, _, errs = cli(t, "", "demo", "--route", "hydrochloric", "--recover", "--co-product", "sulfate", "--samples", "50")
	if code != 2 || !strings.Contains(errs, "sulfate crystallisation needs a sulfate liquor") {
		t.Errorf("sulfate on chloride: exit %d, %s", code, errs)
	}
}

func TestRecoverCommand(t *testing.T) {
	liq := filepath.Join("..", "..", "testdata", "recover", "liquor.csv")
	fsheet := filepath.Join("..", "..", "testdata", "recover", "bench.flowsheet")
	code, out, errs := cli(t, "", "recover", liq, "--volume", "1200L", "--samples", "200", "--flowsheet", fsheet)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// Lime makes gypsum: the impurity cake is mostly Ca and S.
	for _, want := range []string{"1200 L", "CoSO4·7H2O", "NiCO3", "impurity cake   ", "Ca 2", "Ca  "} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q", want)
		}
	}
	// Reagent prices: the cost and the net beside the products' value.
	rp := filepath.Join("..", "..", "testdata", "recover", "reagent-prices-invented.csv")
	code, out, errs = cli(t, "", "demo", "--recover", "--samples", "100", "--recover-prices", rp)
	if code != 0 || !strings.Contains(out, "recovery reagents' cost") || !strings.Contains(out, "less the reagents' cost") {
		t.Errorf("--recover-prices: exit %d, %s", code, errs)
	}
	// A distribution table beside the flowsheet file.
	thio := filepath.Join("..", "..", "testdata", "recover", "thiocyanate.flowsheet")
	code, out, errs = cli(t, "", "recover", liq, "--volume", "1200L", "--samples", "100", "--flowsheet", thio)
	if code != 0 || !strings.Contains(out, "D from the table thiocyanate.csv") {
		t.Errorf("thiocyanate flowsheet: exit %d, %s", code, errs)
	}
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	for _, c := range []struct {
		name string
		args []string
		want int
		msg  string
	}{
		{"no volume", []string{"recover", liq}, 2, "without a volume"},
		{"bad volume", []string{"recover", liq, "--volume", "-3L"}, 2, "--volume"},
		{"bad oxidant", []string{"recover", liq, "--volume", "1L", "--mn-oxidant", "H2O2"}, 2, "--mn-oxidant"},
		{"bad unit", []string{"recover", write("u.csv", "element,value,unit\nCo,10,ppm\n"), "--volume", "1L"}, 1,
			"u.csv:2: unit \"ppm\": want g/L or mg/L"},
		{"bad element", []string{"recover", write("e.csv", "element,value,unit\nLi,1,g/L\nXx,10,g/L\n"), "--volume", "1L"}, 1,
			"e.csv:3: element \"Xx\""},
		{"twice", []string{"recover", write("t.csv", "element,value,unit\nLi,1,g/L\nLi,2,g/L\n"), "--volume", "1L"}, 1,
			"t.csv:3: element \"Li\": given twice"},
		{"bad number", []string{"recover", write("n.csv", "element,value,unit\nLi,one,g/L\n"), "--volume", "1L"}, 1,
			"n.csv:2: value \"one\""},
		{"bad flowsheet", []string{"demo", "--samples", "50", "--flowsheet", write("f.txt", "impurity\nlithium\nsx\n")}, 1,
			"f.txt:3: stage: sx cannot come after lithium"},
		{"flowsheet ph", []string{"demo", "--samples", "50", "--flowsheet", write("p.txt", "impurity ph=8\n")}, 1,
			"p.txt:1: ph: 8 cannot be reached"},
	} {
		code, out, errs := cli(t, "", c.args...)
		if code != c.want || !strings.Contains(errs, c.msg) || out != "" {
			t.Errorf("%s: exit %d (want %d), stderr %q (want %q), stdout %d bytes", c.name, code, c.want, errs, c.msg, len(out))
		}
	}
}

// demo --recover puts the recovery's reagents on the order sheet after the leach's and values
// the products at the invented product prices beside the payables; a prices file with an item
// that is neither a metal nor a product is refused naming its file, line and column.
func TestDemoRecoverOrderAndProductPrices(t *testing.T) {
	code, out, errs := cli(t, "", "demo", "--recover", "--samples", "300")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	order := out[strings.Index(out, "order sheet ("):]
	for _, want := range []string{"H2SO4 98 %", "NaOH 50 % (recovery)", "KMnO4 (recovery)", "Na2CO3 soda ash (recovery)",
		"iron powder (recovery)", "200 L drum"} {
		if !strings.Contains(order, want) {
			t.Errorf("order sheet lacks %q:\n%s", want, order)
		}
	}
	if strings.Index(order, "H2SO4 98 %") > strings.Index(order, "(recovery)") {
		t.Error("the leach's reagents come first")
	}
	for _, want := range []string{"recovered products instead (EUR", "value of Ni(OH)2:", "value of Co cathode:"} {
		if !strings.Contains(out, want) {
			t.Errorf("text lacks %q", want)
		}
	}
	p := filepath.Join(t.TempDir(), "p.csv")
	body := "item,basis,price_per_kg,currency,payable,source\nCo,metal,24,EUR,0.7,x\nCoSO4·5H2O,product,5,EUR,,x\n"
	if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs = cli(t, "", "demo", "--recover", "--samples", "50", "--prices", p)
	if code == 0 || !strings.Contains(errs, "p.csv:3: item \"CoSO4·5H2O\"") {
		t.Errorf("unknown product: exit %d, %s", code, errs)
	}
}
