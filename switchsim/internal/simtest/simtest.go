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

// Diff compares two netlists through their exported accessors and lists
// what differs. With
// deck set, device names may carry the card format's leading letter and
// only the technology keys a deck carries are compared.
func Diff(a, b *sw.Netlist, deck bool) []string {
	var diff []string
	bad := func(f string, args ...any) { diff = append(diff, fmt.Sprintf(f, args...)) }
	if a.NumNodes() != b.NumNodes() || a.NumDevices() != b.NumDevices() {
		bad("%d nodes %d devices, then %d nodes %d devices", a.NumNodes(), a.NumDevices(), b.NumNodes(), b.NumDevices())
		return diff
	}
	nodeIn := func(n int) int {
		m, ok := b.Lookup(a.NodeName(n))
		if !ok {
			bad("node %s is missing", a.NodeName(n))
			return -1
		}
		return m
	}
	for n := 0; n < a.NumNodes(); n++ {
		m := nodeIn(n)
		if m < 0 {
			continue
		}
		if a.NodeKind(n) != b.NodeKind(m) || a.NodeCap(n) != b.NodeCap(m) || a.NodeCharge(n) != b.NodeCharge(m) {
			bad("node %s: kind %v cap %g charge %s, then %v %g %s", a.NodeName(n), a.NodeKind(n), a.NodeCap(n), a.NodeCharge(n), b.NodeKind(m), b.NodeCap(m), b.NodeCharge(m))
		}
		if !deck && a.DisplayName(n) != b.DisplayName(m) {
			bad("node %s shown as %q, then %q", a.NodeName(n), a.DisplayName(n), b.DisplayName(m))
		}
	}
	list := func(nl *sw.Netlist, ns []int) string {
		var s []string
		for _, n := range ns {
			s = append(s, nl.NodeName(n))
		}
		return strings.Join(s, " ")
	}
	if list(a, a.Inputs()) != list(b, b.Inputs()) || list(a, a.Outputs()) != list(b, b.Outputs()) {
		bad("inputs %q outputs %q, then %q %q", list(a, a.Inputs()), list(a, a.Outputs()), list(b, b.Inputs()), list(b, b.Outputs()))
	}
	for d := 0; d < a.NumDevices(); d++ {
		x := a.Device(d)
		e, ok := b.LookupDevice(x.Name)
		if !ok && deck {
			// The deck spells a device as it was shown, with the card
			// format's M in front where it has none.
			for _, n := range []string{"m" + x.Name, a.DeviceDisplayName(d), "m" + a.DeviceDisplayName(d)} {
				if e, ok = b.LookupDevice(n); ok {
					break
				}
			}
		}
		if !ok {
			bad("device %s is missing", x.Name)
			continue
		}
		y := b.Device(e)
		term := func(nl *sw.Netlist, n int) string {
			if n < 0 {
				return "-"
			}
			return nl.NodeName(n)
		}
		ends := func(nl *sw.Netlist, v sw.Device) string {
			p, q := term(nl, v.A), term(nl, v.B)
			if p > q {
				p, q = q, p // channels are symmetric
			}
			return term(nl, v.Gate) + " " + p + " " + q
		}
		if x.Kind != y.Kind || ends(a, x) != ends(b, y) || x.W != y.W || x.L != y.L || x.Strength != y.Strength || x.Resistive != y.Resistive || x.Ohms != y.Ohms {
			bad("device %s: %s %s w=%g l=%g %s %v %g, then %s %s w=%g l=%g %s %v %g", x.Name, x.Kind, ends(a, x), x.W, x.L, x.Strength, x.Resistive, x.Ohms,
				y.Kind, ends(b, y), y.W, y.L, y.Strength, y.Resistive, y.Ohms)
		}
		if !deck && a.DeviceDisplayName(d) != b.DeviceDisplayName(e) {
			bad("device %s shown as %q, then %q", x.Name, a.DeviceDisplayName(d), b.DeviceDisplayName(e))
		}
	}
	keys := sw.TechKeys()
	if deck {
		keys = []string{"vdd", "vtn", "vtp", "kn", "kp", "gamma", "phi"}
	}
	for _, k := range keys {
		va, _ := a.Tech.Get(k)
		vb, _ := b.Tech.Get(k)
		if va != vb {
			bad("tech %s %g, then %g", k, va, vb)
		}
	}
	if !deck && a.Name != b.Name {
		bad("name %s, then %s", a.Name, b.Name)
	}
	return diff
}
