package run

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"time"

	"blackmass/feed/calibrate"
	"blackmass/feed/report"
)

// DemoLot is one invented lot of a demo register: its manifest, its estimate, and the assay and
// weighing an invented bench made of it. Every name and figure is invented for the demo.
type DemoLot struct {
	ID, Supplier, Received string
	ManifestName           string
	Manifest               []byte
	Report                 *report.Report
	AssayName              string
	Assay                  []byte // an assay file (element, value, unit, uncertainty)
	AssayedOn, WeighedOn   string
	WeighedKg              float64
	// Slip says how the lot's assay was spoiled on purpose (a unit slip), "" for none.
	Slip string
}

// DemoTruth is the invented "true" bench the demo register is drawn from: it differs from the
// model by these factors on what reaches the black mass, for every chemistry and format.
var DemoTruth = map[string]float64{"Co": 0.85, "Li": 0.90, "Cu": 1.30}

// demoAssayRelSD is the invented lab's relative standard uncertainty (3 %).
const demoAssayRelSD = 0.03

// demoLine is an invented manifest line: what a bench's intake might hold.
type demoLine struct{ desc, chem, format, capacity, voltage, cells string }

var demoLines = []demoLine{
	{"phone pouch cells", "LCO", "pouch", "3000 mAh", "3.85", ""},
	{"18650 cells from laptop packs", "NMC622", "cylindrical", "2.6 Ah", "3.6", ""},
	{"tablet pouch cells", "NMC811", "pouch", "20 Wh", "", ""},
	{"26650 cells", "LFP", "cylindrical", "3.0 Ah", "3.2", ""},
	{"power-tool packs", "NMC532", "pack", "90 Wh", "", "5s2p"},
	{"21700 cells", "NCA", "cylindrical", "4.8 Ah", "3.6", ""},
}

// DemoLots draws n invented lots from the demo's "true" bench: each lot mixes one to three of the
// invented lines; its estimate is the model's (with the options given, each lot its own seed);
// its true elements are each group's estimate times DemoTruth's factor, scattered log-normally
// by the estimate's own relative spread (one draw per lot, shared by its groups and elements, as
// the model's parameters are); its weighing is the black mass scattered the same way; its assay is the true
// wt% with the invented lab's noise. The lot at slipAt (1-based; 0 none) reports its cobalt (or,
// without cobalt, the first it holds of Ni, Cu, Mn, Al, Li) ten times too low, a decimal slip the
// calibration must catch.
func DemoLots(t *Tables, o Options, n int, seed uint64, slipAt int) ([]DemoLot, error) {
	r := rand.New(rand.NewPCG(seed, 2611))
	start := time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)
	var out []DemoLot
	for i := range n {
		d := DemoLot{ID: fmt.Sprintf("DM-%03d", i+1), Supplier: "INVENTED demo supplier " + string(rune('A'+i%4))}
		rec := start.AddDate(0, 0, 4*i)
		d.Received, d.WeighedOn, d.AssayedOn = rec.Format(time.DateOnly), rec.AddDate(0, 0, 3).Format(time.DateOnly),
			rec.AddDate(0, 0, 6).Format(time.DateOnly)
		d.ManifestName = "invented-" + d.ID + ".csv"
		d.Manifest = demoManifest(r, d.ID)
		lo := o
		lo.Seed = o.Seed + uint64(i)
		lo.Inputs.LotID, lo.Inputs.Supplier = d.ID, d.Supplier
		rep, err := Estimate(t, lo, Manifest{Name: d.ManifestName, R: bytes.NewReader(d.Manifest)})
		if err != nil {
			return nil, fmt.Errorf("demo lot %s: %w", d.ID, err)
		}
		d.Report = rep
		z := r.NormFloat64()
		// A log-normal scatter of the estimate's own relative spread, mean 1.
		scatter := func(s statLike) float64 {
			rel := calibrate.SDFromP10P90(s.p10, s.p90) / s.p50
			sigma := math.Sqrt(math.Log1p(rel * rel))
			return math.Exp(sigma*z - sigma*sigma/2)
		}
		bm := rep.BlackMassKg
		d.WeighedKg = math.Round(10*bm.P50*scatter(statLike{bm.P10, bm.P50, bm.P90})) / 10
		var b strings.Builder
		fmt.Fprintf(&b, "# INVENTED demo assay of lot %s by an invented lab: drawn from a \"true\" bench "+
			"that differs from the model\n", d.ID)
		b.WriteString("element,value,unit,uncertainty\n")
		slipped := false
		for _, el := range []string{"Co", "Ni", "Cu", "Mn", "Al", "Li"} {
			trueKg := 0.0
			for _, g := range rep.Groups {
				if s, ok := g.ElementsKg[el]; ok && s.P50 > 0 {
					f, ok := DemoTruth[el]
					if !ok {
						f = 1
					}
					trueKg += f * s.P50 * scatter(statLike{s.P10, s.P50, s.P90})
				}
			}
			if trueKg == 0 {
				continue
			}
			wt := 100 * trueKg / d.WeighedKg * (1 + demoAssayRelSD*r.NormFloat64())
			if i+1 == slipAt && !slipped {
				wt /= 10
				slipped = true
				d.Slip = el + " reported ten times too low (a decimal slip)"
			}
			fmt.Fprintf(&b, "%s,%.3g,wt%%,%.2g\n", el, wt, demoAssayRelSD*wt)
		}
		d.AssayName, d.Assay = "invented-assay-"+d.ID+".csv", []byte(b.String())
		out = append(out, d)
	}
	return out, nil
}

type statLike struct{ p10, p50, p90 float64 }

// demoManifest writes an invented manifest of one to three of the demo lines, each with its
// own count.
func demoManifest(r *rand.Rand, id string) []byte {
	var b strings.Builder
	fmt.Fprintf(&b, "# INVENTED demo lot %s: every line and count is invented\n", id)
	b.WriteString("id,description,chemistry,format,capacity,capacity_basis,voltage,cells_per_pack,count,mass,notes\n")
	picks := r.Perm(len(demoLines))[:1+r.IntN(3)]
	slices.Sort(picks)
	for k, p := range picks {
		l := demoLines[p]
		basis := "cell"
		if l.cells != "" {
			basis = "pack"
		}
		fmt.Fprintf(&b, "%s-%02d,%s,%s,%s,%s,%s,%s,%s,%d,,invented\n", id, k+1, l.desc, l.chem, l.format, l.capacity, basis,
			l.voltage, l.cells, 50+r.IntN(20)*25)
	}
	return []byte(b.String())
}
