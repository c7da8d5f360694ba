package intake_test

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"blackmass/cathode/cathodetest"
	"blackmass/feed/intake"
	"blackmass/feed/manifest"
)

// TestPipelineSameAnyShape reads every manifest in testdata, good and bad, on one parser with
// batches larger than any file and on three parsers with batches of two rows (so batches hand
// over inside headers' neighbourhoods, totals rows and trailing text): the lines, what is said
// of the reading and the first error must be the same, whichever way the rows were spread.
func TestPipelineSameAnyShape(t *testing.T) {
	var files []string
	for _, dir := range []string{"intake", "bad", "golden", "bench", "recover", "plans"} {
		m, _ := filepath.Glob(filepath.Join("..", "..", "testdata", dir, "*.csv"))
		files = append(files, m...)
	}
	if len(files) < 20 {
		t.Fatalf("found only %d manifests", len(files))
	}
	cat := cathodetest.Catalogue(t)
	read := func(b []byte, name string, opt intake.Options) string {
		var out strings.Builder
		info, err := intake.ReadCSV(bytes.NewReader(b), name, opt, func(l manifest.Line) error {
			ch, other := l.Chemistry, l.NonLithium
			l.Chemistry, l.NonLithium = nil, nil
			fmt.Fprintf(&out, "%+v", l)
			if ch != nil {
				c := *ch
				c.Components = nil
				fmt.Fprintf(&out, " chemistry %+v", c)
				for _, m := range ch.Components {
					fmt.Fprintf(&out, " component %v %+v", m.MassFraction, *m.Entry)
				}
			}
			if other != nil {
				fmt.Fprintf(&out, " other %+v", *other)
			}
			out.WriteByte('\n')
			return nil
		})
		fmt.Fprintf(&out, "info %+v\nerr %v\n", info, err)
		return out.String()
	}
	read1, failed := 0, 0
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for _, unknown := range []bool{false, true} {
			opt := intake.Options{Catalogue: cat, UnknownAsPrior: unknown}
			one := read(b, f, intake.WithShapeForTest(opt, 1, 1<<20))
			many := read(b, f, intake.WithShapeForTest(opt, 3, 2))
			if strings.HasSuffix(one, "err <nil>\n") {
				read1++
			} else {
				failed++
			}
			if one != many {
				t.Errorf("%s (unknown as prior %v): one parser and three disagree:\none:\n%s\nthree:\n%s", f, unknown, one, many)
			}
		}
	}
	if read1 < 10 || failed < 10 {
		t.Errorf("%d readings passed and %d failed; want both kinds, ten or more of each", read1, failed)
	}
	t.Logf("%d manifests: %d readings passed, %d failed, each the same on both spreads", len(files), read1, failed)
}

// TestPipelineStopsEarly: an error from the line handler stops the reading at that line on any
// spread, with the splitter and parsers still ahead of it.
func TestPipelineStopsEarly(t *testing.T) {
	var in strings.Builder
	in.WriteString("id,chemistry,format,capacity,count\n")
	for i := range 5000 {
		fmt.Fprintf(&in, "c%d,NMC622,cylindrical,%d Wh,1\n", i, 10+i%50)
	}
	cat := cathodetest.Catalogue(t)
	for _, shape := range [][2]int{{1, 1}, {2, 3}, {4, 512}} {
		n := 0
		_, err := intake.ReadCSV(strings.NewReader(in.String()), "s.csv",
			intake.WithShapeForTest(intake.Options{Catalogue: cat}, shape[0], shape[1]), func(manifest.Line) error {
				if n++; n == 1234 {
					return fmt.Errorf("enough")
				}
				return nil
			})
		if err == nil || !strings.Contains(err.Error(), "s.csv:1235:") || n != 1234 {
			t.Errorf("shape %v: handler called %d times, err %v; want a stop at line 1235 after 1234 calls", shape, n, err)
		}
	}
}
