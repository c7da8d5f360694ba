package calibrate

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// oneCellLots is lots of one family and format, with no estimate spread (so the noise is the
// assay's alone and the fit is the textbook one).
func oneCellLots(mu, y, sd []float64) []Lot {
	var lots []Lot
	for i := range mu {
		lots = append(lots, Lot{ID: string(rune('A' + i)), Measures: []Measure{{Element: "Co", MeasuredKg: y[i], MeasuredSDKg: sd[i],
			Parts: []Part{{Family: "LCO", Format: "pouch", Kg: mu[i]}}}}})
	}
	return lots
}

// One factor, a Gaussian prior and Gaussian noise of known variance: the posterior precision is
// the prior's plus Σ x²/v and the mean the precision-weighted combination (Bishop, Pattern
// Recognition and Machine Learning, 2006, §3.3.1, eqs. 3.50-3.51, from memory; the scalar case
// is Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, §2.5).
func TestConjugateOneFactor(t *testing.T) {
	t.Parallel()
	mu, y, sd := []float64{10, 20, 40}, []float64{8.5, 17, 33}, []float64{0.5, 1, 2}
	opt := DefaultOptions(simTime)
	opt.PriorRelSD = map[string]float64{"Co": 0.1}
	c, _ := fitOrFatal(t, oneCellLots(mu, y, sd), opt)
	prec, num := 1/0.01, 1/0.01
	for i := range mu {
		prec += mu[i] * mu[i] / (sd[i] * sd[i])
		num += mu[i] * y[i] / (sd[i] * sd[i])
	}
	f := c.Elements[0].Factors[0]
	if math.Abs(f.Mean-num/prec) > 1e-12 || math.Abs(f.SD-1/math.Sqrt(prec)) > 1e-12 {
		t.Errorf("factor %.15g ± %.15g, want %.15g ± %.15g", f.Mean, f.SD, num/prec, 1/math.Sqrt(prec))
	}
}

// The closed-form leave-one-out prediction equals a refit without the lot (same noise variances).
func TestLeaveOneOutIsRefit(t *testing.T) {
	t.Parallel()
	sim := simLots(41, 25, "S")
	s := newFitState(lotsOf(sim), DefaultOptions(simTime))
	f, err := fitElement("Co", s.byEl["Co"], s.opt)
	if err != nil {
		t.Fatal(err)
	}
	for _, i := range []int{0, 3, len(f.obs) - 1} {
		g := &elementFit{element: f.element, cells: f.cells, priorSD: f.priorSD}
		for j := range f.obs {
			if j != i {
				g.obs, g.rows, g.v = append(g.obs, f.obs[j]), append(g.rows, f.rows[j]), append(g.v, f.v[j])
			}
		}
		if err := g.posterior(); err != nil {
			t.Fatal(err)
		}
		mean := dot(f.rows[i], g.mean)
		sd := math.Sqrt(quad(f.rows[i], g.cov) + f.v[i])
		if p := f.loo[i]; math.Abs(p.mean-mean) > 1e-9*mean || math.Abs(p.sd-sd) > 1e-9*sd {
			t.Errorf("lot %d: closed form %.10g ± %.10g, refit %.10g ± %.10g", i, p.mean, p.sd, mean, sd)
		}
	}
}

// Draws of the factors have the posterior's mean and covariance, the same for the same seed,
// finite for every seed; keys of one factor share it; a key without a factor draws 1.
func TestSamplerMatchesPosterior(t *testing.T) {
	t.Parallel()
	c, _ := fitOrFatal(t, lotsOf(simLots(8, 60, "S")), DefaultOptions(simTime))
	e := c.element("Co")
	keys := []Key{{"Co", e.Factors[0].Family, e.Factors[0].Format}, {"Co", e.Factors[1].Family, e.Factors[1].Format},
		{"Co", e.Factors[0].Family, e.Factors[0].Format}, {"Co", "NAB", "pouch"}, {"Cu", "LCO", "pouch"}}
	s := c.Sampler(keys)
	const n = 200_000
	d := s.Draw(rand.NewPCG(3, 4), n)
	for a := range 2 {
		m := mean(d[a])
		if math.Abs(m-e.Factors[a].Mean) > 4*e.Factors[a].SD/math.Sqrt(n) {
			t.Errorf("factor %d: draw mean %.5f, posterior %.5f", a, m, e.Factors[a].Mean)
		}
		for b := range 2 {
			cov := 0.0
			for i := range n {
				cov += (d[a][i] - e.Factors[a].Mean) * (d[b][i] - e.Factors[b].Mean)
			}
			cov /= n
			if want := e.Covariance[a][b]; math.Abs(cov-want) > 0.02*e.Factors[a].SD*e.Factors[b].SD {
				t.Errorf("cov(%d, %d) %.3g, posterior %.3g", a, b, cov, want)
			}
		}
	}
	if &d[0][0] != &d[2][0] || !s.Calibrated(0) || s.Calibrated(3) || s.Calibrated(4) || d[3][7] != 1 || d[4][9] != 1 {
		t.Error("shared or uncalibrated keys drawn wrong")
	}
	again := s.Draw(rand.NewPCG(3, 4), n)
	if !reflect.DeepEqual(d, again) {
		t.Error("same seed, different draws")
	}
	for seed := range uint64(50) {
		for _, v := range s.Draw(rand.NewPCG(seed, 0), 100)[1] {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Fatalf("seed %d: draw %v", seed, v)
			}
		}
	}
}

