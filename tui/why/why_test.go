package why

import (
	"fmt"
	"strings"
	"testing"

	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/internal/paneltest"
)

func inspector(s *session.Session, n int, w, h int, extra []string) Model {
	m := New(s.Netlist(), paneltest.Names(s), DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	if n >= 0 {
		st := paneltest.States(s)
		m.Set(s.Explain(n), st, st[s.Netlist().Power()].Volts, extra)
	}
	return m
}

func keys(m Model, ks ...string) Model {
	for _, k := range ks {
		m, _ = m.Update(paneltest.Key(k))
	}
	return m
}

// Before a node is chosen the view says how to choose one.
func TestNothingInspected(t *testing.T) {
	s := paneltest.Session(paneltest.Empty(t), switchsim.Ideal)
	if m := inspector(s, -1, 60, 10, nil); !strings.Contains(m.View(), "Select a node on the board") || m.Node() != -1 {
		t.Errorf("%s", m.View())
	}
}

// Rails and driven inputs hold what they are given; a node held by a
// weak pull-up names it, always on (IEEE 1364-2005 §7.13: pullup drives
// a 1 at pull strength; railyard's "weak" label).
func TestSourcesAndPulls(t *testing.T) {
	es := paneltest.Session(paneltest.Empty(t), switchsim.Ideal)
	if v := inspector(es, es.Netlist().Power(), 60, 10, nil).View(); !strings.Contains(v, "It is a rail") {
		t.Errorf("rail:\n%s", v)
	}
	os := paneltest.Session(paneltest.OneNode(t), switchsim.Ideal)
	v := inspector(os, paneltest.Node(t, os.Netlist(), "y"), 60, 10, nil).View()
	for _, want := range []string{"y is H", "Set by 1 path:", "vdd (power rail) 1", "up pullup always on"} {
		if !strings.Contains(v, want) {
			t.Errorf("one node: no %q:\n%s", want, v)
		}
	}
	sel := paneltest.Selector(t, switchsim.Ideal)
	a := paneltest.Node(t, sel.Netlist(), "a")
	if _, err := sel.SetInput(a, switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	if v := inspector(sel, a, 80, 10, nil).View(); !strings.Contains(v, "It is an input driven 1 at supply strength") {
		t.Errorf("input:\n%s", v)
	}
}

// Gate volts appear where the gate is not at a full level, and the lost
// fight is worded with both sides (demo:strong_keeper after its second
// step: the keeper's keep.n holds s at an L against the input gate).
func TestFightWithGateVolts(t *testing.T) {
	s := paneltest.Demo(t, "strong_keeper", switchsim.Physical)
	s.Next()
	s.Next()
	nl := s.Netlist()
	v := inspector(s, paneltest.Node(t, nl, "s_b"), 100, 20, nil).View()
	sv := fmt.Sprintf("%.2f", s.Node(paneltest.Node(t, nl, "s")).Volts)
	if !strings.Contains(v, "fwd.p pmos gate s=0 ("+sv+" V)") {
		t.Errorf("s_b: fwd.p's gate s at %s V is not shown:\n%s", sv, v)
	}
	v = inspector(s, paneltest.Node(t, nl, "s"), 100, 20, nil).View()
	for _, want := range []string{"Set by 1 path:", "limited by keep.n", "Opposed by 1 path (they lose):", "pass.n nmos gate clk=1  on"} {
		if !strings.Contains(v, want) {
			t.Errorf("s: no %q:\n%s", want, v)
		}
	}
	if strings.Contains(v, "clk=1 (") {
		t.Errorf("clk is a full 1 and needs no volts:\n%s", v)
	}
}

// A long explanation scrolls and says how much is left; the scroll is kept
// when the same node is explained again, and reset for another node.
func TestScroll(t *testing.T) {
	s := paneltest.Session(paneltest.Big(t, 4000), switchsim.Ideal)
	nl := s.Netlist()
	extra := make([]string, 4000)
	for i := range extra {
		extra[i] = fmt.Sprintf("extra line %d", i)
	}
	n := nl.Outputs()[0]
	m := inspector(s, n, 60, 20, extra)
	if v := m.View(); !strings.Contains(v, "more lines") || len(strings.Split(v, "\n")) != 20 {
		t.Fatalf("a long explanation:\n%s", v)
	}
	m = keys(m, "end")
	if v := m.View(); !strings.Contains(v, "extra line 3999") || strings.Contains(v, "more lines") {
		t.Errorf("end:\n%s", v)
	}
	st := paneltest.States(s)
	m.Set(s.Explain(n), st, st[nl.Power()].Volts, extra)
	if !strings.Contains(m.View(), "extra line 3999") {
		t.Errorf("the same node again lost its scroll")
	}
	m.Set(s.Explain(nl.Outputs()[1]), st, st[nl.Power()].Volts, nil)
	if strings.Contains(m.View(), "extra line") || m.Node() != nl.Outputs()[1] {
		t.Errorf("another node kept the old text or scroll")
	}
	m = keys(m, "home", "pgdown", "up", "down")
	_ = m.View()
}

// Goldens of demo:strong_keeper's storage node s after its second step
// (the keeper wins the write), checked by hand: "s is L: value 0, weak,
// 0.20 V" and what L means; the winning path from gnd through keep.n
// (gate s_b=1, a full level: no volts) limited by keep.n; the losing path
// from the input d through pass.n (gate clk=1) and its other half pass.p
// in parallel; the contested mark; the divider, 12.4 kohm up and 1.56
// kohm down, whose 0.20 V agrees with Ohm's law (1.8 V x 1.56 / (12.4 +
// 1.56) = 0.201 V); every line fits 80 columns unwrapped.
func TestGolden(t *testing.T) {
	s := paneltest.Demo(t, "strong_keeper", switchsim.Physical)
	s.Next()
	s.Next()
	n := paneltest.Node(t, s.Netlist(), "s")
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			golden.RequireEqual(t, []byte(inspector(s, n, sz[0], sz[1], nil).View()))
		})
	}
}

// How a node was decided, when more than the rounds decided it, heads the
// Why view: y pulled down by a wide nMOS against two long pMOS whose gate
// en is X is decided by the vertex solve (every assignment of the pMOS
// leaves it at 0); the input a, which nothing but its drive decides, says
// nothing of it.
func TestHowItWasDecided(t *testing.T) {
	b := switchsim.NewBuilder()
	b.Input("a")
	b.Input("en")
	b.Output("y")
	b.NMOS("pd", "a", "y", "gnd", switchsim.DeviceOpts{W: 2e-6, L: 0.18e-6})
	b.PMOS("pu1", "en", "vdd", "y", switchsim.DeviceOpts{W: 0.36e-6, L: 3.6e-6})
	b.PMOS("pu2", "en", "vdd", "y", switchsim.DeviceOpts{W: 0.36e-6, L: 3.6e-6})
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := paneltest.Session(nl, switchsim.Physical)
	if _, err := s.SetInput(paneltest.Node(t, nl, "a"), switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	v := inspector(s, paneltest.Node(t, nl, "y"), 100, 12, nil).View()
	if want := "How it was decided: decided at every assignment of the 2 devices of unknown state"; !strings.Contains(v, want) {
		t.Errorf("y: no %q:\n%s", want, v)
	}
	if v := inspector(s, paneltest.Node(t, nl, "a"), 100, 12, nil).View(); strings.Contains(v, "How it was decided") {
		t.Errorf("a:\n%s", v)
	}
}
