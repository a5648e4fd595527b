package audit

import (
	"fmt"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func view(w, h int, ascii bool) Model {
	m := New(DefaultStyles(paneltest.Theme(ascii)))
	m.SetSize(w, h)
	m.Focus()
	return m
}

func keys(m Model, ks ...string) (Model, tea.Msg) { return paneltest.Feed(m, Model.Update, ks...) }

// The findings of testdata/fight.sw in tui (see tui's audit_test.go for
// why each is there), as the root words them: failing first.
var fight = []Finding{
	{Failing: true, Kind: "conflict", Where: "y", Message: "y is X at 0.90 V: up and dn fight to the undefined band", States: 1, Transitions: 2, Moves: 1, Rows: 2},
	{Failing: true, Kind: "floating-output", Where: "y", Message: "output y floats, holding 1 by charge", States: 2, Transitions: 2, Moves: 1, Rows: 2},
	{Kind: "degraded-output", Where: "z", Message: "output z is H at 1.800 V, not a strong full level", States: 5, Transitions: 10, Moves: 0, Rows: 1},
	{Kind: "contention", Where: "z", Message: "z is L at 0.05 V: nz wins over pz", States: 2, Transitions: 5, Moves: 1, Rows: 2},
}

var head = []string{"physical: 5 states, 10 transitions, done", "4 findings, 2 failing check"}

// Before any search the view says what a does; enter asks for a search,
// x says none runs.
func TestBeforeAnySearch(t *testing.T) {
	m := view(60, 10, false)
	if v := m.View(); !strings.Contains(v, "a starts the search") {
		t.Errorf("empty view:\n%s", v)
	}
	if _, msg := keys(m, "enter"); msg != (panel.Search{}) {
		t.Errorf("enter with no finding: %#v, want a search", msg)
	}
	if _, msg := keys(m, "x"); msg == nil {
		t.Error("x with no search says nothing")
	} else if n, ok := msg.(panel.Note); !ok || !strings.Contains(n.Text, "no search is running") {
		t.Errorf("x with no search: %#v", msg)
	}
}

// While a search runs, enter says it runs and x asks to stop it.
func TestRunning(t *testing.T) {
	m := view(60, 10, false)
	m.Set([]string{"physical: searching, 10 states, 20 transitions, 1ms"}, true, nil, "searching...")
	if !m.Running() || !strings.Contains(m.View(), "searching, 10 states") {
		t.Errorf("running view:\n%s", m.View())
	}
	if _, msg := keys(m, "x"); msg != (panel.Search{Stop: true}) {
		t.Errorf("x while running: %#v", msg)
	}
	if _, msg := keys(m, "enter"); msg == nil {
		t.Error("enter while running says nothing")
	}
}

// One glyph, one meaning: a finding that fails check carries the failed-
// check glyph, another the warning glyph, in Unicode and in ASCII (F and
// !); enter on a row asks for that row's sequence.
func TestGlyphsAndOpen(t *testing.T) {
	for _, ascii := range []bool{false, true} {
		m := view(80, 12, ascii)
		m.Set(head, false, fight, "")
		g := m.Styles.Theme.G
		v := ansi.Strip(m.View())
		for _, f := range fight {
			want := g.Warn
			if f.Failing {
				want = g.Fail
			}
			found := false
			for _, l := range strings.Split(v, "\n") {
				if strings.Contains(l, want+" "+f.Kind) {
					found = true
				}
			}
			if !found {
				t.Errorf("ascii=%v: %s not marked %q:\n%s", ascii, f.Kind, want, v)
			}
		}
		if all, failing := m.Findings(); all != 4 || failing != 2 {
			t.Errorf("Findings() = %d, %d", all, failing)
		}
		m, msg := keys(m, "down", "down", "enter")
		if msg != (panel.OpenFinding{Index: 2}) {
			t.Errorf("enter on the third row: %#v", msg)
		}
		if flat := strings.Join(strings.Fields(ansi.Strip(m.View())), " "); !strings.Contains(flat, "degraded-output: output z is H at 1.800 V, not a strong full level. enter walks its 1 step") {
			t.Errorf("the selected finding is not given whole:\n%s", m.View())
		}
	}
}

// 4,000 findings scroll within the height; end reaches the last.
func TestManyFindings(t *testing.T) {
	var fs []Finding
	for i := 0; i < 4000; i++ {
		fs = append(fs, Finding{Kind: "contention", Where: fmt.Sprintf("slice%d.mux.out", i), Message: "a fight one side wins", States: i, Moves: 2, Rows: 3})
	}
	m := view(60, 20, false)
	m.Set(head, false, fs, "")
	m, _ = keys(m, "end")
	v := m.View()
	if n := len(strings.Split(v, "\n")); n != 20 {
		t.Errorf("%d lines, want 20", n)
	}
	if !strings.Contains(v, " 3999 ") || m.Selected() != 3999 {
		t.Errorf("end does not show the last:\n%s", v)
	}
	for i, l := range strings.Split(v, "\n") {
		if ansi.StringWidth(l) > 60 {
			t.Errorf("line %d is %d cells wide", i, ansi.StringWidth(l))
		}
	}
}

// Goldens of fight.sw's findings, checked by hand: the head's two lines,
// the column heads, ✗ on conflict and floating-output (both on y), ! on
// degraded-output and contention (both on z), states, transitions and
// moves as `railyard check --exhaustive` gives them for the design, the
// cursor on the first row and its message whole at the foot.
func TestGolden(t *testing.T) {
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			// the view gets what the root leaves it: the width less the left column
			m := view(sz[0]-33, sz[1]-4, false)
			m.Set(head, false, fight, "")
			golden.RequireEqual(t, []byte(m.View()))
		})
	}
}