// A calibration survives JSON: read back, it checks and draws the same factors; a damaged one
// is refused.
func TestJSONRoundTrip(t *testing.T) {
	t.Parallel()
	c, _ := fitOrFatal(t, lotsOf(simLots(9, 30, "S")), DefaultOptions(simTime))
	b, err := json.Marshal(c)
	if err != nil {
		t.Fatal(err)
	}
	var back Calibration
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if err := back.Check(); err != nil {
		t.Fatal(err)
	}
	keys := []Key{{"Co", "LCO", "pouch"}, {"Li", "LFP", "pack"}}
	if !reflect.DeepEqual(c.Sampler(keys).Draw(rand.NewPCG(1, 1), 50), back.Sampler(keys).Draw(rand.NewPCG(1, 1), 50)) {
		t.Error("draws differ after the round trip")
	}
	spoil := map[string]func(*Calibration){
		"format":     func(c *Calibration) { c.Format = 99 },
		"sd":         func(c *Calibration) { c.Elements[0].Factors[0].SD *= 2 },
		"asymmetric": func(c *Calibration) { c.Elements[0].Covariance[0][1] += 0.1 },
		"negative":   func(c *Calibration) { c.Elements[0].Factors[0].Mean = -1 },
		"indefinite": func(c *Calibration) {
			c.Elements[0].Covariance[0][1] = 2 * c.Elements[0].Factors[0].SD * c.Elements[0].Factors[1].SD
			c.Elements[0].Covariance[1][0] = c.Elements[0].Covariance[0][1]
		},
	}
	for name, f := range spoil {
		var bad Calibration
		_ = json.Unmarshal(b, &bad)
		f(&bad)
		if err := bad.Check(); err == nil {
			t.Errorf("%s: a damaged calibration passed the check", name)
		}
	}
}

// A value below the limit of detection enters as the uniform's moments and is counted; a lot
// where the model expects none of an element and the assay finds some is named.
func TestCensoredAndUnexpected(t *testing.T) {
	t.Parallel()
	lots := lotsOf(simLots(12, 20, "S"))
	co := -1
	for i, m := range lots[0].Measures {
		if m.Element == "Co" {
			co = i
		}
	}
	if co < 0 {
		t.Fatal("lot 1 holds no Co")
	}
	m := &lots[0].Measures[co]
	m.Censored, m.MeasuredKg = true, 1.5*m.MeasuredKg // the truth lies below the limit
	lots[1].Measures = append(lots[1].Measures, Measure{Element: "Cu", MeasuredKg: 2, MeasuredSDKg: 0.1,
		Parts: []Part{{Family: "LFP", Format: "pack", Kg: 0}}})
	_, rep := fitOrFatal(t, lots, DefaultOptions(simTime))
	for _, er := range rep.Elements {
		switch er.Element {
		case "Co":
			if er.Censored != 1 || er.Compared != er.Lots-1 {
				t.Errorf("Co: %d censored, %d compared of %d", er.Censored, er.Compared, er.Lots)
			}
		case "Cu":
			if er.Skipped == "" || len(er.Unexpected) != 1 || er.Unexpected[0].Lot != lots[1].ID {
				t.Errorf("Cu: %+v", er)
			}
		}
	}
}

// Predict gives the calibrated mean: the factor times the part, the part without a factor as
// estimated.
func TestPredict(t *testing.T) {
	t.Parallel()
	opt := DefaultOptions(simTime)
	opt.PriorRelSD = map[string]float64{"Co": 0.1}
	c, _ := fitOrFatal(t, oneCellLots([]float64{10, 20, 40}, []float64{8.5, 17, 33}, []float64{0.5, 1, 2}), opt)
	f := c.Elements[0].Factors[0]
	got, sd := c.Predict(Measure{Element: "Co",
		Parts: []Part{{Family: "LCO", Format: "pack", Kg: 10}, {Family: "NMC622", Format: "pack", Kg: 5}}})
	if math.Abs(got-(10*f.Mean+5)) > 1e-12 || math.Abs(sd-10*f.SD) > 1e-12 {
		t.Errorf("predicted %v ± %v, want %v ± %v", got, sd, 10*f.Mean+5, 10*f.SD)
	}
}

// Most lots disagreeing with the model is an error that says so, not a fit.
func TestMostLotsDisagree(t *testing.T) {
	t.Parallel()
	lots := lotsOf(simLots(13, 10, "S"))
	for i := range 6 {
		for j := range lots[i].Measures {
			lots[i].Measures[j].MeasuredKg *= 10
		}
	}
	_, _, err := Fit(lots, DefaultOptions(simTime))
	if err == nil || !strings.Contains(err.Error(), "units") {
		t.Errorf("six of ten lots at ten times: %v", err)
	}
}
