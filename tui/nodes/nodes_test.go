package nodes

import (
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/switchsim"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

func TestOrderAndFilter(t *testing.T) {
	b := switchsim.NewBuilder()
	for _, in := range []string{"a", "en"} {
		if err := b.Input(in); err != nil {
			t.Fatal(err)
		}
	}
	// a chain of pass devices: a -> n10 -> n2 -> y, outputs y
	for _, d := range [][3]string{{"t1", "a", "n10"}, {"t2", "n10", "n2"}, {"t3", "n2", "y"}} {
		if err := b.NMOS(d[0], "en", d[1], d[2], switchsim.DeviceOpts{}); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.Output("y"); err != nil {
		t.Fatal(err)
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	m := New(nl, panel.NewNames(nl), DefaultStyles(theme.New(nil, true, false)))
	m.SetSize(40, 10)
	var names []string
	for _, r := range m.rows {
		if r.node >= 0 {
			names = append(names, nl.NodeName(r.node))
		}
	}
	// outputs first, then internal nodes with numbers by value (n2 before n10)
	want := []string{"y", "n2", "n10"}
	if len(names) != len(want) {
		t.Fatalf("rows %v, want %v", names, want)
	}
	for i := range want {
		if names[i] != want[i] {
			t.Fatalf("rows %v, want %v", names, want)
		}
	}
	m.Focus()
	m, _ = m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{'/'}})
	for _, r := range "n1" {
		m, _ = m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
	}
	if m.Shown() != 1 || nl.NodeName(m.Selected()) != "n10" {
		t.Fatalf("filter n1: %d shown, selected %s; want 1 and n10", m.Shown(), nl.NodeName(m.Selected()))
	}
}

// After a mode switch or a size tried, the nodes whose logic value
// differs carry the differs glyph with the value before, and the title
// says what they differ from; nil clears both.
func TestDiffers(t *testing.T) {
	b := switchsim.NewBuilder()
	b.Input("a")
	b.NMOS("n1", "a", "x", "gnd", switchsim.DeviceOpts{})
	b.NMOS("n2", "a", "y", "gnd", switchsim.DeviceOpts{})
	b.Output("y")
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	th := theme.New(nil, true, false)
	m := New(nl, panel.NewNames(nl), DefaultStyles(th))
	m.SetSize(40, 10)
	st := make([]switchsim.NodeState, nl.NumNodes())
	m.SetStates(st, nil, nil)
	x, _ := nl.Lookup("x")
	differs := make([]bool, nl.NumNodes())
	other := make([]switchsim.Value, nl.NumNodes())
	differs[x], other[x] = true, switchsim.V1
	m.SetDiffers(differs, other, "1 vs physical")
	v := m.View()
	lines := strings.Split(v, "\n")
	if !strings.Contains(lines[0], th.G.Differs+" 1 vs physical") {
		t.Errorf("title: %q", lines[0])
	}
	for _, l := range lines[2:] {
		switch {
		case strings.Contains(l, " x "):
			if !strings.HasSuffix(strings.TrimRight(l, " "), th.G.Differs+"1") {
				t.Errorf("x's row: %q", l)
			}
		case strings.Contains(l, " y "):
			if strings.Contains(l, th.G.Differs) {
				t.Errorf("y is marked: %q", l)
			}
		}
	}
	m.SetDiffers(nil, nil, "anything")
	if strings.Contains(m.View(), th.G.Differs) {
		t.Errorf("nil did not clear the marks:\n%s", m.View())
	}
}
