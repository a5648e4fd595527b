// Package devices is the explorer's device table: every transistor and
// pull with its gate's value and whether it is on, off or of unknown state,
// filterable by name, with the devices of the inspected node's group marked.
package devices

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/tui/listing"
	"railyard/tui/theme"
)

// KeyMap are the table's keys.
type KeyMap struct {
	listing.Nav
	Filter    key.Binding
	GroupOnly key.Binding
}

// DefaultKeyMap: arrows, '/' to filter, o to show only the marked group.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:       listing.DefaultNav(),
		Filter:    key.NewBinding(key.WithKeys("/"), key.WithHelp("/", "filter devices")),
		GroupOnly: key.NewBinding(key.WithKeys("o"), key.WithHelp("o", "only the node's group")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Filter, k.GroupOnly} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Filter, k.GroupOnly}}
}

// Styles draw the table.
type Styles struct {
	Theme    *theme.Theme
	Header   lipgloss.Style
	Selected lipgloss.Style
	Group    lipgloss.Style
	On       lipgloss.Style
	Off      lipgloss.Style
	Unknown  lipgloss.Style
	Dim      lipgloss.Style
}

// DefaultStyles takes the table's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Header: t.Dim, Selected: t.Selected, Group: t.Marked,
		On: t.Pass, Off: t.Dim, Unknown: t.State[switchsim.StateX], Dim: t.Dim}
}

// Model is the device table.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	nl        *switchsim.Netlist
	cond      []switchsim.Conduction
	vals      []switchsim.Value // by node
	group     []bool            // by device
	groupOf   string
	groupOnly bool
	search    []string // per device: the words a filter matches
	nameMax   int
	rows      []int
	cur       listing.Cursor
	filter    listing.Filter
	focused   bool
	w, h      int
}

// New makes a table for a netlist.
func New(nl *switchsim.Netlist, st Styles) *Model {
	m := &Model{KeyMap: DefaultKeyMap(), Styles: st, nl: nl, filter: listing.NewFilter()}
	m.search = make([]string, nl.NumDevices())
	for d := range m.search {
		dv := nl.Device(d)
		w := []string{dv.Name, nl.NodeName(dv.A), nl.NodeName(dv.B)}
		if dv.Gate >= 0 {
			w = append(w, nl.NodeName(dv.Gate))
		}
		m.search[d] = strings.Join(w, " ")
		m.nameMax = max(m.nameMax, lipgloss.Width(dv.Name))
	}
	m.rebuild()
	return m
}

// SetSize gives the table its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 2) // info and column heads
}

// Focus and Blur tell the table whether keys go to it.
func (m *Model) Focus()             { m.focused = true }
func (m *Model) Blur()              { m.focused = false }
func (m *Model) Focused() bool      { return m.focused }
func (m *Model) Filtering() bool    { return m.filter.Typing() }
func (m *Model) StartFilter()       { m.filter.Start() }
func (m *Model) FilterText() string { return m.filter.Value() }

// ClearFilter drops the filter and the group-only view; it reports whether
// either was in force.
func (m *Model) ClearFilter() bool {
	had := m.filter.Active() || m.groupOnly
	m.filter.Clear()
	m.groupOnly = false
	m.rebuild()
	return had
}

// SetStates gives each device's conduction and every node's value.
func (m *Model) SetStates(cond []switchsim.Conduction, vals []switchsim.Value) {
	m.cond, m.vals = cond, vals
}

// SetGroup marks the devices of a node's group (indexed by device).
func (m *Model) SetGroup(node string, group []bool) {
	m.groupOf, m.group = node, group
	if m.groupOnly {
		m.rebuild()
	}
}

// Shown is the number of devices listed.
func (m *Model) Shown() int { return len(m.rows) }

// Selected is the device under the cursor, or -1.
func (m *Model) Selected() int {
	if m.cur.Pos < len(m.rows) {
		return m.rows[m.cur.Pos]
	}
	return -1
}

func (m *Model) rebuild() {
	keep := m.Selected()
	m.rows = m.rows[:0]
	f := m.filter.Value()
	for d := range m.search {
		if m.groupOnly && !(d < len(m.group) && m.group[d]) {
			continue
		}
		if listing.Match(f, m.search[d]) {
			m.rows = append(m.rows, d)
		}
	}
	m.cur.SetLen(len(m.rows))
	for i, d := range m.rows {
		if d == keep {
			m.cur.Set(i)
		}
	}
}

