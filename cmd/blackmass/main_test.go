package main

import (
	"blackmass/feed/run"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

func cli(t *testing.T, stdin string, args ...string) (code int, stdout, stderr string) {
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
		t.Errorf("%s differs from the golden file (run with -update after checking the change):\n%s", name, lineDiff(string(want), got))
	}
}

// lineDiff lists the first lines that differ between want and got, not the whole files.
func lineDiff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	var b strings.Builder
	shown := 0
	for i := 0; i < max(len(w), len(g)) && shown < 20; i++ {
		var wl, gl string
		if i < len(w) {
			wl = w[i]
		}
		if i < len(g) {
			gl = g[i]
		}
		if wl != gl {
			fmt.Fprintf(&b, "line %d:\n  - %s\n  + %s\n", i+1, wl, gl)
			shown++
		}
	}
	if len(w) != len(g) {
		fmt.Fprintf(&b, "(%d lines, want %d)\n", len(g), len(w))
	}
	return b.String()
}

// The demo lot's JSON and terminal output are pinned by golden files.
func TestDemoGolden(t *testing.T) {
	code, out, errs := cli(t, "", "demo", "--json", "--samples", "2000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	golden(t, "demo.json", out)
	code, out, errs = cli(t, "", "demo", "--samples", "2000")
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
		code, out, errs := cli(t, "", "estimate", f, "--samples", "50")
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
	code, _, errs := cli(t, "", "estimate", filepath.Join("..", "..", "testdata", "bad", "unknown-chemistry.csv"))
	if code == 0 || !strings.Contains(errs, "unknown-chemistry.csv:2: chemistry \"NMC812x\"") || !strings.Contains(errs, "NMC811") {
		t.Errorf("got %q", errs)
	}
	code, out, errs := cli(t, "", "estimate", "--unknown", "prior", "--samples", "50", filepath.Join("..", "..", "testdata", "bad", "unknown-chemistry.csv"))
	if code != 0 || !strings.Contains(out, "not recognised") {
		t.Errorf("--unknown prior: exit %d, %q %q", code, out, errs)
	}
}

func TestStdinAndChem(t *testing.T) {
	code, out, errs := cli(t, "chemistry,format,capacity,count\nLFP,prismatic,280 Ah,1\n", "estimate", "-", "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"black_mass_kg"`) || !strings.Contains(out, `"file": "stdin"`) {
		t.Errorf("stdin: exit %d %q %q", code, out, errs)
	}
	code, out, _ = cli(t, "", "chem", "--json", "NCM 8:1:1")
	if code != 0 || !strings.Contains(out, `"molar_mass_g_mol"`) || !strings.Contains(out, `"theoretical_capacity_mAh_g"`) || !strings.Contains(out, `"key": "NMC811"`) {
		t.Errorf("chem --json: %q", out)
	}
	code, _, errs = cli(t, "", "chem", "NMC812x")
	if code == 0 || !strings.Contains(errs, "nearest known") {
		t.Errorf("chem unknown: %q", errs)
	}
}

func TestAssayCommands(t *testing.T) {
	assay := filepath.Join("..", "..", "testdata", "assay-KR-2611.csv")
	code, out, errs := cli(t, "", "quote", assay, "--mass", "1.2 t", "--samples", "200", "--json")
	if code != 0 || !strings.Contains(out, `"leach"`) || !strings.Contains(out, `"mix_fit"`) {
		t.Fatalf("quote: exit %d %s", code, errs)
	}
	code, out, errs = cli(t, "", "reconcile", filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv"), assay, "--samples", "300")
	if code != 0 || !strings.Contains(out, "estimate vs assay") || !strings.Contains(out, "not modelled") {
		t.Fatalf("reconcile: exit %d %s\n%s", code, errs, out)
	}
	code, out, errs = cli(t, "", "infer", assay, "--candidates", "LCO,NMC622,LFP", "--bootstrap", "50")
	if code != 0 || !strings.Contains(out, "NMC622") || strings.Contains(out, "NCA") {
		t.Fatalf("infer: exit %d %s\n%s", code, errs, out)
	}
	if code, _, errs = cli(t, "", "quote", assay); code == 0 || !strings.Contains(errs, "mass") {
		t.Errorf("quote without --mass: %q", errs)
	}
	dir := t.TempDir()
	xl := filepath.Join(dir, "q.xlsx")
	if code, _, errs = cli(t, "", "quote", assay, "--mass", "500kg", "--samples", "100", "--xlsx", xl); code != 0 {
		t.Fatalf("quote --xlsx: %s", errs)
	}
	if _, err := os.Stat(xl); err != nil {
		t.Error(err)
	}
}

func TestPlanFile(t *testing.T) {
	plan := filepath.Join("..", "..", "testdata", "plans", "quarry-lane-standard.plan")
	code, out, errs := cli(t, "", "demo", "--plan", plan, "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"recipe_acid_mol_per_l": 2`) || !strings.Contains(out, `"name": "H2SO4 96 %"`) {
		t.Fatalf("plan: exit %d %s", code, errs)
	}
	// A flag on the command line wins over the plan.
	code, out, _ = cli(t, "", "demo", "--plan", plan, "--acid-strength", "93", "--samples", "100", "--json")
	if code != 0 || !strings.Contains(out, `"name": "H2SO4 93 %"`) {
		t.Errorf("command line did not override the plan")
	}
	bad := filepath.Join(t.TempDir(), "bad.plan")
	_ = os.WriteFile(bad, []byte("# ok\nroute = sulfuric-peroxide\ncolour = blue\n"), 0o644)
	code, _, errs = cli(t, "", "demo", "--plan", bad)
	if code == 0 || !strings.Contains(errs, "bad.plan:3:") {
		t.Errorf("bad plan: %q", errs)
	}
	_ = os.WriteFile(bad, []byte("pulp-density = lots\n"), 0o644)
	code, _, errs = cli(t, "", "demo", "--plan", bad)
	if code == 0 || !strings.Contains(errs, "bad.plan:1: pulp-density") {
		t.Errorf("bad plan value: %q", errs)
	}
}

// The report's SHA-256 is the file's (checked with the standard library's hash of the bytes).
func TestInputHash(t *testing.T) {
	path := filepath.Join(t.TempDir(), "one.csv")
	body := "chemistry,format,capacity,count\nLCO,pouch,3 Ah,1\n"
	_ = os.WriteFile(path, []byte(body), 0o644)
	_, out, _ := cli(t, "", "estimate", path, "--json", "--samples", "20")
	sum := sha256.Sum256([]byte(body))
	if !strings.Contains(out, hex.EncodeToString(sum[:])) {
		t.Errorf("sha256 of the input missing from the report")
	}
}

// The JSON contract other tools rely on: elements keyed by symbol with kg and wt_pct as
// p10/p50/p90/mean, black_mass_kg likewise, lines, warnings, inputs, and the leach object.
func TestJSONContract(t *testing.T) {
	_, out, _ := cli(t, "", "demo", "--json", "--samples", "100")
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
	_, out, _ = cli(t, "", "demo", "--json", "--samples", "100", "--no-lines")
	r = nil
	if err := json.Unmarshal([]byte(out), &r); err != nil || r["lines"] != nil {
		t.Errorf("--no-lines still writes lines (%v)", err)
	}
}

// Exit codes: 0 success, 1 bad input data, 2 a command line that cannot be run.
func TestExitCodes(t *testing.T) {
	bad := filepath.Join("..", "..", "testdata", "bad", "unknown-chemistry.csv")
	for _, c := range []struct {
		name string
		args []string
		want int
	}{
		{"demo", []string{"demo", "--samples", "50"}, 0},
		{"unknown flag", []string{"--nope"}, 2},
		{"unknown command", []string{"nosuch"}, 2},
		{"missing argument", []string{"estimate"}, 2},
		{"flag out of range", []string{"demo", "--pulp-density", "0"}, 2},
		{"non-finite flag", []string{"demo", "--liquor-volume", "NaN"}, 2},
		{"bootstrap bound", []string{"infer", "x.csv", "--bootstrap", "10000000"}, 2},
		{"decimal comma in a flag", []string{"demo", "--samples", "50", "--pulp-density", "150,5"}, 0},
		{"bad input data", []string{"estimate", bad}, 1},
		{"quote mass out of range", []string{"quote", "x.csv", "--mass", "1e300 t"}, 2}, // a flag out of its range is a usage error
		{"unknown route", []string{"demo", "--route", "bogus"}, 2},
		{"malformed extraction", []string{"demo", "--extraction", "Co=="}, 2},
		{"unknown-label rule", []string{"demo", "--unknown", "maybe"}, 2},
		{"container without unit", []string{"demo", "--containers", "25 drum"}, 2},
		{"list from a day not in the calendar", []string{"lot", "list", "--from", "2026-13-01", "--db", "no-such.db"}, 2},
		{"list to a month only", []string{"lot", "list", "--to", "2026-11", "--db", "no-such.db"}, 2},
		{"export from a day not in the calendar", []string{"lot", "export", "--csv", "x.csv", "--from", "2026-02-30", "--db", "no-such.db"}, 2},
		{"sulfate crystals from a chloride leach", []string{"demo", "--samples", "50", "--route", "hydrochloric", "--co-product", "sulfate"}, 2},
		{"totals of a month not in the calendar", []string{"lot", "totals", "--month", "2026-13", "--db", "no-such.db"}, 2},
	} {
		t.Run(c.name, func(t *testing.T) {
			code, _, errs := cli(t, "", c.args...)
			if code != c.want {
				t.Errorf("exit %d, want %d (%s)", code, c.want, errs)
			}
		})
	}
}

// A manifest written the way a bench writes it (Volts, Config, Qty, weight in kg in the header)
// gives the lot its cells and its black mass, and the JSON lists each label's resolution.
func TestBenchManifest(t *testing.T) {
	code, out, errs := cli(t, "", "estimate", "--json", "--samples", "200", filepath.Join("..", "..", "testdata", "intake", "volts-config.csv"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Lot    struct{ Cells int }
		Labels []struct {
			Label, ResolvedAs, Kind string
			Lines                   int
			EnergyShare             float64
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Lot.Cells != 12*40+8*65+4*32 || len(rep.Labels) != 3 || rep.Labels[0].Kind != "catalogued" {
		t.Errorf("cells %d labels %+v", rep.Lot.Cells, rep.Labels)
	}
}

// Plan files: a BOM is skipped; a duplicated key, an out-of-range value and an over-long line
// are refused naming the file and line.
func TestPlanFileErrors(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ name, body, want string }{
		{"bom", "\ufeffroute = hydrochloric\n", ""},
		{"duplicate", "pulp-density = 100\npulp-density = 150\n", "plan:2: pulp-density given twice"},
		{"range", "acid-molarity = 1e300\n", "plan:1: acid-molarity"},
		{"zero strength", "acid-strength = 0\n", "plan:1: acid-strength"},
		{"nan", "free-acid = NaN\n", "plan:1: free-acid"},
		{"long line", "# " + strings.Repeat("x", 70000) + "\n", "plan:1"},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := filepath.Join(dir, "plan")
			if err := os.WriteFile(p, []byte(c.body), 0o644); err != nil {
				t.Fatal(err)
			}
			code, _, errs := cli(t, "", "demo", "--samples", "20", "--plan", p)
			if c.want == "" {
				if code != 0 {
					t.Errorf("exit %d: %s", code, errs)
				}
				return
			}
			if code == 0 || !strings.Contains(errs, c.want) {
				t.Errorf("exit %d, %q, want %q", code, errs, c.want)
			}
		})
	}
}

// Leach settings that contradict each other are refused (usage, exit 2) naming both; a bench's
// own extractions are taken from --extraction or a plan file.
func TestLeachFlagConflictsAndExtraction(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"hcl with peroxide", []string{"--route", "hydrochloric", "--h2o2-vol-pct", "5"}, "--route hydrochloric and --h2o2-vol-pct disagree"},
		{"recipe and excess", []string{"--acid-molarity", "2", "--acid-excess", "1.2"}, "--acid-molarity and --acid-excess disagree"},
		{"density and volume", []string{"--pulp-density", "150", "--liquor-volume", "2000"}, "--pulp-density and --liquor-volume disagree"},
		{"bad extraction", []string{"--extraction", "Co=1.5"}, "extraction lies"},
		{"not a metal", []string{"--extraction", "CO=0.9"}, "not a metal"},
	} {
		t.Run(c.name, func(t *testing.T) {
			code, _, errs := cli(t, "", append([]string{"demo", "--samples", "20"}, c.args...)...)
			if code == 0 || !strings.Contains(errs, c.want) {
				t.Errorf("exit %d, %q, want %q", code, errs, c.want)
			}
		})
	}
	code, out, errs := cli(t, "", "demo", "--samples", "20", "--json", "--extraction", "Co=0.5,Ni=50%")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Leach struct {
			Liquor struct {
				ExtractionReached map[string]struct{ P50 float64 } `json:"extraction_reached"`
			}
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	for _, el := range []string{"Co", "Ni"} {
		if x := rep.Leach.Liquor.ExtractionReached[el].P50; x > 0.5+1e-9 || x < 0.45 {
			t.Errorf("%s extraction reached %v with --extraction %s=0.5", el, x, el)
		}
	}
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.plan")
	if err := os.WriteFile(plan, []byte("extraction = Co=0.6\nreductant = SO2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs = cli(t, "", "demo", "--samples", "20", "--plan", plan)
	if code != 0 || !strings.Contains(out, "SO2") {
		t.Errorf("plan with extraction and reductant: exit %d %s", code, errs)
	}
}

// The lot workflow of the README on the demo lot: the register is created on first use; add,
// assay, weigh, list, show, export and totals agree with the report; removal needs confirming.
func TestLotWorkflow(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "sub", "register.db")
	demo := filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv")
	step := func(stdin string, args ...string) string {
		t.Helper()
		code, out, errs := cli(t, stdin, append(args, "--db", db)...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		return out
	}
	step("", "lot", "add", demo, "--lot", "KR-2611", "--supplier", "Larkfield Municipal Drop-off Yard", "--received", "2026-11-28", "--samples", "200")
	if code, _, errs := cli(t, "", "lot", "add", demo, "--lot", "KR-2611", "--samples", "200", "--db", db); code != 1 || !strings.Contains(errs, "--replace") {
		t.Errorf("added twice: exit %d %s", code, errs)
	}
	step("", "lot", "assay", "KR-2611", filepath.Join("..", "..", "testdata", "assay-KR-2611.csv"), "--lab", "Tarn Valley Assay Lab", "--date", "2026-12-01")
	step("", "lot", "weigh", "KR-2611", "--mass", "212 kg", "--date", "2026-12-01")
	out := step("", "lot", "list", "--json")
	var lots []struct {
		ID          string             `json:"lot_id"`
		BlackMassKg float64            `json:"black_mass_kg_p50"`
		MetalsKg    map[string]float64 `json:"metals_kg_p50"`
		WeighedKg   float64            `json:"weighed_kg"`
		Assays      int                `json:"assays"`
	}
	if err := json.Unmarshal([]byte(out), &lots); err != nil {
		t.Fatal(err)
	}
	_, rep, _ := cli(t, "", "demo", "--samples", "200", "--json")
	var r struct {
		BlackMass struct{ P50 float64 } `json:"black_mass_kg"`
		Elements  map[string]struct {
			Kg struct{ P50 float64 }
		}
	}
	if err := json.Unmarshal([]byte(rep), &r); err != nil {
		t.Fatal(err)
	}
	if len(lots) != 1 || lots[0].BlackMassKg != r.BlackMass.P50 || lots[0].MetalsKg["Co"] != r.Elements["Co"].Kg.P50 || lots[0].WeighedKg != 212 || lots[0].Assays != 1 {
		t.Errorf("list %+v vs report black mass %v Co %v", lots, r.BlackMass.P50, r.Elements["Co"].Kg.P50)
	}
	if show := step("", "lot", "show", "KR-2611"); !strings.Contains(show, "Tarn Valley Assay Lab") || !strings.Contains(show, "212") {
		t.Errorf("show: %s", show)
	}
	csvPath := filepath.Join(dir, "lots.csv")
	step("", "lot", "export", "--csv", csvPath)
	b, _ := os.ReadFile(csvPath)
	if !strings.Contains(string(b), "KR-2611") || strings.Count(string(b), "\n") != 2 {
		t.Errorf("export: %s", b)
	}
	if code, _, _ := cli(t, "", "lot", "export", "--csv", csvPath, "--db", db); code == 0 {
		t.Error("export overwrote a file without --force")
	}
	if tot := step("", "lot", "totals", "--month", "2026-11"); !strings.Contains(tot, "LFP") || !strings.Contains(tot, "Larkfield") {
		t.Errorf("totals: %s", tot)
	}
	if code, _, _ := cli(t, "no\n", "lot", "remove", "KR-2611", "--db", db); code == 0 {
		t.Error("removed without confirmation")
	}
	step("KR-2611\n", "lot", "remove", "KR-2611")
	if out := step("", "lot", "list"); !strings.Contains(out, "no lots") {
		t.Errorf("after removal: %s", out)
	}
	foreign := filepath.Join(dir, "foreign.db")
	_ = os.WriteFile(foreign, []byte("not a database, a shopping list\n"), 0o644)
	if code, _, errs := cli(t, "", "lot", "list", "--db", foreign); code != 1 || !strings.Contains(errs, "not a blackmass register") {
		t.Errorf("foreign --db: exit %d %s", code, errs)
	}
}

// BenchmarkTextReportMemory: the text report keeps no per-line detail, so it costs what
// --no-lines costs (compare B/op of the two; JSON keeps the lines and costs more).
func BenchmarkTextReportMemory(b *testing.B) {
	var m strings.Builder
	m.WriteString("id,chemistry,format,capacity,cells_per_pack,count,mass\n")
	for i := range 100_000 {
		fmt.Fprintf(&m, "L%d,NMC811,cylindrical,4.8 Ah,,7,69 g\n", i)
	}
	in := m.String()
	for _, c := range []struct {
		name string
		set  func(o *estimateOptions)
	}{{"text", func(*estimateOptions) {}}, {"no-lines", func(o *estimateOptions) { o.noLines = true }}, {"json", func(o *estimateOptions) { o.asJSON = true }}} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				o := &estimateOptions{}
				o.bind(&cobra.Command{}) // the flags' defaults
				o.samples = 1000
				c.set(o)
				t, ro, err := o.runOptions()
				if err != nil {
					b.Fatal(err)
				}
				if _, err := run.Estimate(t, ro, run.Manifest{Name: "m.csv", R: strings.NewReader(in)}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// Each command names itself; a 200 g bench sample and a 20 t lot both print in units that read
// (g and mL for the one, t and m³ for the other); --quiet prints the summary only.
func TestScreensScale(t *testing.T) {
	assay := filepath.Join("..", "..", "testdata", "assay-KR-2611.csv")
	for _, c := range []struct {
		mass      string
		want, not []string
	}{
		{"200 g", []string{"black mass: 200 g", "mL", "Co 19."}, []string{"0.2 kg", "0.000"}},
		{"20t", []string{"black mass: 20.0 t", "m³", " t ("}, []string{"20000 kg"}},
	} {
		t.Run(c.mass, func(t *testing.T) {
			code, out, errs := cli(t, "", "quote", assay, "--mass", c.mass, "--samples", "100", "--quiet")
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			if !strings.HasPrefix(out, "blackmass quote") || strings.Contains(out, "\ndetail") {
				t.Errorf("header or quiet wrong:\n%s", out)
			}
			// The summary alone still carries the safety cautions, not only the pointer to local codes.
			if !strings.Contains(out, "Charged cells") || !strings.Contains(out, "Cobalt and nickel compounds") {
				t.Errorf("--quiet without the safety cautions:\n%s", out)
			}
			for _, s := range c.want {
				if !strings.Contains(out, s) {
					t.Errorf("missing %q in:\n%s", s, out)
				}
			}
			for _, s := range c.not {
				if strings.Contains(out, s) {
					t.Errorf("unexpected %q in:\n%s", s, out)
				}
			}
		})
	}
	_, out, _ := cli(t, "", "reconcile", filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv"), assay, "--samples", "50")
	if !strings.HasPrefix(out, "blackmass reconcile") {
		t.Errorf("reconcile header: %.40q", out)
	}
}

// chem --list names every catalogued chemistry and the family labels; a generic label prints
// one line per possible member instead of every member's whole profile.
func TestChemListAndCompact(t *testing.T) {
	code, out, errs := cli(t, "", "chem", "--list")
	if code != 0 || !strings.Contains(out, "NMC811") || !strings.Contains(out, "LiPo") || !strings.Contains(out, "laptop") {
		t.Fatalf("exit %d %s\n%s", code, errs, out)
	}
	_, out, _ = cli(t, "", "chem", "Li-ion")
	if n := strings.Count(out, "\n"); n > 20 || !strings.Contains(out, "LFP") {
		t.Errorf("chem Li-ion: %d lines\n%s", n, out)
	}
	if code, _, _ := cli(t, "", "chem", "--list", "LCO"); code != 2 {
		t.Errorf("--list with a label: exit %d, want 2", code)
	}
}

// The order sheet lists every reagent, priced or not, in the containers named, to its P90.
func TestOrderSheet(t *testing.T) {
	code, out, errs := cli(t, "", "demo", "--samples", "100", "--json", "--acid-price", "0.25", "--containers", "20 L jerrycan, 1000 L IBC")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Order struct {
			Currency string
			Reagents []struct {
				Reagent    string
				Kg         struct{ P90 float64 }
				Litres     *struct{ P90 float64 }
				Containers []struct {
					Container string
					Count     int
				}
				CostP90 *float64 `json:"cost_p90"`
			}
			Unpriced []string
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	o := rep.Order
	if len(o.Reagents) != 2 || o.Currency != "EUR" || len(o.Unpriced) != 1 || o.Reagents[0].CostP90 == nil || o.Reagents[1].CostP90 != nil {
		t.Fatalf("order %+v", o)
	}
	acid := o.Reagents[0]
	if c := acid.Containers[0]; c.Container != "20 L jerrycan" || float64(c.Count) < acid.Litres.P90/20 || float64(c.Count-1) >= acid.Litres.P90/20 {
		t.Errorf("containers %+v for %v L", acid.Containers, acid.Litres.P90)
	}
	if code, _, errs := cli(t, "", "demo", "--samples", "20", "--currency", "USD"); code != 2 || !strings.Contains(errs, "disagree") {
		t.Errorf("currency clash with the prices file: exit %d %s", code, errs)
	}
	if code, _, _ := cli(t, "", "demo", "--samples", "20", "--containers", "big barrel"); code == 0 {
		t.Error("bad container accepted")
	}
	// Bench sizes in mL; the text names the one container to buy, not every size.
	code, out, errs = cli(t, "", "demo", "--samples", "50", "--containers", "500 mL bottle, 25 L can, 200 L drum")
	if code != 0 {
		t.Fatalf("mL container: exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "1 × 200 L drum") || strings.Contains(out, "L can or") {
		t.Errorf("order text names more or less than one container:\n%s", out)
	}
}

// Help groups the flags (input, model, leach, costs, output) and every command has examples.
func TestHelpGroupsAndExamples(t *testing.T) {
	_, out, _ := cli(t, "", "estimate", "--help")
	last := -1
	for _, h := range []string{"Examples:", "Input:", "Model:", "Leach:", "Costs and value:", "Output:"} {
		i := strings.Index(out, h)
		if i < 0 || i < last {
			t.Errorf("help: %q missing or out of order", h)
		}
		last = i
	}
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		if c.Runnable() && c.Example == "" && c.Name() != "help" && c.Name() != "completion" && c.Parent() != nil && c.Parent().Name() != "completion" {
			t.Errorf("%s has no example", c.CommandPath())
		}
		for _, s := range c.Commands() {
			walk(s)
		}
	}
	walk(newRootCmd())
}

// failingWriter fails every write, as a full disk or a closed pipe does.
type failingWriter struct{}

func (failingWriter) Write([]byte) (int, error) { return 0, errors.New("no space left on device") }

// Output lost to a full disk fails the command (exit 1), whatever the command writes.
func TestWriteErrorIsAnError(t *testing.T) {
	t.Parallel()
	for _, args := range [][]string{{"demo", "--samples", "50"}, {"demo", "--samples", "50", "-q"}, {"chem", "--list"},
		{"infer", filepath.Join("..", "..", "testdata", "assay-KR-2611.csv"), "--bootstrap", "20"}} {
		var errs strings.Builder
		if code := Main(args, strings.NewReader(""), failingWriter{}, &errs); code != 1 || !strings.Contains(errs.String(), "no space") {
			t.Errorf("%v to a failing writer: exit %d, %q", args, code, errs.String())
		}
	}
}

// No control character reaches the terminal, whatever text carries it: a currency holding an
// escape sequence that would clear the screen is printed without its escape.
func TestControlCharactersStripped(t *testing.T) {
	t.Parallel()
	m := filepath.Join("..", "..", "testdata", "intake", "units.csv")
	code, out, errs := cli(t, "", "estimate", m, "--samples", "50", "--acid-price", "1", "--currency", "\x1b[2J\u009bEUR")
	if code != 0 || !strings.Contains(out, "[2JEUR") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if strings.ContainsAny(out+errs, "\x1b\u009b") {
		t.Error("a control character reached the terminal")
	}
}

// lot add prints the estimate's summary with its warnings, not only the recorded line.
func TestLotAddShowsWarnings(t *testing.T) {
	t.Parallel()
	db := filepath.Join(t.TempDir(), "r.db")
	demo := filepath.Join("..", "..", "data", "demo", "lot-KR-2611.csv")
	code, out, errs := cli(t, "", "lot", "add", demo, "--lot", "KR-7001", "--db", db, "--samples", "100")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"recorded (version 1)", "warnings:", "outside the plausible", "safety:"} {
		if !strings.Contains(out, want) {
			t.Errorf("lot add output lacks %q", want)
		}
	}
}

// A recovery flag the liquor cannot take names the stage it set.
func TestRecoveryFlagRefusedNamesStage(t *testing.T) {
	code, _, errs := cli(t, "", "demo", "--samples", "50", "--route", "hydrochloric", "--co-product", "sulfate")
	if code != 2 || !strings.Contains(errs, "cobalt") {
		t.Errorf("exit %d: %s", code, errs)
	}
}

// A quote weighed with no moisture says the mass is taken as dry, not that it was wet.
func TestQuoteWeighedDryNotWet(t *testing.T) {
	assay := filepath.Join("..", "..", "testdata", "assay-KR-2611.csv")
	code, out, errs := cli(t, "", "quote", assay, "--mass", "212 kg", "--samples", "50", "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if strings.Contains(out, "212 kg wet") {
		t.Errorf("a weighing with no moisture printed as wet:\n%s", out)
	}
	if !strings.Contains(out, "weighed 212 kg") {
		t.Errorf("no weighed line:\n%s", out)
	}
}
