// Package simtest holds the helpers the readers' tests share to drive a
// compiled netlist: set inputs by name, settle, read nodes by name, and
// run a steps file's rows.
package simtest

import (
	"fmt"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/steps"
)

// Sim is a settled simulator with name-based access for tests.
type Sim struct {
	t  testing.TB
	S  *sw.Sim
	NL *sw.Netlist
}

// New makes a Sim in the given mode and settles it once.
func New(t testing.TB, nl *sw.Netlist, mode sw.Mode) *Sim {
	s := &Sim{t, sw.NewSim(nl, sw.Options{Mode: mode}), nl}
	s.S.Settle()
	return s
}

// Apply sets "name=drive ..." (names in either spelling) and settles.
func (s *Sim) Apply(assign string) {
	s.t.Helper()
	for _, f := range strings.Fields(assign) {
		name, d, _ := strings.Cut(f, "=")
		n, ok := s.NL.Lookup(name)
		dr, ok2 := sw.ParseDrive(d)
		if !ok || !ok2 {
			s.t.Fatalf("bad assignment %q", f)
		}
		if err := s.S.SetInput(n, dr); err != nil {
			s.t.Fatalf("%s: %v", name, err)
		}
	}
	s.S.Settle()
}

// Node returns a node's state by name.
func (s *Sim) Node(name string) sw.NodeState {
	s.t.Helper()
	n, ok := s.NL.Lookup(name)
	if !ok {
		s.t.Fatalf("no node %s", name)
	}
	return s.S.Node(n)
}

// RunSteps settles every row of st on a fresh Sim and returns one line per
// failed check.
func RunSteps(nl *sw.Netlist, st *steps.Steps, mode sw.Mode, fullSwing bool) []string {
	s := sw.NewSim(nl, sw.Options{Mode: mode})
	s.Settle()
	var fails []string
	for _, row := range st.Rows {
		for i, n := range st.Apply {
			s.SetInput(n, row.Drives[i])
		}
		s.Settle()
		for i, n := range st.Check {
			if got := s.Node(n); !row.Wants[i].Check(got, fullSwing) {
				fails = append(fails, fmt.Sprintf("line %d: %s want %s, got %s (%s)", row.Line, nl.NodeName(n), row.Wants[i], got.State, row.Label))
			}
		}
	}
	return fails
}
