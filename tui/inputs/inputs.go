// Package inputs is the explorer's input bank: the design's primary inputs
// with the drive applied to each and the state it gives, where space or
// enter toggles the selected input, 0 1 x z set it directly, and '/'
// filters the bank by name (a design may have dozens of inputs).
package inputs

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

// KeyMap are the bank's keys.
type KeyMap struct {
	listing.Nav
	Toggle                 key.Binding
	Set0, Set1, SetX, SetZ key.Binding
	Watch                  key.Binding
	Filter                 key.Binding
}

// DefaultKeyMap: space or enter toggles; 0 1 x z set; / filters.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:    listing.DefaultNav(),
		Toggle: key.NewBinding(key.WithKeys(" ", "enter"), key.WithHelp("space", "toggle input")),
		Set0:   key.NewBinding(key.WithKeys("0"), key.WithHelp("0", "drive 0")),
		Set1:   key.NewBinding(key.WithKeys("1"), key.WithHelp("1", "drive 1")),
		SetX:   key.NewBinding(key.WithKeys("x"), key.WithHelp("x", "drive x")),
		SetZ:   key.NewBinding(key.WithKeys("z"), key.WithHelp("z", "release (float)")),
		Watch:  key.NewBinding(key.WithKeys("m"), key.WithHelp("m", "watch on timeline")),
		Filter: key.NewBinding(key.WithKeys("/"), key.WithHelp("/", "filter inputs")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Toggle, k.Set0, k.Set1, k.SetX, k.SetZ}
}
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down}, {k.Toggle, k.Set0, k.Set1, k.SetX, k.SetZ, k.Watch, k.Filter}}
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

// Model is the input bank.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	names   *panel.Names
	inputs  []int
	drives  []switchsim.Drive // parallel to inputs
	states  []switchsim.NodeState
	changed []bool
	watched []bool
	rows    []int // indices into inputs that the filter lets through
	filter  listing.Filter
	cur     listing.Cursor
	focused bool
	w, h    int
	labels  []string // names fitted to labelW, parallel to inputs
	labelW  int
}

// New makes a bank for a netlist's inputs (nl.Inputs(), names from names).
func New(inputs []int, names *panel.Names, st Styles) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, names: names, inputs: inputs, filter: listing.NewFilter()}
	m.drives = make([]switchsim.Drive, len(m.inputs))
	m.rebuild()
	return m
}

// Rows is the number of lines the bank wants: its title and one per input.
func (m Model) Rows() int { return 1 + max(len(m.inputs), 1) }

// SetSize gives the bank its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 1)
	if nw := m.nameWidth(); nw != m.labelW || m.labels == nil {
		m.labelW = nw
		all := make([]string, len(m.inputs))
		for i, n := range m.inputs {
			all[i] = m.names.Node[n]
		}
		m.labels = listing.Shorten(all, nw, m.Styles.Theme.G.Ellipsis)
	}
}

func (m Model) nameWidth() int { return max(min(m.maxName(), m.w-17), 4) }

// Want is the width the bank needs for its longest name and a released
// input's note.
func (m Model) Want() int { return 4 + m.maxName() + 3 + 1 + 19 }

// Focus and Blur tell the bank whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// Filtering reports whether keys go to the filter being typed.
func (m Model) Filtering() bool { return m.filter.Typing() }

// ClearFilter drops the filter; it reports whether there was one.
func (m *Model) ClearFilter() bool {
	had := m.filter.Active()
	m.filter.Clear()
	m.rebuild()
	return had
}

// SetStates gives the bank each input's drive (parallel to the inputs),
// every node's state, and which nodes the last settle changed.
func (m *Model) SetStates(drives []switchsim.Drive, states []switchsim.NodeState, changed []bool) {
	m.drives, m.states, m.changed = drives, states, changed
}

// SetWatched marks the nodes on the timeline.
func (m *Model) SetWatched(w []bool) { m.watched = w }

// Selected is the input under the cursor, or -1 (no inputs, or none
// matches the filter).
func (m Model) Selected() int {
	if m.cur.Pos < len(m.rows) {
		return m.inputs[m.rows[m.cur.Pos]]
	}
	return -1
}

// Shown is the number of inputs the filter lets through.
func (m Model) Shown() int { return len(m.rows) }

