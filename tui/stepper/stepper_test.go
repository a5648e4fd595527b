package stepper

import (
	"fmt"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func view(steps []Step, w, h int) Model {
	m := New("t.steps", steps, DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	m.Focus()
	return m
}

func keys(m Model, ks ...string) (Model, tea.Msg) { return paneltest.Feed(m, Model.Update, ks...) }

// The selector fixture's rows, as the root words them.
var fixture = []Step{
	{"pick a", "sel=0 a=1 b=0", "y=1"},
	{"pick b", "sel=1 a=1 b=0", "y=0"},
	{"b high", "sel=1 a=1 b=1", "y=1"},
	{"wrong on purpose", "sel=0 a=0 b=1", "y=1"},
}

func pass(node, want string, got switchsim.State, ok bool) Check {
	v := switchsim.V0
	if got == switchsim.State1 {
		v = switchsim.V1
	}
	return Check{Node: node, Want: want, Got: switchsim.NodeState{State: got, Value: v, Strength: switchsim.Strong}, Pass: ok}
}

// Without a steps file the view says how to give one, and enter says why
// it does nothing.
func TestNoSteps(t *testing.T) {
	m := view(nil, 60, 10)
	if !strings.Contains(m.View(), "This design has no steps file.") || m.Selected() != -1 {
		t.Errorf("no steps:\n%s", m.View())
	}
	if _, msg := keys(m, "enter"); msg == nil || !strings.Contains(msg.(panel.Note).Text, "no steps file") {
		t.Errorf("enter without steps: %v", msg)
	}
}

// Rows applied carry their verdict, the next row its mark; enter asks to
// go to the selected row; the details spell out the row.
func TestProgressAndJump(t *testing.T) {
	m := view(fixture, 70, 16)
	m.SetProgress([]Outcome{{Taken: true, Checks: []Check{pass("y", "1", switchsim.State1, true)}}, {}, {}, {}}, 1)
	v := m.View()
	if !strings.Contains(v, "✓ 1 pick a") || !strings.Contains(v, " ▶  2 pick b") {
		t.Errorf("marks of the applied and the next row:\n%s", v)
	}
	if !strings.Contains(v, "✓ y want 1 got 1 (value 1, strong) pass") {
		t.Errorf("the applied row's check is not spelled out:\n%s", v)
	}
	m, msg := keys(m, "down", "down", "enter")
	if msg != (panel.JumpTo{Row: 2}) {
		t.Errorf("enter on row 3: %v", msg)
	}
	v = m.View()
	if !strings.Contains(v, "not applied yet: enter goes to it") || !strings.Contains(v, "wants   y=1") {
		t.Errorf("an unapplied row's details:\n%s", v)
	}
	m.SetProgress([]Outcome{{Taken: true}, {Taken: true}, {Taken: true}, {Taken: true, Checks: []Check{pass("y", "1", switchsim.State0, false)}}}, 4)
	v = m.View()
	if m.Selected() != 3 || !strings.Contains(v, "✗ 1 failing") || !strings.Contains(v, "✗ y want 1 got 0 (value 0, strong) FAIL") {
		t.Errorf("the failing row (selected %d):\n%s", m.Selected(), v)
	}
}

// A row whose values do not fit says → scrolls; → shows the cut part and
// the details give every wanted value whole (issue 18 item 12).
func TestLongValuesScroll(t *testing.T) {
	var want []string
	for i := 0; i < 12; i++ {
		want = append(want, fmt.Sprintf("out%d=1", i))
	}
	steps := []Step{{"", "a=1", strings.Join(want, " ")}}
	m := view(steps, 50, 12)
	v := m.View()
	if !strings.Contains(v, "(→ scrolls)") || strings.Contains(lineOf(v, "  1 "), "out11=1") {
		t.Fatalf("a cut row does not offer scrolling:\n%s", v)
	}
	if !strings.Contains(strings.Join(strings.Fields(v), " "), "wants out0=1 out1=1 out2=1 out3=1 out4=1 out5=1 out6=1 out7=1 out8=1 out9=1 out10=1 out11=1") {
		t.Errorf("the details do not give every wanted value:\n%s", v)
	}
	for i := 0; i < 10; i++ {
		m, _ = keys(m, "right")
	}
	v = m.View()
	if !strings.Contains(lineOf(v, "  1 "), "out11=1") || !strings.Contains(v, "(from +") {
		t.Errorf("→ does not reach the end of the values:\n%s\n%q", v, lineOf(v, "  1 "))
	}
	m, _ = keys(m, "left", "left", "left", "left", "left", "left", "left", "left", "left", "left")
	if strings.Contains(m.View(), "(from +") {
		t.Errorf("← does not come back to the start")
	}
}

func lineOf(v, with string) string {
	for _, l := range strings.Split(v, "\n") {
		if strings.Contains(l, with) {
			return l
		}
	}
	return ""
}

// 4,000 rows: the list scrolls with the cursor and the view keeps its height.
func TestManyRows(t *testing.T) {
	steps := make([]Step, 4000)
	for i := range steps {
		steps[i] = Step{Apply: fmt.Sprintf("a=%d", i%2)}
	}
	m := view(steps, 60, 20)
	m.SetProgress(make([]Outcome, 4000), 0)
	if !strings.Contains(m.View(), "more") {
		t.Errorf("no note of the rows below:\n%s", m.View())
	}
	m, msg := keys(m, "end", "enter")
	if msg != (panel.JumpTo{Row: 3999}) {
		t.Errorf("end enter: %v", msg)
	}
	if v := m.View(); len(strings.Split(v, "\n")) != 20 || !strings.Contains(v, "step 4000") {
		t.Errorf("end:\n%s", v)
	}
}

// Goldens of the selector fixture with all four rows applied and the
// fourth failing, checked by hand: "t.steps 4 of 4 applied ✗ 1 failing";
// rows 1-3 marked ✓ and row 4 ✗, each with its label and its apply | want
// values as the steps file gives them; no ▶ (nothing left to apply); the
// selected row 4 spelled out below: what it applies and its failed check
// y want 1 got 0 (value 0, strong) FAIL.
func TestGolden(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	s.RunToEnd(false)
	outcomes := []Outcome{{Taken: true}, {Taken: true}, {Taken: true}, {Taken: true}}
	for _, e := range s.History()[1:] {
		for _, c := range e.Checks {
			outcomes[e.Action.Step].Checks = append(outcomes[e.Action.Step].Checks, Check{Node: "y", Want: c.Want.String(), Got: c.Got, Pass: c.Pass})
		}
	}
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			m := view(fixture, sz[0], sz[1])
			m.SetProgress(outcomes, 4)
			golden.RequireEqual(t, []byte(m.View()))
		})
	}
}
