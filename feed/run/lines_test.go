package run_test

import (
	"fmt"
	"runtime"
	"strings"
	"testing"

	"blackmass/feed/leach"
	"blackmass/feed/run"
)

// A lot of several chunks of kept lines is written the same on 1, 2 and 3 processors, and as
// one reader taking the lines one after the other writes it: the chunks rendered side by side
// go out in the manifest's order.
func TestKeptLinesSameOnAnyProcessors(t *testing.T) {
	demo, tb := demoLot(t)
	var head string
	var rows []string
	for _, l := range strings.Split(strings.TrimSpace(demo), "\n") {
		switch {
		case strings.HasPrefix(l, "#"):
		case head == "":
			head = l
		default:
			rows = append(rows, l)
		}
	}
	var m strings.Builder
	m.WriteString(head + "\n")
	const lines = 3500 // four chunks of kept lines
	for i := range lines {
		row := rows[i%len(rows)]
		fmt.Fprintf(&m, "X%05d%s\n", i, row[strings.IndexByte(row, ','):])
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var first string
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		o := leach.DefaultOptions()
		r, err := run.Estimate(tb, run.Options{Seed: 3, Samples: 500, Leach: &o, UnknownAsPrior: true, KeepLines: true},
			run.Manifest{Name: "many.csv", R: strings.NewReader(m.String())})
		if err != nil {
			t.Fatal(err)
		}
		if r.LineCount() != lines {
			t.Fatalf("%d lines kept, want %d", r.LineCount(), lines)
		}
		var b strings.Builder
		if err := r.WriteJSON(&b); err != nil {
			t.Fatal(err)
		}
		if procs == 1 {
			first = b.String()
			// The lines section is each line's own JSON in order, as one reader makes it.
			var want strings.Builder
			for i, l := range r.EachLine() {
				j, err := l.AppendJSON(nil)
				if err != nil {
					t.Fatal(err)
				}
				want.WriteString("    " + string(j))
				if i < lines-1 {
					want.WriteByte(',')
				}
				want.WriteByte('\n')
			}
			if !strings.Contains(first, "\"lines\": [\n"+want.String()+"  ]\n}") {
				t.Fatal("the lines written side by side differ from the lines read one after the other")
			}
		} else if b.String() != first {
			a, c := strings.Split(first, "\n"), strings.Split(b.String(), "\n")
			for i := range min(len(a), len(c)) {
				if a[i] != c[i] {
					t.Errorf("the report on %d processors differs from the one on 1 at line %d:\n%.300s\n%.300s", procs, i+1, a[i], c[i])
					break
				}
			}
		}
	}
}
