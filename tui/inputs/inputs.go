// Package inputs is the explorer's input bank: the design's primary inputs
// with the drive applied to each and the state it gives, where space or
// enter toggles the selected input and 0 1 x z set it directly.
package inputs

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

// KeyMap are the bank's keys.
type KeyMap struct {
	listing.Nav
	Toggle                 key.Binding
	Set0, Set1, SetX, SetZ key.Binding
	Watch                  key.Binding
}

// DefaultKeyMap: space or enter toggles; 0 1 x z set.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:    listing.DefaultNav(),
		Toggle: key.NewBinding(key.WithKeys(" ", "enter"), key.WithHelp("space", "toggle input")),
		Set0:   key.NewBinding(key.WithKeys("0"), key.WithHelp("0", "drive 0")),
		Set1:   key.NewBinding(key.WithKeys("1"), key.WithHelp("1", "drive 1")),
		SetX:   key.NewBinding(key.WithKeys("x"), key.WithHelp("x", "drive x")),
		SetZ:   key.NewBinding(key.WithKeys("z"), key.WithHelp("z", "release (float)")),
		Watch:  key.NewBinding(key.WithKeys("m"), key.WithHelp("m", "watch on timeline")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Toggle, k.Set0, k.Set1, k.SetX, k.SetZ}
}
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down}, {k.Toggle, k.Set0, k.Set1, k.SetX, k.SetZ, k.Watch}}
}

// Styles draw the bank.
type Styles struct {
	Theme    *theme.Theme
	Name     lipgloss.Style
	Selected lipgloss.Style
	Drive    lipgloss.Style
	Dim      lipgloss.Style
	Changed  lipgloss.Style
	Watched  lipgloss.Style
}

// DefaultStyles takes the bank's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Name: t.Text, Selected: t.Selected, Drive: t.Bold, Dim: t.Dim,
		Changed: t.Changed, Watched: t.Accent}
}

// Request is what a key asks of the root model.
type Request struct {
	Kind  RequestKind
	Node  int
	Drive switchsim.Drive
}

// RequestKind says what a Request wants.
type RequestKind uint8

const (
	None   RequestKind = iota
	Toggle             // flip Node
	Set                // drive Node with Drive
	Watch              // put Node on the timeline
)

// Model is the input bank.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	nl      *switchsim.Netlist
	inputs  []int
	drives  []switchsim.Drive // parallel to inputs
	states  []switchsim.NodeState
	changed []bool
	watched []bool
	cur     listing.Cursor
	focused bool
	w, h    int
}

// New makes a bank for a netlist's inputs.
func New(nl *switchsim.Netlist, st Styles) *Model {
	m := &Model{KeyMap: DefaultKeyMap(), Styles: st, nl: nl, inputs: nl.Inputs()}
	m.drives = make([]switchsim.Drive, len(m.inputs))
	m.cur.SetLen(len(m.inputs))
	return m
}

// Rows is the number of lines the bank wants: its title and one per input.
func (m *Model) Rows() int { return 1 + max(len(m.inputs), 1) }

// SetSize gives the bank its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 1)
}

// Want is the width the bank needs for its longest name and a released
// input's note.
func (m *Model) Want() int { return 4 + m.maxName() + 3 + 1 + 19 }

// Focus and Blur tell the bank whether keys go to it.
func (m *Model) Focus()        { m.focused = true }
func (m *Model) Blur()         { m.focused = false }
func (m *Model) Focused() bool { return m.focused }

// SetStates gives the bank each input's drive (parallel to the netlist's
// inputs), every node's state, and which nodes the last settle changed.
func (m *Model) SetStates(drives []switchsim.Drive, states []switchsim.NodeState, changed []bool) {
	m.drives, m.states, m.changed = drives, states, changed
}

// SetWatched marks the nodes on the timeline.
func (m *Model) SetWatched(w []bool) { m.watched = w }

// Selected is the input under the cursor, or -1 for a design without inputs.
func (m *Model) Selected() int {
	if m.cur.Pos < len(m.inputs) {
		return m.inputs[m.cur.Pos]
	}
	return -1
}

// Select puts the cursor on input n.
func (m *Model) Select(n int) bool {
	for i, in := range m.inputs {
		if in == n {
			m.cur.Set(i)
			return true
		}
	}
	return false
}

// Update handles a key; the request says what the root should do.
func (m *Model) Update(msg tea.Msg) Request {
	k, ok := msg.(tea.KeyMsg)
	if !ok || len(m.inputs) == 0 {
		return Request{}
	}
	n := m.Selected()
	km := m.KeyMap
	switch {
	case km.Nav.Handle(k, &m.cur):
	case key.Matches(k, km.Toggle):
		return Request{Kind: Toggle, Node: n}
	case key.Matches(k, km.Set0):
		return Request{Kind: Set, Node: n, Drive: switchsim.Drive0}
	case key.Matches(k, km.Set1):
		return Request{Kind: Set, Node: n, Drive: switchsim.Drive1}
	case key.Matches(k, km.SetX):
		return Request{Kind: Set, Node: n, Drive: switchsim.DriveX}
	case key.Matches(k, km.SetZ):
		return Request{Kind: Set, Node: n, Drive: switchsim.DriveZ}
	case key.Matches(k, km.Watch):
		return Request{Kind: Watch, Node: n}
	}
	return Request{}
}

// View draws the bank in its w x h cells.
func (m *Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	lines := []string{t.TitleBar("Inputs", fmt.Sprintf("%d", len(m.inputs)), m.focused, m.w)}
	if len(m.inputs) == 0 {
		lines = append(lines, st.Dim.Render("   this design has no inputs"))
	}
	nameW := max(min(m.maxName(), m.w-17), 4)
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		n := m.inputs[i]
		var b strings.Builder
		switch {
		case i == m.cur.Pos && m.focused:
			b.WriteString(g.Cursor)
		default:
			b.WriteByte(' ')
		}
		if n < len(m.changed) && m.changed[n] {
			b.WriteString(t.Mark(&m.Styles.Changed, g.Changed))
		} else {
			b.WriteByte(' ')
		}
		if n < len(m.watched) && m.watched[n] {
			b.WriteString(t.Mark(&m.Styles.Watched, g.Watched))
		} else {
			b.WriteByte(' ')
		}
		b.WriteByte(' ')
		name := t.Clip(m.nl.NodeName(n), nameW)
		name += strings.Repeat(" ", nameW-lipgloss.Width(name))
		ns := st.Name
		if i == m.cur.Pos && m.focused {
			ns = st.Selected
		}
		b.WriteString(ns.Render(name))
		b.WriteString(" = ")
		b.WriteString(t.Mark(&m.Styles.Drive, m.drives[i].String()))
		// a driven input is what it is given; a released one floats
		if n < len(m.states) && m.drives[i] == switchsim.DriveZ {
			b.WriteString("  " + t.StateLetter(m.states[n].State))
			b.WriteString(st.Dim.Render(" floats, holds " + m.states[n].Value.String()))
		}
		lines = append(lines, b.String())
	}
	return theme.Block(lines, m.w, m.h)
}

func (m *Model) maxName() int {
	w := 0
	for _, n := range m.inputs {
		w = max(w, lipgloss.Width(m.nl.NodeName(n)))
	}
	return w
}
