package recover_test

import (
	"reflect"
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/recover"
)

// FuzzFlowsheet: any flowsheet text is refused with a located error, or plans a liquor to a
// finite, balanced report.
func FuzzFlowsheet(f *testing.F) {
	for _, s := range []string{"impurity\nmanganese\nsx\ncobalt\nnickel\nlithium\neffluent\n",
		"impurity base=CaCO3 ph=5 copper=none\nsx ph=4 oa=0.5 stages=3\ncobalt product=oxalate\n",
		"manganese oxidant=SO2 ph=2\nlithium product=phosphate evaporate=0.9 temperature=0\n",
		"sx ph=7 oa=10\ncobalt product=sulfate\nnickel product=electrowin\n", "effluent temperature=100\n"} {
		f.Add(s)
	}
	tb := tables(f)
	lq := liquor(20, 500, nmcLiquor, 0.4, 0.3, 9)
	f.Fuzz(func(t *testing.T, text string) {
		fs, err := recover.ParseFlowsheet(strings.NewReader(text), "f.txt")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "f.txt") {
				t.Fatalf("error without the file: %v", err)
			}
			return
		}
		r, err := recover.Plan(recover.Input{Liquor: lq, Flowsheet: fs, Tables: tb, Draws: dist.NewDrawer(3, 20)})
		if err != nil {
			return
		}
		if p := nonFinite(reflect.ValueOf(r), "report"); p != "" {
			t.Fatalf("non-finite %s for %q", p, text)
		}
		for el, res := range r.BalanceResidual {
			if !(res < 1e-3) {
				t.Fatalf("%s residual %g for %q", el, res, text)
			}
		}
	})
}
