package intake_test

import "testing"

// Every line whose description names its application carries it, whether its label needed it
// or not and whether the label was resolved before: a line reads the same wherever it falls.
func TestApplicationFromDescriptionOnEveryLine(t *testing.T) {
	lines, err := readString(t, "id,description,chemistry,format,capacity,count\n"+
		"A,cells from a solar store,LFP,cylindrical,6 Ah,1\n"+
		"B,cells from a solar store,LFP,cylindrical,6 Ah,1\n"+
		"C,laptop packs,LFP,cylindrical,6 Ah,1\n"+
		"D,,LFP,cylindrical,6 Ah,1\n")
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []string{"storage", "storage", "laptop", ""} {
		if lines[i].Application != want {
			t.Errorf("line %s: application %q, want %q", lines[i].ID, lines[i].Application, want)
		}
	}
}
