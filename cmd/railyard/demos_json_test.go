package main

import (
	"testing"

	"railyard/designs"
)

// TestDemoJSONGolden pins `run --json` of every demo's steps in both modes.
// It was recorded before the code was reshaped (issue: one shape for the
// code), so a refactoring that changes any of these lines changed
// behaviour; a feature that changes them on purpose rewrites them with
// -update and says so in its commit.
func TestDemoJSONGolden(t *testing.T) {
	for _, e := range designs.List() {
		for _, mode := range []string{"physical", "ideal"} {
			args := []string{"run", "demo:" + e.Name, "--json"}
			if mode == "ideal" {
				args = append(args, "--ideal")
			}
			code, out, errs := call(args...)
			if code == exitUsage {
				t.Fatalf("%v: exit %d: %s", args, code, errs)
			}
			golden(t, "demo_json/"+e.Name+"_"+mode, out)
		}
	}
}
