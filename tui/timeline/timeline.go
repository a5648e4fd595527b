// Package timeline is the explorer's timeline: the watched nodes across the
// actions in force, drawn as text waveforms in which each of the six states
// has its own glyph (a legend names them), so it reads without colour.
package timeline

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the timeline's keys.
type KeyMap struct {
	listing.Nav
	Left, Right key.Binding
	Unwatch     key.Binding
}

// DefaultKeyMap: up and down select a trace, left and right scroll, m drops it.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:     listing.DefaultNav(),
		Left:    key.NewBinding(key.WithKeys("left", ","), key.WithHelp("←", "earlier")),
		Right:   key.NewBinding(key.WithKeys("right", "."), key.WithHelp("→", "later")),
		Unwatch: key.NewBinding(key.WithKeys("m", "delete"), key.WithHelp("m", "stop watching")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Left, k.Right, k.Unwatch} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.Left, k.Right}, {k.Unwatch}}
}

// Styles draw the timeline.
type Styles struct {
	Theme    *theme.Theme
	Header   lipgloss.Style
	Selected lipgloss.Style
	Fail     lipgloss.Style
	Dim      lipgloss.Style
}

// DefaultStyles takes the timeline's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Header: t.Dim, Selected: t.Selected, Fail: t.Fail, Dim: t.Dim}
}

// Column is one action of the history in force.
type Column struct {
	Mark string // one cell: "0" for the start, the step's last digit, the theme's Set glyph for a set
	// States are the watched nodes' states after the action, in the order
	// of SetWatched (session.Track); nil or session.Unknown (255) where the
	// session no longer knows them.
	States []switchsim.State
	Failed bool
}

// none marks a state not known (the value of session.Unknown).
const none = switchsim.State(255)

// Model is the timeline.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	names   *panel.Names
	watched []int
	cols    []Column
	cur     listing.Cursor
	end     int // the last column shown (scrolling); -1: follow the newest
	focused bool
	w, h    int
}

// New makes an empty timeline.
func New(names *panel.Names, st Styles) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st, names: names, end: -1}
}

// SetSize gives the timeline its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 4)
}

// Focus and Blur tell the timeline whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// SetColumns gives the actions in force, oldest first.
func (m *Model) SetColumns(cols []Column) {
	m.cols = cols
	m.end = -1
}

// SetWatched gives the watched nodes, in the order shown.
func (m *Model) SetWatched(nodes []int) {
	m.watched = nodes
	m.cur.SetLen(len(nodes))
}

// Selected is the watched node under the cursor, or -1.
func (m Model) Selected() int {
	if m.cur.Pos < len(m.watched) {
		return m.watched[m.cur.Pos]
	}
	return -1
}

// Update handles a key; dropping the selected trace is an intent for the
// root (panel.Watch toggles it off).
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	km := m.KeyMap
	last := len(m.cols) - 1
	switch {
	case km.Nav.Handle(k, &m.cur):
	case key.Matches(k, km.Left):
		if m.end < 0 {
			m.end = last
		}
		m.end = max(m.end-1, 0)
	case key.Matches(k, km.Right):
		if m.end >= 0 {
			m.end++
			if m.end >= last {
				m.end = -1
			}
		}
	case key.Matches(k, km.Unwatch):
		if n := m.Selected(); n >= 0 {
			return m, panel.Send(panel.Watch{Node: n})
		}
		return m, panel.Send(panel.Note{Text: "no node is watched: m on a node or an input watches it"})
	}
	return m, nil
}

// View draws the timeline in its w x h cells.
func (m *Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	nameW := 4
	all := make([]string, len(m.watched))
	for i, n := range m.watched {
		all[i] = m.names.Node[n]
		nameW = max(nameW, lipgloss.Width(all[i]))
	}
	nameW = min(nameW, max(m.w/4, 6))
	labels := listing.Shorten(all, nameW, g.Ellipsis)
	if len(m.watched) == 0 {
		return theme.Block([]string{
			st.Dim.Render("No watched nodes."),
			st.Dim.Render("Press m on a node or an input to watch it here."),
		}, m.w, m.h)
	}
	avail := m.w - nameW - 3 - 2 // cursor, name, gap, the present state
	cell := 2
	if len(m.cols)*2 > avail {
		cell = 1
	}
	ncols := max(avail/cell, 1)
	end := m.end
	if end < 0 || end >= len(m.cols) {
		end = len(m.cols) - 1
	}
	start := max(end-ncols+1, 0)
	info := fmt.Sprintf("%d actions", len(m.cols))
	for c := start; c <= end && c < len(m.cols); c++ {
		if st := m.cols[c].States; len(st) > 0 && st[0] == none {
			info += " (blank: states dropped for the memory budget)"
			break
		}
	}
	if start > 0 || end < len(m.cols)-1 {
		info += fmt.Sprintf(", showing %d-%d", start, end)
	}
	lines := []string{st.Dim.Render(t.Clip(info+"; marks: 0 start, "+g.Set+" set, N step N", m.w))}

	var marks, fails strings.Builder
	marks.WriteString(strings.Repeat(" ", nameW+3))
	fails.WriteString(strings.Repeat(" ", nameW+3))
	anyFail := false
	for c := start; c <= end; c++ {
		marks.WriteString(theme.Pad(m.cols[c].Mark, cell))
		if m.cols[c].Failed {
			anyFail = true
			fails.WriteString(st.Fail.Render(theme.Pad(g.Fail, cell)))
		} else {
			fails.WriteString(strings.Repeat(" ", cell))
		}
	}
	lines = append(lines, st.Header.Render(marks.String()))
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		var b strings.Builder
		name := theme.Pad(t.Clip(labels[i], nameW), nameW)
		if i == m.cur.Pos && m.focused {
			b.WriteString(g.Cursor + " " + st.Selected.Render(name) + " ")
		} else {
			b.WriteString("  " + name + " ")
		}
		// runs of one state are drawn together: one style switch per run
		// (a column whose states the session dropped is drawn blank rather
		// than as a state it did not have)
		wave := func(s switchsim.State, n int) string {
			if s == none {
				return strings.Repeat(" ", n)
			}
			return t.Wave(s, n)
		}
		last := none
		run := 0
		for c := start; c <= end; c++ {
			s := none
			if i < len(m.cols[c].States) {
				s = m.cols[c].States[i]
			}
			if run > 0 && s != last {
				b.WriteString(wave(last, run*cell))
				run = 0
			}
			last = s
			run++
		}
		if run > 0 {
			b.WriteString(wave(last, run*cell))
		}
		if last != none {
			b.WriteString(" " + t.StateLetter(last))
		} else {
			b.WriteString(" ?")
		}
		lines = append(lines, b.String())
	}
	if anyFail {
		lines = append(lines, fails.String())
	}
	for len(lines) < m.h-1 {
		lines = append(lines, "")
	}
	lines = append(lines, t.Legend())
	return theme.Block(lines, m.w, m.h)
}
