package main

import (
	"strings"
	"testing"

	"railyard/switchsim"
)

// explore takes --ideal and --full-swing as run does: physical mode unless
// --ideal, the full-swing rule only when asked; --help names both.
func TestExploreModeFlags(t *testing.T) {
	for _, c := range []struct {
		o         exploreOptions
		mode      switchsim.Mode
		fullSwing bool
	}{
		{exploreOptions{}, switchsim.Physical, false},
		{exploreOptions{ideal: true}, switchsim.Ideal, false},
		{exploreOptions{fullSwing: true}, switchsim.Physical, true},
		{exploreOptions{ideal: true, fullSwing: true}, switchsim.Ideal, true},
	} {
		if got := c.o.sessionOptions(); got.Mode != c.mode || got.FullSwing != c.fullSwing {
			t.Errorf("%+v: %s full-swing %v, want %s %v", c.o, got.Mode, got.FullSwing, c.mode, c.fullSwing)
		}
	}
	code, out, _ := call("explore", "--help")
	if code != 0 || !strings.Contains(out, "--ideal") || !strings.Contains(out, "--full-swing") {
		t.Errorf("explore --help (exit %d):\n%s", code, out)
	}
}
