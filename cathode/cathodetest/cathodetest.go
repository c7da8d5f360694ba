// Package cathodetest gives tests the embedded chemistry catalogue, failing the test when it
// does not load.
package cathodetest

import (
	"testing"

	"blackmass/cathode"
)

// Catalogue returns a fresh copy of the embedded catalogue (a test may add to it).
func Catalogue(t testing.TB) *cathode.Catalogue {
	t.Helper()
	cat, err := cathode.DefaultCatalogue()
	if err != nil {
		t.Fatal(err)
	}
	return cat
}
