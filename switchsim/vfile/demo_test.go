package vfile_test

import (
	"railyard/designs"
	"railyard/switchsim/internal/simtest"
	"testing"

	"railyard/switchsim/steps"
	"railyard/switchsim/vfile"
)

// The embedded IEEE 1364 demo reads and its steps pass in both modes (the
// checks were worked out by hand: a selector of transmission gates passes
// full levels, common practice).
func TestDemoImmSelect(t *testing.T) {
	src, err := designs.FS.ReadFile("imm_select.v")
	if err != nil {
		t.Fatal(err)
	}
	stSrc, err := designs.FS.ReadFile("imm_select.steps")
	if err != nil {
		t.Fatal(err)
	}
	d, err := vfile.Read("demo:imm_select", src, vfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	st, err := steps.Read("demo:imm_select.steps", stSrc, d.Netlist)
	if err != nil {
		t.Fatal(err)
	}
	for _, mode := range modes {
		for _, f := range simtest.RunSteps(d.Netlist, st, mode, true) {
			t.Errorf("%s (full swing): %s", mode, f)
		}
	}
}
