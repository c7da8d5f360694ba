package intake

import (
	"strings"
	"testing"
)

// TestTrimSpaceIsStrings: the fast path answers as strings.TrimSpace for values made of the bytes
// that decide it (ASCII and Unicode white space at either end, printable ASCII, multi-byte text).
func TestTrimSpaceIsStrings(t *testing.T) {
	parts := []string{"", " ", "\t", "\r", "\u00a0", "\u3000", "\u2003", "a", "7", "Wh", "é", "\x7f", "\xff", "~"}
	for _, a := range parts {
		for _, b := range parts {
			for _, c := range parts {
				s := a + b + c
				if got, want := trimSpace(s), strings.TrimSpace(s); got != want {
					t.Errorf("trimSpace(%q) = %q, want %q", s, got, want)
				}
			}
		}
	}
}
