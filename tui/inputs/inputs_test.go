package inputs

import (
	"fmt"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func bank(s *session.Session, w, h int) Model {
	nl := s.Netlist()
	m := New(nl.Inputs(), paneltest.Names(s), DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	sync(&m, s)
	m.Focus()
	return m
}

// sync copies the drives and states as the root model does.
func sync(m *Model, s *session.Session) {
	ins := s.Netlist().Inputs()
	drives := make([]switchsim.Drive, len(ins))
	for i, n := range ins {
		drives[i] = s.InputDrive(n)
	}
	m.SetStates(drives, paneltest.States(s), nil)
}

func press(m Model, keys ...string) (Model, []any) {
	var intents []any
	for _, k := range keys {
		var c tea.Cmd
		m, c = m.Update(paneltest.Key(k))
		if msg := paneltest.Intent(c); msg != nil {
			intents = append(intents, msg)
		}
	}
	return m, intents
}

// Each key of the bank is an intent for the root, naming the input under
// the cursor; the bank itself changes nothing.
func TestKeysSendIntents(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	nl := s.Netlist()
	sel, a := paneltest.Node(t, nl, "sel"), paneltest.Node(t, nl, "a")
	m := bank(s, 40, 6)
	cases := []struct {
		keys []string
		want any
	}{
		{[]string{"space"}, panel.SetInput{Node: sel, Toggle: true}},
		{[]string{"enter"}, panel.SetInput{Node: sel, Toggle: true}},
		{[]string{"down", "1"}, panel.SetInput{Node: a, Drive: switchsim.Drive1}},
		{[]string{"0"}, panel.SetInput{Node: a, Drive: switchsim.Drive0}},
		{[]string{"x"}, panel.SetInput{Node: a, Drive: switchsim.DriveX}},
		{[]string{"z"}, panel.SetInput{Node: a, Drive: switchsim.DriveZ}},
		{[]string{"m"}, panel.Watch{Node: a}},
	}
	for _, c := range cases {
		var got []any
		m, got = press(m, c.keys...)
		if len(got) != 1 || got[0] != c.want {
			t.Errorf("keys %v: intents %v, want %v", c.keys, got, c.want)
		}
	}
	if _, got := press(m, "down", "down", "down"); len(got) != 0 || m.Selected() != a {
		t.Errorf("moving sends %v", got)
	}
}

// / filters the bank by name; the keys then act on the matches, esc clears.
func TestFilter(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	b := paneltest.Node(t, s.Netlist(), "b")
	m := bank(s, 40, 6)
	m, _ = press(m, "/", "b")
	if !m.Filtering() || m.Shown() != 1 || m.Selected() != b {
		t.Fatalf("filter b: typing %v, %d shown, selected %d; want true, 1, b", m.Filtering(), m.Shown(), m.Selected())
	}
	m, _ = press(m, "enter")
	if m.Filtering() || !strings.Contains(m.View(), "1 of 3  /b") {
		t.Fatalf("enter keeps the filter and says so:\n%s", m.View())
	}
	_, got := press(m, "space")
	if len(got) != 1 || got[0] != (panel.SetInput{Node: b, Toggle: true}) {
		t.Errorf("space on the filtered bank: %v", got)
	}
	m, _ = press(m, "/", "q")
	if m.Shown() != 0 || m.Selected() != -1 {
		t.Fatalf("filter bq: %d shown", m.Shown())
	}
	m, _ = press(m, "enter")
	if _, got := press(m, "space"); len(got) != 1 || !strings.Contains(got[0].(panel.Note).Text, "no input matches") {
		t.Errorf("space with nothing matching: %v, want a note", got)
	}
	if !m.ClearFilter() || m.Shown() != 3 {
		t.Errorf("ClearFilter: %d shown", m.Shown())
	}
}

// A design without inputs says so, and its keys say why they do nothing.
func TestNoInputs(t *testing.T) {
	for _, nl := range []*switchsim.Netlist{paneltest.Empty(t), paneltest.OneNode(t)} {
		s := paneltest.Session(nl, switchsim.Ideal)
		m := bank(s, 40, 6)
		if !strings.Contains(m.View(), "this design has no inputs") || m.Selected() != -1 {
			t.Errorf("%d nodes: no notice of no inputs:\n%s", nl.NumNodes(), m.View())
		}
		_, got := press(m, "space")
		if len(got) != 1 || !strings.Contains(got[0].(panel.Note).Text, "no inputs") {
			t.Errorf("space without inputs: %v", got)
		}
	}
}

// A released input shows its floating state and the value it holds.
func TestReleasedInput(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	a, sel := paneltest.Node(t, s.Netlist(), "a"), paneltest.Node(t, s.Netlist(), "sel")
	// sel=1 turns a's gate off: released, a is a node on its own
	if _, err := s.SetInput(sel, switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	if _, err := s.SetInput(a, switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	if _, err := s.SetInput(a, switchsim.DriveZ); err != nil {
		t.Fatal(err)
	}
	m := bank(s, 60, 6)
	// a floating node keeps its value as charge (IEEE 1364-2005 §7.14)
	if l := line(m.View(), " a "); !strings.Contains(l, "= z  ") || !strings.Contains(l, "floats, holds 1") {
		t.Errorf("released a: %q", l)
	}
}

// 4,000 nodes: the window scrolls to the last input and keeps its height.
func TestManyInputs(t *testing.T) {
	nl := paneltest.Big(t, 4000)
	s := paneltest.Session(nl, switchsim.Ideal)
	m := bank(s, 40, 10)
	m, _ = press(m, "end")
	ins := nl.Inputs()
	if m.Selected() != ins[len(ins)-1] {
		t.Fatalf("end selects %d, want the last input %d", m.Selected(), ins[len(ins)-1])
	}
	v := m.View()
	if n := len(strings.Split(v, "\n")); n != 10 {
		t.Errorf("view has %d lines, want 10", n)
	}
	lines := strings.Split(v, "\n")
	if last := lines[len(lines)-1]; !strings.HasPrefix(last, "▸") || !strings.Contains(last, nl.NodeName(ins[len(ins)-1])) {
		t.Errorf("the cursor row is not the last input:\n%s", v)
	}
}

func line(v, with string) string {
	for _, l := range strings.Split(v, "\n") {
		if strings.Contains(l, with) {
			return l
		}
	}
	return ""
}

// Goldens at 80x24 and 120x40, checked by hand: the title with the focus
// mark and the count (3), one row per input in the file's order sel a b,
// the cursor on sel, the drives sel=0 a=1 and b released (z) showing its
// state letter Z and the value it holds (x: never driven before).
func TestGolden(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	nl := s.Netlist()
	for _, in := range []struct {
		n string
		d switchsim.Drive
	}{{"sel", switchsim.Drive0}, {"a", switchsim.Drive1}, {"b", switchsim.DriveZ}} {
		if _, err := s.SetInput(paneltest.Node(t, nl, in.n), in.d); err != nil {
			t.Fatal(err)
		}
	}
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			m := bank(s, sz[0], sz[1])
			golden.RequireEqual(t, []byte(m.View()))
		})
	}
}