func (m *Model) rebuild() {
	keep := m.Selected()
	f := m.filter.Value()
	m.rows = m.rows[:0]
	for i, n := range m.inputs {
		if listing.Match(f, m.names.Node[n]) {
			m.rows = append(m.rows, i)
		}
	}
	m.cur.SetLen(len(m.rows))
	m.cur.Top()
	for r, i := range m.rows {
		if m.inputs[i] == keep {
			m.cur.Set(r)
		}
	}
}

// Update handles a key. Driving or watching the selected input is an
// intent for the root (panel.SetInput, panel.Watch).
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	if took, changed := m.filter.Take(k); took {
		if changed {
			m.rebuild()
		}
		return m, nil
	}
	km := m.KeyMap
	if key.Matches(k, km.Filter) {
		m.filter.Start()
		return m, nil
	}
	n := m.Selected()
	if n < 0 {
		switch {
		case key.Matches(k, km.Toggle, km.Set0, km.Set1, km.SetX, km.SetZ, km.Watch):
			if len(m.inputs) == 0 {
				return m, panel.Send(panel.Note{Text: "this design has no inputs: n applies its steps"})
			}
			return m, panel.Send(panel.Note{Text: "no input matches the filter " + m.filter.View() + ": esc clears it"})
		}
		return m, nil
	}
	switch {
	case km.Nav.Handle(k, &m.cur):
	case key.Matches(k, km.Toggle):
		return m, panel.Send(panel.SetInput{Node: n, Toggle: true})
	case key.Matches(k, km.Set0):
		return m, panel.Send(panel.SetInput{Node: n, Drive: switchsim.Drive0})
	case key.Matches(k, km.Set1):
		return m, panel.Send(panel.SetInput{Node: n, Drive: switchsim.Drive1})
	case key.Matches(k, km.SetX):
		return m, panel.Send(panel.SetInput{Node: n, Drive: switchsim.DriveX})
	case key.Matches(k, km.SetZ):
		return m, panel.Send(panel.SetInput{Node: n, Drive: switchsim.DriveZ})
	case key.Matches(k, km.Watch):
		return m, panel.Send(panel.Watch{Node: n})
	}
	return m, nil
}

// View draws the bank in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	info := fmt.Sprintf("%d", len(m.inputs))
	if f := m.filter.View(); f != "" {
		info = fmt.Sprintf("%d of %d  %s", len(m.rows), len(m.inputs), f)
	}
	lines := []string{t.TitleBar("Inputs", info, m.focused, m.w)}
	switch {
	case len(m.inputs) == 0:
		lines = append(lines, st.Dim.Render("   this design has no inputs"))
	case len(m.rows) == 0:
		lines = append(lines, st.Dim.Render("   no input matches"))
	}
	nameW := m.labelW
	lo, hi := m.cur.Window()
	for r := lo; r < hi; r++ {
		i := m.rows[r]
		n := m.inputs[i]
		sel := r == m.cur.Pos && m.focused
		var b strings.Builder
		if sel {
			b.WriteString(g.Cursor)
		} else {
			b.WriteByte(' ')
		}
		if n < len(m.changed) && m.changed[n] {
			b.WriteString(t.Mark("inputs.changed", st.Changed, g.Changed))
		} else {
			b.WriteByte(' ')
		}
		if n < len(m.watched) && m.watched[n] {
			b.WriteString(t.Mark("inputs.watched", st.Watched, g.Watched))
		} else {
			b.WriteByte(' ')
		}
		b.WriteByte(' ')
		name := m.names.Node[n]
		if i < len(m.labels) {
			name = m.labels[i]
		}
		name = theme.Pad(t.Clip(name, nameW), nameW)
		if sel {
			b.WriteString(st.Selected.Render(name))
		} else {
			b.WriteString(st.Name.Render(name))
		}
		b.WriteString(" = ")
		d := switchsim.DriveX
		if i < len(m.drives) {
			d = m.drives[i]
		}
		b.WriteString(t.Mark("inputs.drive", st.Drive, d.String()))
		// a driven input is what it is given; a released one floats
		if n < len(m.states) && d == switchsim.DriveZ {
			b.WriteString("  " + t.StateLetter(m.states[n].State))
			b.WriteString(st.Dim.Render(" floats, holds " + m.states[n].Value.String()))
		}
		lines = append(lines, b.String())
	}
	return theme.Block(lines, m.w, m.h)
}

func (m Model) maxName() int {
	w := 0
	for _, n := range m.inputs {
		w = max(w, lipgloss.Width(m.names.Node[n]))
	}
	return w
}