// Update handles a key when the table is focused.
func (m *Model) Update(msg tea.Msg) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return
	}
	if m.filter.Typing() {
		if m.filter.Update(k) {
			m.rebuild()
		}
		return
	}
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
	case key.Matches(k, m.KeyMap.Filter):
		m.filter.Start()
	case key.Matches(k, m.KeyMap.GroupOnly):
		m.groupOnly = !m.groupOnly
		m.rebuild()
	}
}

// View draws the table in its w x h cells.
func (m *Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	nameW := min(max(m.nameMax, 6), max(m.w*3/10, 6))
	gateW := max(min(m.w/5, 12), 7)
	kindW := 6
	if m.w < 60 {
		kindW = 4 // nmos, pmos, pull: the channel names the rail of a pull
	}
	info := fmt.Sprintf("%d", len(m.search))
	if m.filter.Active() || m.groupOnly {
		info = fmt.Sprintf("%d of %d", len(m.rows), len(m.search))
	}
	if m.groupOf != "" {
		info += fmt.Sprintf("  %s group of %s", g.Group, m.groupOf)
		if m.groupOnly {
			info += " only"
		}
	}
	if f := m.filter.View(); f != "" {
		info += "  " + f
	}
	lines := []string{
		st.Dim.Render(t.Clip("devices "+info, m.w)),
		st.Header.Render(fmt.Sprintf("  %-*s %-*s %-*s %-3s %s", nameW, "name", kindW, "kind", gateW, "gate", "is", "channel")),
	}
	if len(m.rows) == 0 {
		msg := "no devices"
		if m.filter.Active() || m.groupOnly {
			msg = "no device matches"
		}
		lines = append(lines, st.Dim.Render("  "+msg))
	}
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		d := m.rows[i]
		dv := m.nl.Device(d)
		var b strings.Builder
		sel := i == m.cur.Pos
		switch {
		case sel && m.focused:
			b.WriteString(g.Cursor)
		default:
			b.WriteByte(' ')
		}
		inGroup := d < len(m.group) && m.group[d]
		if inGroup {
			b.WriteString(t.Mark(&m.Styles.Group, g.Group))
		} else {
			b.WriteByte(' ')
		}
		name := t.Clip(dv.Name, nameW)
		name += strings.Repeat(" ", nameW-lipgloss.Width(name))
		switch {
		case sel && m.focused:
			name = st.Selected.Render(name)
		case inGroup:
			name = st.Group.Render(name)
		}
		b.WriteString(name)
		fmt.Fprintf(&b, " %-*s ", kindW, kindName(dv.Kind, kindW))
		gate := "-"
		if dv.Gate >= 0 {
			v := "?"
			if dv.Gate < len(m.vals) {
				v = m.vals[dv.Gate].String()
			}
			gate = t.Clip(m.nl.NodeName(dv.Gate), gateW-2) + "=" + v
		}
		b.WriteString(theme.Pad(gate, gateW))
		b.WriteByte(' ')
		c := switchsim.On
		if d < len(m.cond) {
			c = m.cond[d]
		}
		switch c {
		case switchsim.On:
			b.WriteString(t.Mark(&m.Styles.On, "on "))
		case switchsim.Off:
			b.WriteString(t.Mark(&m.Styles.Off, "off"))
		default:
			b.WriteString(t.Mark(&m.Styles.Unknown, "X? "))
		}
		b.WriteByte(' ')
		b.WriteString(m.nl.NodeName(dv.A) + g.Rule + m.nl.NodeName(dv.B))
		lines = append(lines, b.String())
	}
	return theme.Block(lines, m.w, m.h)
}

// kindName fits a device kind in w cells (4 or 6).
func kindName(k switchsim.DeviceKind, w int) string {
	switch {
	case k >= switchsim.PullUp && w < 6:
		return "pull"
	case k == switchsim.PullUp:
		return "pullup"
	case k == switchsim.PullDown:
		return "pulldn"
	}
	return k.String()
}
