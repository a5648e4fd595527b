package session

import (
	"testing"

	"railyard/switchsim"
)

// Going back past dropped snapshots rebuilds the state by re-simulation:
// every node must equal what it was when that step was first applied.
func TestGoBackPastDroppedSnapshots(t *testing.T) {
	s, err := Open("demo:flipflop", "", Options{Mode: switchsim.Physical, SnapshotBudget: 1})
	if err != nil {
		t.Fatal(err)
	}
	s.RunToEnd(false)
	hist := s.History()
	kept := 0
	for _, sn := range s.snaps {
		if sn != nil {
			kept++
		}
	}
	if kept > 2 {
		t.Fatalf("%d snapshots kept with a budget of one byte, want at most 2", kept)
	}
	want := make([][]switchsim.NodeState, len(hist))
	for i, e := range hist {
		want[i] = e.States
	}
	nn := s.Netlist().NumNodes()
	for i := len(hist) - 2; i >= 0; i-- {
		if !s.GoBack() {
			t.Fatalf("GoBack refused at history %d", i+1)
		}
		for n := 0; n < nn; n++ {
			got, w := s.Sim.Node(n), want[i][n]
			if got.Value != w.Value || got.State != w.State || got.Strength != w.Strength || !sameVolts(got.Volts, w.Volts) {
				t.Fatalf("back to history %d: %s is %+v, was %+v", i, s.Netlist().NodeName(n), got, w)
			}
		}
	}
}

func sameVolts(a, b float64) bool { return a == b || (a != a && b != b) }
