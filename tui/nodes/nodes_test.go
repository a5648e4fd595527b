package nodes

import (
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
