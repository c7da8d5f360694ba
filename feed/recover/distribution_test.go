package recover_test

import (
	"errors"
	"io"
	"strings"
	"testing"

	"blackmass/feed/recover"
)

func opener(files map[string]string) func(string) (io.ReadCloser, error) {
	return func(p string) (io.ReadCloser, error) {
		s, ok := files[p]
		if !ok {
			return nil, errors.New("no such file")
		}
		return io.NopCloser(strings.NewReader(s)), nil
	}
}

// A user's distribution table: D interpolated in log D against pH, the stages from Kremser on the
// table's Co; a table with gaps, or not covering the extraction's pH, is refused by file, line
// and field.
func TestDistributionTable(t *testing.T) {
	t.Parallel()
	table := "metal,ph,d\nCo,1,10\nCo,3,1000\nNi,1,0.01\nNi,3,0.01\n"
	fs, err := recover.ParseFlowsheetWith(strings.NewReader("sx ph=2 oa=1 co-recovery=0.99 table=t.csv\n"), "f.txt",
		opener(map[string]string{"t.csv": table}))
	if err != nil {
		t.Fatal(err)
	}
	r := plan(t, one(1000, map[string]float64{"Co": 10, "Ni": 10, "Li": 1}, 0), fs, 1)
	// D(Co, pH 2) = 100 (halfway in log); E = 100, φ = 0.01 needs ln(1 + 99/0.01)/ln 100 − 1 = 1.0 stage.
	if got := figure(t, r, "sx", "stages"); got != 1 {
		t.Errorf("stages %g, want 1", got)
	}
	if got, want := figure(t, r, "sx", "Co extracted"), 1-recover.KremserRaffinate(100, 1); !near(got, want, 1e-9) {
		t.Errorf("Co extracted %g, want %g", got, want)
	}
	for _, c := range []struct{ table, flow, want string }{
		{"metal,ph,d\nCo,1,10\nNi,1,1\nNi,2,1\n", "sx ph=1.5 table=t.csv", "t.csv:2: ph: Co has one point"},
		{"metal,ph,d\nCo,1,10\nCo,2,20\n", "sx ph=3 table=t.csv", "t.csv:2: ph: Co is measured from pH 1 to 2"},
		{"metal,ph,d\nCo,1,0\n", "sx ph=1 table=t.csv", "t.csv:2: d: \"0\": want a positive ratio"},
		{"metal,ph,d\nCo,1,1\nCo,1,2\n", "sx ph=1 table=t.csv", "t.csv:3: ph: Co at pH 1 twice"},
		{"metal,ph,d\nNi,1,1\nNi,2,2\n", "sx ph=1.5 table=t.csv", "t.csv: metal: no Co points"},
		{"metal,ph,d\nCx,1,1\n", "sx ph=1 table=t.csv", "t.csv:2: metal: \"Cx\""},
		{"metal,pH\nCo,1\n", "sx ph=1 table=t.csv", "t.csv:1: d: missing column"},
		{"", "sx ph=1 table=none.csv", "f.txt:1: table: no such file"},
	} {
		_, err := recover.ParseFlowsheetWith(strings.NewReader(c.flow), "f.txt", opener(map[string]string{"t.csv": c.table}))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q / %q: %v, want %q", c.table, c.flow, err, c.want)
		}
	}
	if _, err := recover.ParseFlowsheet(strings.NewReader("sx table=t.csv\n"), "f.txt"); err == nil {
		t.Error("a table read without an opener")
	}
}
