package prompt

import (
	"fmt"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

var st = DefaultStyles(paneltest.Theme(false))

// feed sends keys (single runes are typed) and returns the model and the
// intent of the last key that sent one.
func feed(m Model, keys ...string) (Model, tea.Msg) { return paneltest.Feed(m, Model.Update, keys...) }

func typed(s string) []string {
	var ks []string
	for _, r := range s {
		ks = append(ks, string(r))
	}
	return ks
}

// The save prompt offers the trace's name, swaps to the VCD's on tab
// (keeping a name the user typed), refuses an empty name and answers with
// the path.
func TestSave(t *testing.T) {
	m := NewSave(st, "opsel.trace", "opsel.vcd")
	if m.Value() != "opsel.trace" || m.Kind() != SaveTrace || !m.Active() {
		t.Fatalf("new save prompt: %q %v", m.Value(), m.Kind())
	}
	m, _ = feed(m, "tab")
	if m.Value() != "opsel.vcd" || m.Kind() != SaveVCD {
		t.Fatalf("tab: %q %v, want the VCD default", m.Value(), m.Kind())
	}
	m, _ = feed(m, append([]string{"ctrl+u"}, typed("run.vcd")...)...)
	m, _ = feed(m, "tab")
	if m.Value() != "run.vcd" || m.Kind() != SaveTrace {
		t.Fatalf("a typed name is kept across tab: %q", m.Value())
	}
	m, msg := feed(m, "ctrl+u", "enter")
	if msg != nil || !m.Active() {
		t.Fatalf("an empty name closed the prompt: %v", msg)
	}
	m.SetSize(80, 1)
	if !strings.Contains(m.View(), "a file name, please") {
		t.Errorf("no reason for staying open: %q", m.View())
	}
	m, msg = feed(m, append(typed("x.trace"), "enter")...)
	if msg != (panel.Save{Kind: panel.SaveTrace, Path: "x.trace"}) || m.Active() {
		t.Errorf("enter: %v, active %v", msg, m.Active())
	}
	if _, msg := feed(NewSave(st, "a", "b"), "esc"); msg == nil {
		t.Error("esc sends no Canceled")
	} else if _, ok := msg.(panel.Canceled); !ok {
		t.Errorf("esc sends %T", msg)
	}
}

// The jump prompt starts empty (issue 18 item 9), takes digits only, and
// closes on enter whatever the number, saying why one is refused.
func TestJump(t *testing.T) {
	for _, c := range []struct {
		keys []string
		want tea.Msg
	}{
		{[]string{"2", "enter"}, panel.JumpTo{Row: 1}},
		{[]string{"4", "0", "0", "0", "enter"}, panel.JumpTo{Row: 3999}},
		{[]string{"4", "0", "0", "1", "enter"}, panel.Note{Text: "there is no step 4001: the steps file has 4000 (1 to 4000)"}},
		{[]string{"0", "enter"}, panel.Note{Text: "there is no step 0: the steps file has 4000 (1 to 4000)"}},
		{[]string{"enter"}, panel.Note{Text: "no step given: g then a number from 1 to 4000"}},
	} {
		m := NewJump(st, 4000)
		if m.Value() != "" {
			t.Fatalf("jump prompt starts with %q", m.Value())
		}
		m, msg := feed(m, c.keys...)
		if msg != c.want || m.Active() {
			t.Errorf("keys %v: %v (active %v), want %v and closed", c.keys, msg, m.Active(), c.want)
		}
	}
	m, _ := feed(NewJump(st, 8), "a")
	m.SetSize(80, 1)
	if m.Value() != "" || !strings.Contains(m.View(), "digits only") {
		t.Errorf("a letter: value %q, view %q", m.Value(), m.View())
	}
	m, _ = feed(NewJump(st, 8), typed("12345678901")...)
	if m.Value() != "123456789" {
		t.Errorf("the field keeps %q, want nine digits at most", m.Value())
	}
}

// With the files' place the owner's, the prompt asks only trace or VCD.
func TestChoose(t *testing.T) {
	if _, msg := feed(NewChoose(st), "enter"); msg != (panel.Save{Kind: panel.SaveTrace}) {
		t.Errorf("enter: %v", msg)
	}
	if _, msg := feed(NewChoose(st), "tab", "enter"); msg != (panel.Save{Kind: panel.SaveVCD}) {
		t.Errorf("tab enter: %v", msg)
	}
	m, msg := feed(NewChoose(st), "x", "/", "s")
	if msg != nil || !m.Active() || m.Value() != "" {
		t.Errorf("typing into the choice: %v %q", msg, m.Value())
	}
}

// The overwrite question takes y or n only.
func TestConfirm(t *testing.T) {
	s := panel.Save{Kind: panel.SaveVCD, Path: "old.vcd"}
	if _, msg := feed(NewConfirm(st, s), "y"); msg != (panel.Save{Kind: panel.SaveVCD, Path: "old.vcd", Overwrite: true}) {
		t.Errorf("y: %v", msg)
	}
	for _, k := range []string{"n", "esc"} {
		if _, msg := feed(NewConfirm(st, s), k); msg != (panel.Canceled{What: "old.vcd left as it was"}) {
			t.Errorf("%s: %v", k, msg)
		}
	}
	m, msg := feed(NewConfirm(st, s), "enter")
	m.SetSize(80, 1)
	if msg != nil || !m.Active() || !strings.Contains(m.View(), "y or n") {
		t.Errorf("enter on the question: %v %q", msg, m.View())
	}
	var closed Model
	if closed.Active() || closed.View() != "" {
		t.Error("the zero prompt is open")
	}
}

// Goldens at 80 and 120 columns, one line per kind, checked by hand: the
// question, the field with its cursor glyph after the default name (save)
// or empty (jump, size), and the keys of each kind; the choice and the
// question have no field; the design save and the size prompt come last.
func TestGolden(t *testing.T) {
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			vcd, _ := feed(NewSave(st, "opsel.trace", "opsel.vcd"), "tab")
			chooseVCD, _ := feed(NewChoose(st), "tab")
			var lines []string
			design, _ := feed(NewSave(st, "opsel.trace", "opsel.vcd").WithDesign("opsel-edited.sw"), "tab", "tab")
			for _, m := range []Model{NewSave(st, "opsel.trace", "opsel.vcd"), vcd, NewChoose(st), chooseVCD,
				NewConfirm(st, panel.Save{Path: "opsel.trace"}), NewJump(st, 8), design, NewSize(st, 0, "ta.n", 0.36e-6, 0.18e-6)} {
				m.SetSize(sz[0], 1)
				lines = append(lines, m.View())
			}
			golden.RequireEqual(t, []byte(strings.Join(lines, "\n")))
		})
	}
}

