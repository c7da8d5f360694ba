package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

func run(t *testing.T, stdin string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = Main(args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "golden", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/blackmass -update to create it)", err)
	}
	if string(want) != got {
		t.Errorf("%s differs from the golden file (run with -update after checking the change):\n--- want\n%s\n--- got\n%s", name, want, got)
	}
}

// The demo lot's JSON and terminal output are pinned by golden files.
func TestDemoGolden(t *testing.T) {
	code, out, errs := run(t, "", "demo", "--json", "--samples", "2000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	golden(t, "demo.json", out)
	code, out, errs = run(t, "", "demo", "--samples", "2000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	golden(t, "demo.txt", out)
	for _, want := range []string{"P50 kg", "Co", "safety:", "licensed practice"} {
		if !strings.Contains(out, want) {
			t.Errorf("terminal output lacks %q", want)
		}
	}
}

// Every broken manifest in testdata/bad gives a clear error naming the file (and the line where
// there is one) and a non-zero exit, with nothing on stdout.
func TestBadManifests(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bad", "*.csv"))
	if err != nil || len(files) < 15 {
		t.Fatalf("bad-input corpus: %v files, %v", len(files), err)
	}
	fileLevel := map[string]bool{"empty.csv": true, "comment-only.csv": true}
	lineRef := regexp.MustCompile(`\.csv:\d+: `)
	for _, f := range files {
		base := filepath.Base(f)
		code, out, errs := run(t, "", "estimate", f, "--samples", "50")
		if code == 0 || out != "" {
			t.Errorf("%s: exit %d, stdout %q; want a failure and no output", base, code, out)
			continue
		}
		if !strings.Contains(errs, base) {
			t.Errorf("%s: error %q does not name the file", base, errs)
		}
		if !fileLevel[base] && !lineRef.MatchString(errs) {
			t.Errorf("%s: error %q does not name the line", base, errs)
		}
	}
}

func TestUnknownLabelError(t *testing.T) {
	code, _, errs := run(t, "", "estimate", filepath.Join("..", "..", "testdata", "bad", "unknown-chemistry.csv"))
	if code == 0 || !strings.Contains(errs, "unknown-chemistry.csv:2: chemistry \"NMC812x\"") || !strings.Contains(errs, "NMC811") {
		t.Errorf("got %q", errs)
	}
	code, out, errs := run(t, "", "estimate", "--unknown", "prior", "--samples", "50", filepath.Join("..", "..", "testdata", "bad", "unknown-chemistry.csv"))
	if code != 0 || !strings.Contains(out, "not recognised") {
		t.Errorf("--unknown prior: exit %d, %q %q", code, out, errs)
	}
}

func TestStdinAndChem(t *testing.T) {
	code, out, errs := run(t, "chemistry,format,capacity,count\nLFP,prismatic,280 Ah,1\n", "estimate", "-", "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"black_mass_kg"`) || !strings.Contains(out, `"file": "stdin"`) {
		t.Errorf("stdin: exit %d %q %q", code, out, errs)
	}
	code, out, _ = run(t, "", "chem", "--json", "NCM 8:1:1")
	if code != 0 || !strings.Contains(out, `"molar_mass_g_mol"`) || !strings.Contains(out, `"theoretical_capacity_mAh_g"`) || !strings.Contains(out, `"key": "NMC811"`) {
		t.Errorf("chem --json: %q", out)
	}
	code, _, errs = run(t, "", "chem", "NMC812x")
	if code == 0 || !strings.Contains(errs, "nearest known") {
		t.Errorf("chem unknown: %q", errs)
	}
}

func TestAssayCommands(t *testing.T) {
	assay := filepath.Join("..", "..", "testdata", "assay-KR-2611.csv")
	code, out, errs := run(t, "", "quote", assay, "--mass", "1.2 t", "--samples", "200", "--json")
	if code != 0 || !strings.Contains(out, `"leach"`) || !strings.Contains(out, `"mix_fit"`) {
		t.Fatalf("quote: exit %d %s", code, errs)
	}
	code, out, errs = run(t, "", "reconcile", filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv"), assay, "--samples", "300")
	if code != 0 || !strings.Contains(out, "estimate vs assay") || !strings.Contains(out, "not modelled") {
		t.Fatalf("reconcile: exit %d %s\n%s", code, errs, out)
	}
	code, out, errs = run(t, "", "infer", assay, "--candidates", "LCO,NMC622,LFP", "--bootstrap", "50")
	if code != 0 || !strings.Contains(out, "NMC622") || strings.Contains(out, "NCA") {
		t.Fatalf("infer: exit %d %s\n%s", code, errs, out)
	}
	if code, _, errs = run(t, "", "quote", assay); code == 0 || !strings.Contains(errs, "mass") {
		t.Errorf("quote without --mass: %q", errs)
	}
	dir := t.TempDir()
	xl := filepath.Join(dir, "q.xlsx")
	if code, _, errs = run(t, "", "quote", assay, "--mass", "500kg", "--samples", "100", "--xlsx", xl); code != 0 {
		t.Fatalf("quote --xlsx: %s", errs)
	}
	if _, err := os.Stat(xl); err != nil {
		t.Error(err)
	}
}

func TestPlanFile(t *testing.T) {
	plan := filepath.Join("..", "..", "testdata", "plans", "quarry-lane-standard.plan")
	code, out, errs := run(t, "", "demo", "--plan", plan, "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"recipe_acid_mol_per_l": 2`) || !strings.Contains(out, `"name": "H2SO4 96 %"`) {
		t.Fatalf("plan: exit %d %s", code, errs)
	}
	// A flag on the command line wins over the plan.
	code, out, _ = run(t, "", "demo", "--plan", plan, "--acid-strength", "93", "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"name": "H2SO4 93 %"`) {
		t.Errorf("command line did not override the plan")
	}
	bad := filepath.Join(t.TempDir(), "bad.plan")
	_ = os.WriteFile(bad, []byte("# ok\nroute = sulfuric-peroxide\ncolour = blue\n"), 0o644)
	code, _, errs = run(t, "", "demo", "--plan", bad)
	if code == 0 || !strings.Contains(errs, "bad.plan:3:") {
		t.Errorf("bad plan: %q", errs)
	}
	_ = os.WriteFile(bad, []byte("pulp-density = lots\n"), 0o644)
	code, _, errs = run(t, "", "demo", "--plan", bad)
	if code == 0 || !strings.Contains(errs, "bad.plan:1: pulp-density") {
		t.Errorf("bad plan value: %q", errs)
	}
}

// The report's SHA-256 is the file's (checked with the standard library's hash of the bytes).
func TestInputHash(t *testing.T) {
	path := filepath.Join(t.TempDir(), "one.csv")
	body := "chemistry,format,capacity,count\nLCO,pouch,3 Ah,1\n"
	_ = os.WriteFile(path, []byte(body), 0o644)
	_, out, _ := run(t, "", "estimate", path, "--json", "--samples", "20")
	sum := sha256.Sum256([]byte(body))
	if !strings.Contains(out, hex.EncodeToString(sum[:])) {
		t.Errorf("sha256 of the input missing from the report")
	}
}

// The JSON contract other tools rely on: elements keyed by symbol with kg and wt_pct as
// p10/p50/p90/mean, black_mass_kg likewise, lines, warnings, inputs, and the leach object.
func TestJSONContract(t *testing.T) {
	_, out, _ := run(t, "", "demo", "--json", "--samples", "100")
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	stat := func(what string, v any) {
		m, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%s: not an object", what)
		}
		for _, k := range []string{"p10", "p50", "p90", "mean"} {
			if _, ok := m[k].(float64); !ok {
				t.Errorf("%s.%s missing", what, k)
			}
		}
	}
	stat("black_mass_kg", r["black_mass_kg"])
	els := r["elements"].(map[string]any)
	for _, sym := range []string{"Co", "Ni", "Mn", "Li", "Al", "Cu", "Fe", "P"} {
		e := els[sym].(map[string]any)
		stat(sym+".kg", e["kg"])
		stat(sym+".wt_pct", e["wt_pct"])
	}
	if lines, _ := r["lines"].([]any); len(lines) != 13 {
		t.Errorf("lines: %d", len(lines))
	}
	in := r["inputs"].(map[string]any)
	for _, k := range []string{"file", "sha256", "seed", "samples", "program_version"} {
		if _, ok := in[k]; !ok {
			t.Errorf("inputs.%s missing", k)
		}
	}
	if _, ok := r["warnings"].([]any); !ok {
		t.Error("warnings missing")
	}
	l := r["leach"].(map[string]any)
	if l["route"] != "sulfuric-peroxide" {
		t.Errorf("leach.route = %v", l["route"])
	}
	for _, g := range l["reagents"].([]any) {
		stat("reagent kg", g.(map[string]any)["kg"])
		stat("reagent litres", g.(map[string]any)["litres"])
	}
	liq := l["liquor"].(map[string]any)
	stat("volume_l", liq["volume_l"])
	co := liq["elements"].(map[string]any)["Co"].(map[string]any)
	stat("Co g_per_l", co["g_per_l"])
	stat("Co mol_per_l", co["mol_per_l"])
	stat("free acid", l["free_acid_mol_per_l"])
	for _, k := range []string{"gases", "saturation", "warnings", "safety"} {
		if l[k] == nil {
			t.Errorf("leach.%s missing", k)
		}
	}
	_, out, _ = run(t, "", "demo", "--json", "--samples", "100", "--no-lines")
	r = nil
	if err := json.Unmarshal([]byte(out), &r); err != nil || r["lines"] != nil {
		t.Errorf("--no-lines still writes lines (%v)", err)
	}
}
