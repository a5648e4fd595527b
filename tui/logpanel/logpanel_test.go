package logpanel

import (
	"fmt"
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/tui/internal/paneltest"
)

func newLog(w, h int, e []Entry) Model {
	m := New(DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	m.SetEntries(e)
	return m
}

func keys(m Model, ks ...string) Model {
	for _, k := range ks {
		m, _ = m.Update(paneltest.Key(k))
	}
	return m
}

// Without entries the log is blank; with a quiet last settle it says so,
// naming the action.
func TestQuiet(t *testing.T) {
	if v := strings.TrimSpace(newLog(40, 5, nil).View()); v != "" {
		t.Errorf("no entries: %q", v)
	}
	m := newLog(60, 5, []Entry{{Title: "start"}, {Title: "step 1 pick a"}})
	if m.Last() != 0 || !strings.Contains(m.View(), "No warnings from the last settle (step 1 pick a).") {
		t.Errorf("quiet log:\n%s", m.View())
	}
}

// The last settle's warnings come first, then the earlier actions' newest
// first; long messages wrap within the width, continued four cells in.
func TestOrderAndWrap(t *testing.T) {
	long := strings.Repeat("word ", 30)
	m := newLog(40, 30, []Entry{
		{Title: "start", Warnings: []Warning{{"floating", "y floats"}}},
		{Title: "set a=1", Warnings: []Warning{{"degraded", "y is degraded"}}},
		{Title: "step 2", Warnings: []Warning{{"contention", long}}},
	})
	if m.Last() != 1 {
		t.Fatalf("Last = %d, want 1", m.Last())
	}
	v := ansi.Strip(m.View())
	iLast, iEarlier, iSet, iStart := strings.Index(v, "last settle: step 2 (1)"), strings.Index(v, "earlier actions in force:"),
		strings.Index(v, "set a=1 (1)"), strings.Index(v, "start (1)")
	if iLast < 0 || !(iLast < iEarlier && iEarlier < iSet && iSet < iStart) {
		t.Errorf("order: last %d, earlier %d, set %d, start %d:\n%s", iLast, iEarlier, iSet, iStart, v)
	}
	for i, l := range strings.Split(v, "\n") {
		if ansi.StringWidth(l) > 40 {
			t.Errorf("line %d is %d cells wide", i, ansi.StringWidth(l))
		}
	}
	if !strings.Contains(v, "\n    word word") {
		t.Errorf("a wrapped line is not indented four cells:\n%s", v)
	}
}

// 4,000 warnings scroll: end shows the last, home the first, and the view
// keeps its height.
func TestManyWarnings(t *testing.T) {
	var ws []Warning
	for i := 0; i < 4000; i++ {
		ws = append(ws, Warning{"charge-sharing", fmt.Sprintf("n%d shares charge", i)})
	}
	m := newLog(60, 20, []Entry{{Title: "step 1", Warnings: ws}})
	m = keys(m, "end")
	v := m.View()
	if n := len(strings.Split(v, "\n")); n != 20 {
		t.Errorf("%d lines, want 20", n)
	}
	if !strings.Contains(v, "n3999 shares charge") || strings.Contains(v, "n0 shares") {
		t.Errorf("end does not show the last warning:\n%s", v)
	}
	m = keys(m, "home", "down", "pgdown")
	if !strings.Contains(m.View(), fmt.Sprintf("n%d shares", 1+19-1)) {
		t.Errorf("down then page down: %s", m.View())
	}
	m = keys(m, "home", "up")
	if !strings.Contains(m.View(), "last settle: step 1 (4000)") {
		t.Errorf("home: the heading is not shown:\n%s", m.View())
	}
}

// Goldens of demo:strong_keeper after its second step (the keeper wins the
// write), checked by hand: the heading "last settle: step 2 the gate
// overwrites the keeper (1)" and the contention warning on s at 0.20 V
// naming the keeper's device keep.n winning over the input gate's pass.n,
// as the engine words it, on one line at both widths; no earlier action
// warned, so there is no "earlier actions" part.
func TestGolden(t *testing.T) {
	s := paneltest.Demo(t, "strong_keeper", switchsim.Physical)
	s.Next()
	s.Next()
	var entries []Entry
	for _, e := range s.History() {
		en := Entry{Title: "start"}
		if e.Action.Step >= 0 && e.Action.Label != "" {
			en.Title = fmt.Sprintf("step %d %s", e.Action.Step+1, e.Action.Label)
		}
		for _, w := range e.Warnings {
			en.Warnings = append(en.Warnings, Warning{string(w.Kind), w.Message})
		}
		entries = append(entries, en)
	}
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			golden.RequireEqual(t, []byte(newLog(sz[0], sz[1], entries).View()))
		})
	}
}
