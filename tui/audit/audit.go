// Package audit is the explorer's view of the reachable-state search
// (switchsim/reach, what `railyard check --exhaustive` runs): how far the
// search has got while it runs, then each finding once, with the number
// of states and transitions where it occurs and the length of its
// shortest input sequence. A finding that makes `check` fail is marked
// with the failed-check glyph, the others with the warning glyph. Enter
// on a finding asks for its sequence as the session's steps.
package audit

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the view's keys.
type KeyMap struct {
	listing.Nav
	Open key.Binding // the selected finding's sequence as the steps
	Stop key.Binding // stop a search that runs
}

// DefaultKeyMap: arrows select, enter opens a finding's sequence (or
// starts the search when there is none to open), x stops the search.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:  listing.DefaultNav(),
		Open: key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "walk its sequence")),
		Stop: key.NewBinding(key.WithKeys("x"), key.WithHelp("x", "stop the search")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Open, k.Stop} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Open, k.Stop}}
}

// Styles draw the view.
type Styles struct {
	Theme    *theme.Theme
	Head     lipgloss.Style
	Header   lipgloss.Style
	Selected lipgloss.Style
	Fail     lipgloss.Style
	Warn     lipgloss.Style
	Dim      lipgloss.Style
}

// DefaultStyles takes the view's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Head: t.Bold, Header: t.Dim, Selected: t.Selected, Fail: t.Fail, Warn: t.Warn, Dim: t.Dim}
}

// Finding is one finding, worded (names and message printable).
type Finding struct {
	Failing     bool   // it makes `check` fail
	Kind        string // conflict, write-fail, ...
	Where       string // the node (or device) it names, "" for none
	Message     string
	States      int // states where it occurs
	Transitions int // settles that showed it
	Moves       int // input changes of its shortest sequence after every input 0
	Rows        int // rows of that sequence as steps
}

// Model is the view.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	head     []string // what the search did or is doing, worded by the root
	running  bool
	empty    string // shown when there is no finding to list
	findings []Finding
	labels   []string
	labelW   int
	cur      listing.Cursor
	focused  bool
	w, h     int
}

// New makes the view before any search.
func New(st Styles) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st,
		head:  []string{"Every reachable state of the design, checked as `railyard check --exhaustive` does."},
		empty: "a starts the search"}
}

// SetSize gives the view its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.layout()
}

// Focus and Blur tell the view whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// Set gives what the search did (head: a line or two, worded), whether it
// still runs, the findings so far, and what to say when there is none.
// The selection stays on its row while a search adds findings.
func (m *Model) Set(head []string, running bool, findings []Finding, empty string) {
	m.head, m.running, m.findings, m.empty = head, running, findings, empty
	m.cur.SetLen(len(findings))
	m.layout()
}

// Running reports whether the view shows a search under way.
func (m Model) Running() bool { return m.running }

// Findings is the number of findings listed, and of those failing.
func (m Model) Findings() (all, failing int) {
	for _, f := range m.findings {
		if f.Failing {
			failing++
		}
	}
	return len(m.findings), failing
}

// Selected is the index of the finding under the cursor, or -1.
func (m Model) Selected() int {
	if m.cur.Pos < len(m.findings) {
		return m.cur.Pos
	}
	return -1
}

func (m *Model) layout() {
	m.cur.SetHeight(m.listHeight())
	nw := m.whereWidth()
	names := make([]string, len(m.findings))
	for i, f := range m.findings {
		names[i] = f.Where
	}
	m.labelW = nw
	m.labels = listing.Shorten(names, nw, m.Styles.Theme.G.Ellipsis)
}

// listHeight is what the head, the column heads and the selected
// finding's message (up to three lines) leave for the list.
func (m Model) listHeight() int { return max(m.h-len(m.head)-2-3, 1) }