// The size prompt starts empty, reads a number as the design format writes
// it (0.72u is 0.72 micrometres), answers with the size to try (tab: the
// length instead, the width kept), and keeps itself open, saying why, for
// text that is no number or a number that is no cell's size (0.72 alone
// is 0.72 m: it suggests the prefix).
func TestSize(t *testing.T) {
	m := NewSize(st, 7, "keep.n", 1.44e-6, 0.18e-6)
	m.SetSize(120, 1)
	if m.Value() != "" || !strings.Contains(m.View(), "keep.n: try W (now 1.44u)") {
		t.Fatalf("new size prompt: %q %q", m.Value(), m.View())
	}
	if _, msg := feed(m, append(typed("0.72u"), "enter")...); msg != (panel.Resize{Device: 7, W: 0.72e-6, L: 0.18e-6}) {
		t.Errorf("W 0.72u: %#v", msg)
	}
	l, _ := feed(m, "tab")
	if !strings.Contains(l.View(), "try L (now 180n)") {
		t.Errorf("tab: %q", l.View())
	}
	if _, msg := feed(l, append(typed("360n"), "enter")...); msg != (panel.Resize{Device: 7, W: 1.44e-6, L: 0.36e-6}) {
		t.Errorf("L 360n: %#v", msg)
	}
	for _, c := range []struct{ typed, says string }{
		{"", "a size, please"},
		{"wide", `"wide" is not a number`},
		{"0", "a size must be positive"},
		{"0.72", "0.72u?"},
		{"5m", "not a cell's size"},
	} {
		got, msg := feed(m, append(typed(c.typed), "enter")...)
		got.SetSize(120, 1)
		if msg != nil || !got.Active() || !strings.Contains(got.View(), c.says) {
			t.Errorf("%q: %#v, %q", c.typed, msg, got.View())
		}
	}
	if _, msg := feed(m, "esc"); msg == nil {
		t.Error("esc sends nothing")
	} else if _, ok := msg.(panel.Canceled); !ok {
		t.Errorf("esc: %#v", msg)
	}
}

// With the design edited, tab reaches the design after the VCD, with its
// own default name, and enter answers with a design save; without it the
// cycle is trace and VCD as before. The owner's choice cycles the same way.
func TestSaveDesign(t *testing.T) {
	m := NewSave(st, "k.trace", "k.vcd").WithDesign("k-edited.sw")
	m, _ = feed(m, "tab", "tab")
	if m.Kind() != SaveDesign || m.Value() != "k-edited.sw" {
		t.Fatalf("tab tab: %v %q", m.Kind(), m.Value())
	}
	if _, msg := feed(m, "enter"); msg != (panel.Save{Kind: panel.SaveDesign, Path: "k-edited.sw"}) {
		t.Errorf("enter: %#v", msg)
	}
	if m, _ = feed(m, "tab"); m.Kind() != SaveTrace || m.Value() != "k.trace" {
		t.Errorf("tab from the design: %v %q", m.Kind(), m.Value())
	}
	if m, _ := feed(NewSave(st, "k.trace", "k.vcd"), "tab", "tab"); m.Kind() != SaveTrace {
		t.Errorf("unedited: tab tab reaches %v", m.Kind())
	}
	if _, msg := feed(NewChoose(st).WithDesign(""), "tab", "tab", "enter"); msg != (panel.Save{Kind: panel.SaveDesign}) {
		t.Errorf("choose: %#v", msg)
	}
	if _, msg := feed(NewChoose(st), "tab", "tab", "enter"); msg != (panel.Save{Kind: panel.SaveTrace}) {
		t.Errorf("choose, unedited: %#v", msg)
	}
}
