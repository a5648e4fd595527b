package listing

import (
	"testing"

	tea "github.com/charmbracelet/bubbletea"
)

// The cursor never rests on a separator and keeps the selection in view.
func TestCursorSkipsSeparators(t *testing.T) {
	sep := map[int]bool{0: true, 3: true}
	c := Cursor{Skip: func(i int) bool { return sep[i] }}
	c.SetHeight(3)
	c.SetLen(8)
	if c.Pos != 1 {
		t.Fatalf("start at %d, want 1 (row 0 is a separator)", c.Pos)
	}
	c.Move(1)
	c.Move(1)
	if c.Pos != 4 {
		t.Fatalf("two down from 1 over the separator at 3: %d, want 4", c.Pos)
	}
	if lo, hi := c.Window(); c.Pos < lo || c.Pos >= hi {
		t.Fatalf("cursor %d outside the window [%d,%d)", c.Pos, lo, hi)
	}
	c.Top()
	if c.Pos != 1 {
		t.Fatalf("top: %d, want 1", c.Pos)
	}
	c.Bottom()
	if c.Pos != 7 {
		t.Fatalf("bottom: %d, want 7", c.Pos)
	}
	c.SetLen(0)
	if c.Pos != 0 || c.Offset != 0 {
		t.Fatalf("empty list: pos %d offset %d", c.Pos, c.Offset)
	}
}

func TestFieldEditing(t *testing.T) {
	var f Field
	f.Focus()
	for _, r := range "trace.txt" {
		f.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
	}
	f.Update(tea.KeyMsg{Type: tea.KeyBackspace})
	f.Update(tea.KeyMsg{Type: tea.KeyLeft})
	f.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{'X'}})
	if f.Value() != "trace.tXx" {
		t.Fatalf("value %q, want trace.tXx", f.Value())
	}
	f.Update(tea.KeyMsg{Type: tea.KeyCtrlU})
	if f.Value() != "x" {
		t.Fatalf("ctrl+u keeps what follows the cursor: %q", f.Value())
	}
}

func TestMatch(t *testing.T) {
	for _, c := range []struct {
		f, name string
		want    bool
	}{{"", "q", true}, {"SEL", "sel_b", true}, {"sl3 ff", "sl3.ff.m", true}, {"sl3 q", "sl3.ff.m", false}} {
		if got := Match(c.f, c.name); got != c.want {
			t.Errorf("Match(%q, %q) = %v", c.f, c.name, got)
		}
	}
}
