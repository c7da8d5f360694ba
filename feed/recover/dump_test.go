package recover_test

import (
	"encoding/json"
	"os"
	"testing"

	"blackmass/feed/recover"
)

func TestDump(t *testing.T) {
	if os.Getenv("DUMP") == "" {
		t.Skip()
	}
	r := plan(t, liquor(200, 1000, nmcLiquor, 0.3, 0.5, 3), recover.DefaultFlowsheet(), 200)
	b, _ := json.MarshalIndent(r, "", " ")
	os.WriteFile("/tmp/rec.json", b, 0o644)
}