func (m Model) whereWidth() int {
	longest := 4
	for _, f := range m.findings {
		longest = max(longest, lipgloss.Width(f.Where))
	}
	return min(longest, max(m.w-m.kindWidth()-4-stateW-transW-movesW-4, 4))
}

const (
	stateW = 6
	transW = 6
	movesW = 5
)

// kindWidth is the kind column: the longest kind listed.
func (m Model) kindWidth() int {
	w := len("finding")
	for _, f := range m.findings {
		w = max(w, lipgloss.Width(f.Kind))
	}
	return w
}

// Update handles a key when the view is focused: enter asks for the
// selected finding's sequence (panel.OpenFinding), or for a search when
// there is nothing to open; x asks to stop the search (panel.Search).
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
	case key.Matches(k, m.KeyMap.Open):
		if i := m.Selected(); i >= 0 {
			return m, panel.Send(panel.OpenFinding{Index: i})
		}
		if m.running {
			return m, panel.Send(panel.Note{Text: "the search is still running: its findings come as it goes (x stops it)"})
		}
		return m, panel.Send(panel.Search{})
	case key.Matches(k, m.KeyMap.Stop):
		if !m.running {
			return m, panel.Send(panel.Note{Text: "no search is running (a starts one)"})
		}
		return m, panel.Send(panel.Search{Stop: true})
	}
	return m, nil
}

// View draws the view in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	var lines []string
	for i, l := range m.head {
		style := st.Dim
		if i == 0 {
			style = st.Head
		}
		lines = append(lines, style.Render(t.Clip(l, m.w)))
	}
	nw, kindW := m.labelW, m.kindWidth()
	lines = append(lines, st.Header.Render(fmt.Sprintf("   %-*s %-*s %*s %*s %*s", kindW, "finding", nw, "node", stateW, "states", transW, "trans", movesW, "moves")))
	if len(m.findings) == 0 {
		lines = append(lines, st.Dim.Render("  "+m.empty))
		return theme.Block(lines, m.w, m.h)
	}
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		f := m.findings[i]
		var b strings.Builder
		sel := i == m.cur.Pos
		if sel && m.focused {
			b.WriteString(t.G.Cursor)
		} else {
			b.WriteByte(' ')
		}
		if f.Failing {
			b.WriteString(t.Mark("audit.fail", st.Fail, t.G.Fail))
		} else {
			b.WriteString(t.Mark("audit.warn", st.Warn, t.G.Warn))
		}
		b.WriteByte(' ')
		kind := theme.Pad(t.Clip(f.Kind, kindW), kindW)
		if sel && m.focused {
			kind = st.Selected.Render(kind)
		}
		b.WriteString(kind)
		where := f.Where
		if i < len(m.labels) {
			where = m.labels[i]
		}
		fmt.Fprintf(&b, " %s %*d %*d %*d", theme.Pad(where, nw), stateW, f.States, transW, f.Transitions, movesW, f.Moves)
		lines = append(lines, b.String())
	}
	detail := m.detail()
	for len(lines) < m.h-len(detail) {
		lines = append(lines, "")
	}
	return theme.Block(append(lines, detail...), m.w, m.h)
}

// detail is the selected finding's message, whole (up to three lines),
// and what enter does with it.
func (m Model) detail() []string {
	st, t := m.Styles, m.Styles.Theme
	i := m.Selected()
	if i < 0 {
		return nil
	}
	f := m.findings[i]
	steps := "1 step"
	if f.Rows != 1 {
		steps = fmt.Sprintf("%d steps", f.Rows)
	}
	text := fmt.Sprintf("%s %s: %s. enter walks its %s", t.G.Cursor, f.Kind, f.Message, steps)
	out := theme.Wrap(text, m.w)
	if len(out) > 3 {
		out = append(out[:2], t.Clip(out[2]+" "+strings.Join(out[3:], " "), m.w))
	}
	for j := range out {
		out[j] = st.Dim.Render(out[j])
	}
	return out
}
