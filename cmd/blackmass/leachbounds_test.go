package main

import (
	"strings"
	"testing"
)

// A leach option has one range: a value outside it is a usage error (exit 2) whether the flag
// or the leach finds it, and a value inside it is accepted by both.
func TestLeachOptionOneRange(t *testing.T) {
	for _, args := range [][]string{
		{"--h2o2-strength", "120"}, {"--h2o2-strength", "80"}, {"--h2o2-strength", "1"},
		{"--acid-excess", "0.1"}, {"--acid-strength", "1"}, {"--route", "hydrochloric", "--acid-strength", "40"},
	} {
		code, _, errs := cli(t, "", append([]string{"demo", "--samples", "20"}, args...)...)
		if code != 2 || !strings.Contains(errs, strings.TrimPrefix(args[len(args)-2], "--")) {
			t.Errorf("%v: exit %d, want 2 naming the option: %s", args, code, errs)
		}
	}
	for _, args := range [][]string{{"--h2o2-strength", "50"}, {"--acid-excess", "1.2"}, {"--acid-strength", "93"}} {
		if code, _, errs := cli(t, "", append([]string{"demo", "--samples", "20"}, args...)...); code != 0 {
			t.Errorf("%v: exit %d: %s", args, code, errs)
		}
	}
}
