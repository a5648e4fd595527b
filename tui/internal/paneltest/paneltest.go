// Package paneltest holds what the explorer's panel tests share: the
// designs they draw (an empty one, one node, the selector fixture, a
// 4,000-node datapath block), a colourless theme, key messages, and a way
// to read the intents a panel's command sends. Only tests import it.
package paneltest

import (
	"io"
	"path/filepath"
	"runtime"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"

	"railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// Sizes are the terminal sizes the goldens are drawn at.
var Sizes = [][2]int{{80, 24}, {120, 40}}

// Theme is the theme with colour off on a renderer that writes no escape
// sequence at all, so that goldens are plain text.
func Theme(ascii bool) *theme.Theme {
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.Ascii)
	return theme.New(r, true, ascii)
}

// Key turns a key name into the message a terminal would send.
func Key(k string) tea.KeyMsg {
	switch k {
	case "space":
		return tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}}
	case "enter":
		return tea.KeyMsg{Type: tea.KeyEnter}
	case "tab":
		return tea.KeyMsg{Type: tea.KeyTab}
	case "shift+tab":
		return tea.KeyMsg{Type: tea.KeyShiftTab}
	case "esc":
		return tea.KeyMsg{Type: tea.KeyEsc}
	case "down":
		return tea.KeyMsg{Type: tea.KeyDown}
	case "up":
		return tea.KeyMsg{Type: tea.KeyUp}
	case "left":
		return tea.KeyMsg{Type: tea.KeyLeft}
	case "right":
		return tea.KeyMsg{Type: tea.KeyRight}
	case "home":
		return tea.KeyMsg{Type: tea.KeyHome}
	case "end":
		return tea.KeyMsg{Type: tea.KeyEnd}
	case "pgdown":
		return tea.KeyMsg{Type: tea.KeyPgDown}
	case "backspace":
		return tea.KeyMsg{Type: tea.KeyBackspace}
	case "ctrl+u":
		return tea.KeyMsg{Type: tea.KeyCtrlU}
	}
	return tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(k)}
}

// Feed gives a panel the keys one by one through its Update (a method
// expression: Feed(m, Model.Update, "down", "enter")) and returns the
// panel and the intent of the last key whose command sent one.
func Feed[M any](m M, update func(M, tea.Msg) (M, tea.Cmd), keys ...string) (M, tea.Msg) {
	var last tea.Msg
	for _, k := range keys {
		var cmd tea.Cmd
		m, cmd = update(m, Key(k))
		if msg := Intent(cmd); msg != nil {
			last = msg
		}
	}
	return m, last
}

// Intent is the message a panel's command sends (nil for no command).
func Intent(cmd tea.Cmd) tea.Msg {
	if cmd == nil {
		return nil
	}
	return cmd()
}

// Empty is a design with no devices: the rails and nothing else.
func Empty(t testing.TB) *switchsim.Netlist {
	t.Helper()
	return compile(t, switchsim.NewBuilder())
}

// OneNode is a design of one node, y, held high by a weak pull-up.
func OneNode(t testing.TB) *switchsim.Netlist {
	t.Helper()
	b := switchsim.NewBuilder()
	if err := b.Pull("up", "y", true, switchsim.Weak); err != nil {
		t.Fatal(err)
	}
	if err := b.Output("y"); err != nil {
		t.Fatal(err)
	}
	return compile(t, b)
}

// Big is switchsim/gen's datapath block of n nodes (operand selector
// slices with a pipeline flip-flop each).
func Big(t testing.TB, n int) *switchsim.Netlist {
	t.Helper()
	nl := compile(t, gen.Sized(n))
	if nl.NumNodes() != n {
		t.Fatalf("gen.Sized(%d) has %d nodes", n, nl.NumNodes())
	}
	return nl
}

func compile(t testing.TB, b *switchsim.Builder) *switchsim.Netlist {
	t.Helper()
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	return nl
}

// Session opens a session on a netlist built in the test.
func Session(nl *switchsim.Netlist, mode switchsim.Mode) *session.Session {
	return session.New(&netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl}, "test.sw", nil, session.Options{Mode: mode})
}

// Selector opens the explorer's fixture, tui/testdata/opsel.sw with its
// steps: a 2:1 transmission-gate selector, y = sel ? b : a (common
// practice), whose fourth row fails on purpose.
func Selector(t testing.TB, mode switchsim.Mode) *session.Session {
	t.Helper()
	_, file, _, _ := runtime.Caller(0)
	dir := filepath.Join(filepath.Dir(file), "..", "..", "testdata")
	s, err := session.Open(filepath.Join(dir, "opsel.sw"), filepath.Join(dir, "opsel.steps"), session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// Demo opens an embedded demo with its steps.
func Demo(t testing.TB, name string, mode switchsim.Mode) *session.Session {
	t.Helper()
	s, err := session.Open("demo:"+name, "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// States are every node's states in the session now.
func States(s *session.Session) []switchsim.NodeState {
	nl := s.Netlist()
	st := make([]switchsim.NodeState, nl.NumNodes())
	for n := range st {
		st[n] = s.Node(n)
	}
	return st
}

// Names are the session's printable names.
func Names(s *session.Session) *panel.Names { return panel.NewNames(s.Netlist()) }

// Node looks a node up by name.
func Node(t testing.TB, nl *switchsim.Netlist, name string) int {
	t.Helper()
	n, ok := nl.Lookup(name)
	if !ok {
		t.Fatalf("no node %s", name)
	}
	return n
}
