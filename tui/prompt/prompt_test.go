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
func feed(m Model, keys ...string) (Model, tea.Msg) {
	var last tea.Msg
	for _, k := range keys {
		var cmd tea.Cmd
		m, cmd = m.Update(paneltest.Key(k))
		if msg := paneltest.Intent(cmd); msg != nil {
			last = msg
		}
	}
	return m, last
}

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
// or empty (jump), and the keys of each kind; the choice and the question
// have no field.
func TestGolden(t *testing.T) {
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			vcd, _ := feed(NewSave(st, "opsel.trace", "opsel.vcd"), "tab")
			chooseVCD, _ := feed(NewChoose(st), "tab")
			var lines []string
			for _, m := range []Model{NewSave(st, "opsel.trace", "opsel.vcd"), vcd, NewChoose(st), chooseVCD,
				NewConfirm(st, panel.Save{Path: "opsel.trace"}), NewJump(st, 8)} {
				m.SetSize(sz[0], 1)
				lines = append(lines, m.View())
			}
			golden.RequireEqual(t, []byte(strings.Join(lines, "\n")))
		})
	}
}
