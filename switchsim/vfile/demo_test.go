package vfile_test

import (
	"os"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/steps"
	"railyard/switchsim/vfile"
)

// The embedded IEEE 1364 demo reads and its steps pass in both modes (the
// checks were worked out by hand: a selector of transmission gates passes
// full levels, common practice).
func TestDemoImmSelect(t *testing.T) {
	src, err := os.ReadFile("../../designs/imm_select.v")
	if err != nil {
		t.Fatal(err)
	}
	stSrc, err := os.ReadFile("../../designs/imm_select.steps")
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
		s := sw.NewSim(d.Netlist, sw.Options{Mode: mode})
		s.Settle()
		for _, row := range st.Rows {
			for i, n := range st.Apply {
				s.SetInput(n, row.Drives[i])
			}
			s.Settle()
			for i, n := range st.Check {
				if got := s.Node(n); !row.Wants[i].Check(got, true) {
					t.Errorf("%s line %d: %s want %s (full swing), got %s (%s)", mode, row.Line, d.Netlist.NodeName(n), row.Wants[i], got.State, row.Label)
				}
			}
		}
	}
}
