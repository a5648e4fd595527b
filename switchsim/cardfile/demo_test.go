package cardfile_test

import (
	"railyard/designs"
	"railyard/switchsim/internal/simtest"
	"testing"

	"railyard/switchsim/cardfile"
	"railyard/switchsim/steps"
)

// The embedded netlist demo (designs.FS) reads and its steps pass in both modes (the
// checks were worked out by hand from the circuit: common practice), with
// nothing skipped and the technology from its models.
func TestDemoOpselLatch(t *testing.T) {
	src, err := designs.FS.ReadFile("opsel_latch.sp")
	if err != nil {
		t.Fatal(err)
	}
	stSrc, err := designs.FS.ReadFile("opsel_latch.steps")
	if err != nil {
		t.Fatal(err)
	}
	d, err := cardfile.Read("demo:opsel_latch", src, cardfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	st, err := steps.Read("demo:opsel_latch.steps", stSrc, d.Netlist)
	if err != nil {
		t.Fatal(err)
	}
	if d.Netlist.NumDevices() != 16 || d.Desc == "" {
		t.Errorf("%d devices, description %q", d.Netlist.NumDevices(), d.Desc)
	}
	for _, mode := range modes {
		for _, f := range simtest.RunSteps(d.Netlist, st, mode, false) {
			t.Errorf("%s: %s", mode, f)
		}
	}
	for _, n := range d.Notes {
		if len(n.Msg) > 8 && n.Msg[:8] == "skipped:" {
			t.Errorf("the demo skips something: %v", n)
		}
	}
}
