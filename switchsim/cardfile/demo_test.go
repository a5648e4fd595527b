package cardfile_test

import (
	"os"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/steps"
)

// runSteps settles every row of st and returns the failed checks.
func runSteps(t *testing.T, nl *sw.Netlist, st *steps.Steps, mode sw.Mode) []string {
	t.Helper()
	s := sw.NewSim(nl, sw.Options{Mode: mode})
	s.Settle()
	var fails []string
	for _, row := range st.Rows {
		for i, n := range st.Apply {
			s.SetInput(n, row.Drives[i])
		}
		s.Settle()
		for i, n := range st.Check {
			if got := s.Node(n); !row.Wants[i].Check(got, false) {
				fails = append(fails, sprintf("line %d: %s want %s, got %s (%s)", row.Line, nl.NodeName(n), row.Wants[i], got.State, row.Label))
			}
		}
	}
	return fails
}

// The embedded netlist demo reads and its steps pass in both modes (the
// checks were worked out by hand from the circuit: common practice), with
// nothing skipped and the technology from its models.
func TestDemoOpselLatch(t *testing.T) {
	src, err := os.ReadFile("../../designs/opsel_latch.sp")
	if err != nil {
		t.Fatal(err)
	}
	stSrc, err := os.ReadFile("../../designs/opsel_latch.steps")
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
		for _, f := range runSteps(t, d.Netlist, st, mode) {
			t.Errorf("%s: %s", mode, f)
		}
	}
	for _, n := range d.Notes {
		if len(n.Msg) > 8 && n.Msg[:8] == "skipped:" {
			t.Errorf("the demo skips something: %v", n)
		}
	}
}
