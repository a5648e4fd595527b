package listing

import (
	"testing"

	tea "github.com/charmbracelet/bubbletea"
)

// The cursor never rests on a separator and keeps the selection in view.
func TestCursorSkipsSeparators(t *testing.T) {
	c := Cursor{Skip: []bool{0: true, 3: true, 7: false}}
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

// Long names are cut in the middle and stay distinct (issue: operand_select
// and operand_select_b both read operand_s…).
func TestShorten(t *testing.T) {
	got := Shorten([]string{"operand_select", "operand_select_b", "y"}, 10, "…")
	// 9 runes kept around the ellipsis: 5 of the head, 4 of the tail
	want := []string{"opera…lect", "opera…ct_b", "y"}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("Shorten = %q, want %q", got, want)
		}
	}
	// the balanced cut reads alike: the split moves until the digit shows
	got = Shorten([]string{"slice3.mux.out", "slice4.mux.out", "slice5.mux.out"}, 10, "…")
	seen := map[string]bool{}
	for _, g := range got {
		if len([]rune(g)) != 10 || seen[g] {
			t.Fatalf("Shorten = %q: want three distinct labels of 10 cells", got)
		}
		seen[g] = true
	}
	if got[0] != "slice3…out" {
		t.Errorf("first label %q, want slice3…out (head 6, tail 3: the closest split that tells them apart)", got[0])
	}
	// names that fit are never touched, and a collision with one that fits
	// is avoided too
	got = Shorten([]string{"abcde…wxyz", "abcdefghijwxyz"}, 10, "…")
	if got[0] != "abcde…wxyz" || got[1] == got[0] {
		t.Errorf("Shorten = %q: the short name is kept and the long one differs from it", got)
	}
	// too narrow for an ellipsis and two runes: plain cut
	if got := Shorten([]string{"abcdef"}, 2, "…"); got[0] != "ab" {
		t.Errorf("Shorten at 2 cells = %q, want ab", got)
	}
}

// 4,000 names sharing a prefix and a suffix stay distinct and the call is
// linear in practice (one map pass per collision group).
func TestShortenMany(t *testing.T) {
	names := make([]string, 4000)
	for i := range names {
		names[i] = "datapath.slice" + string(rune('a'+i%26)) + string(rune('a'+i/26%26)) + string(rune('a'+i/676)) + ".mux.out"
	}
	got := Shorten(names, 16, "~")
	seen := map[string]bool{}
	for _, g := range got {
		if seen[g] {
			t.Fatalf("duplicate label %q", g)
		}
		seen[g] = true
	}
}
