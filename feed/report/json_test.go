package report_test

import (
	"bytes"
	"encoding/json"
	"reflect"
	"strings"
	"testing"

	"blackmass/feed/dist"
	"blackmass/feed/lot"
	"blackmass/feed/report"
)

// The streamed JSON holds the same document as encoding/json's own encoding of the report,
// with one manifest line per line of output.
func TestWriteJSONSameDocument(t *testing.T) {
	t.Parallel()
	for _, n := range []int{0, 1, 3} {
		r := &report.Report{Elements: map[string]dist.Amount{"Co": {Kg: dist.Stat{P10: 1, P50: 2, P90: 3}}}}
		for i := range n {
			r.Lines = append(r.Lines, lot.LineResult{Line: i + 2, ID: "L<" + string(rune('a'+i)) + ">",
				ElementsKg: lot.ElementMasses{{Element: "Co", Kg: 0.5}, {Element: "Li", Kg: 0.1}}})
		}
		var got bytes.Buffer
		if err := r.WriteJSON(&got); err != nil {
			t.Fatal(err)
		}
		want, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		var a, b any
		if err := json.Unmarshal(got.Bytes(), &a); err != nil {
			t.Fatalf("%d lines: not JSON: %v\n%s", n, err, got.String())
		}
		if err := json.Unmarshal(want, &b); err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(a, b) {
			t.Errorf("%d lines: documents differ:\n%s\n%s", n, got.String(), want)
		}
		if n > 0 && strings.Count(got.String(), `"id":`) != n {
			t.Errorf("%d lines: want one line object per line:\n%s", n, got.String())
		}
	}
}
