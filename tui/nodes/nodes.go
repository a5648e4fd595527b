// Package nodes is the explorer's node board: every node but the rails and
// the inputs, outputs first, each with its state letter, logic value,
// strength, volts and (physical mode) margin, marked when the last settle
// changed it, when it is on the timeline, when a check on it failed, or,
// after a mode switch or a size tried, when its logic value differs from
// the session before (with that value beside the mark). '/' filters by name.
package nodes

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the board's keys.
type KeyMap struct {
	listing.Nav
	Filter  key.Binding
	Inspect key.Binding
	Watch   key.Binding
	// Drive are the input bank's keys: on the board they only say where
	// they work (the board lists no inputs).
	Drive key.Binding
}

// DefaultKeyMap: arrows to move, '/' to filter, enter to inspect, m to watch.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:     listing.DefaultNav(),
		Filter:  key.NewBinding(key.WithKeys("/"), key.WithHelp("/", "filter nodes")),
		Inspect: key.NewBinding(key.WithKeys("enter", "w"), key.WithHelp("enter/w", "why: inspect node")),
		Watch:   key.NewBinding(key.WithKeys("m"), key.WithHelp("m", "watch on timeline")),
		Drive:   key.NewBinding(key.WithKeys(" ", "0", "1", "x", "z"), key.WithHelp("space 0 1 x z", "inputs only")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Inspect, k.Filter, k.Watch} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Inspect, k.Filter, k.Watch}}
}

// Styles draw the board.
type Styles struct {
	Theme    *theme.Theme
	Name     lipgloss.Style
	Output   lipgloss.Style
	Header   lipgloss.Style
	Selected lipgloss.Style
	Changed  lipgloss.Style
	Watched  lipgloss.Style
	Fail     lipgloss.Style
	Differs  lipgloss.Style
	Dim      lipgloss.Style
}

// DefaultStyles takes the board's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Name: t.Text, Output: t.Bold, Header: t.Dim, Selected: t.Selected,
		Changed: t.Changed, Watched: t.Accent, Fail: t.Fail, Differs: t.Marked, Dim: t.Dim}
}

// row is a node, or a separator line (node < 0).
type row struct {
	node int
	sep  string
}

// Model is the node board.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	names   *panel.Names
	order   []int // outputs, then internal nodes by name
	nout    int
	nameMax int
	isOut   []bool
	states  []switchsim.NodeState
	changed []bool
	failing []bool
	watched []bool
	margins []float64         // by node: the noise margin in volts (NaN unknown); nil in ideal mode
	differs []bool            // by node: its value differs from the session before
	other   []switchsim.Value // by node: that value
	legend  string            // what they differ from ("3 differ from ideal")
	rows    []row
	cur     listing.Cursor
	filter  listing.Filter
	focused bool
	w, h    int
	labels  []string // by node: the name fitted to labelW
	labelW  int
}

// New makes a board for a netlist.
func New(nl *switchsim.Netlist, names *panel.Names, st Styles) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, names: names, filter: listing.NewFilter()}
	isOut := make([]bool, nl.NumNodes())
	for _, o := range nl.Outputs() {
		if nl.NodeKind(o) == switchsim.Internal && !isOut[o] {
			isOut[o] = true
			m.order = append(m.order, o)
		}
	}
	m.nout = len(m.order)
	m.isOut = isOut
	var rest []int
	for n := 0; n < nl.NumNodes(); n++ {
		if nl.NodeKind(n) == switchsim.Internal && !isOut[n] {
			rest = append(rest, n)
		}
	}
	sort.Slice(rest, func(i, j int) bool { return natLess(names.Node[rest[i]], names.Node[rest[j]]) })
	m.order = append(m.order, rest...)
	for _, n := range m.order {
		m.nameMax = max(m.nameMax, lipgloss.Width(names.Node[n]))
	}
	m.watched = make([]bool, nl.NumNodes())
	m.rebuild()
	return m
}

// SetSize gives the board its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 2) // title and column heads
	if nw := m.nameWidth(); nw != m.labelW || m.labels == nil {
		m.labelW = nw
		all := make([]string, len(m.order))
		for i, n := range m.order {
			all[i] = m.names.Node[n]
		}
		short := listing.Shorten(all, nw, m.Styles.Theme.G.Ellipsis)
		m.labels = make([]string, len(m.names.Node))
		for i, n := range m.order {
			m.labels[n] = short[i]
		}
	}
}

// nameWidth is the name column: what the longest name needs, within what
// the other columns leave.
func (m Model) nameWidth() int {
	return min(max(m.w-4-2-2-m.strengthW()-6-m.marginW(), 6), max(m.nameMax, 4))
}

// Want is the width the board needs to show its longest name whole.
func (m Model) Want() int { return 4 + m.nameMax + 1 + 2 + 2 + 7 + 5 + 2 + m.marginW() }

// marginW is the margin column's width with its space (0 without margins).
func (m Model) marginW() int {
	if m.margins == nil {
		return 0
	}
	return 6
}

// strengthW is the strength column's width with its space: 0 when the
// board is too narrow for it beside the margins (the state letter still
// tells a weak level from a strong one).
func (m Model) strengthW() int {
	if m.margins != nil && m.w-4-2-2-7-6-m.marginW() < min(m.nameMax, 12) {
		return 0
	}
	return 7
}

// Focus and Blur tell the board whether keys go to it.
func (m *Model) Focus()         { m.focused = true }
func (m *Model) Blur()          { m.focused = false }
func (m Model) Focused() bool   { return m.focused }
func (m Model) Filtering() bool { return m.filter.Typing() }

// SetStates gives the board every node's state, which nodes the last settle
// changed, and which failed a check (both indexed by node, may be nil).
func (m *Model) SetStates(states []switchsim.NodeState, changed, failing []bool) {
	m.states, m.changed, m.failing = states, changed, failing
}

// SetMargins gives every node's noise margin in volts (NaN where unknown),
// or nil (ideal mode) for no margin column.
func (m *Model) SetMargins(margins []float64) {
	had := m.margins != nil
	m.margins = margins
	if had != (margins != nil) {
		m.labels = nil // the name column's width changes
		m.SetSize(m.w, m.h)
	}
}

// SetWatched marks the nodes on the timeline (indexed by node).
func (m *Model) SetWatched(w []bool) { m.watched = w }

// SetDiffers marks the nodes whose logic value differs from the session
// before a mode switch or a size tried (indexed by node), with that value
// (other), and says in the title what they differ from (legend, "3
// differ from ideal"). nil clears the marks.
func (m *Model) SetDiffers(differs []bool, other []switchsim.Value, legend string) {
	m.differs, m.other, m.legend = differs, other, legend
	if differs == nil {
		m.legend = ""
	}
}

// Selected returns the node under the cursor, or -1.
func (m Model) Selected() int {
	if m.cur.Pos < len(m.rows) && m.rows[m.cur.Pos].node >= 0 {
		return m.rows[m.cur.Pos].node
	}
	return -1
}

// Select puts the cursor on node n if it is shown.
func (m *Model) Select(n int) bool {
	for i, r := range m.rows {
		if r.node == n {
			m.cur.Set(i)
			return true
		}
	}
	return false
}

// Shown is the number of nodes the filter lets through.
func (m Model) Shown() int {
	k := 0
	for _, r := range m.rows {
		if r.node >= 0 {
			k++
		}
	}
	return k
}

// StartFilter begins typing a filter.
func (m *Model) StartFilter() { m.filter.Start() }

// ClearFilter drops the filter; it reports whether there was one.
func (m *Model) ClearFilter() bool {
	had := m.filter.Active()
	m.filter.Clear()
	m.rebuild()
	return had
}

func (m *Model) rebuild() {
	keep := m.Selected()
	f := m.filter.Value()
	rows := make([]row, 0, len(m.rows))
	skip := make([]bool, 0, len(m.rows))
	sepOut, sepIn := false, false
	for i, n := range m.order {
		if !listing.Match(f, m.names.Node[n]) {
			continue
		}
		if i < m.nout && !sepOut {
			sepOut = true
			rows, skip = append(rows, row{-1, "outputs"}), append(skip, true)
		}
		if i >= m.nout && !sepIn {
			sepIn = true
			if sepOut {
				rows, skip = append(rows, row{-1, "internal"}), append(skip, true)
			}
		}
		rows, skip = append(rows, row{node: n}), append(skip, false)
	}
	m.rows, m.cur.Skip = rows, skip
	m.cur.SetLen(len(m.rows))
	if keep < 0 || !m.Select(keep) {
		m.cur.Top() // the selected node was filtered out: start from the first match
	}
}

// Update handles a key when the board is focused: inspecting or watching
// the selected node is an intent for the root (panel.Inspect, panel.Watch).
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
	n := m.Selected()
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
	case key.Matches(k, m.KeyMap.Filter):
		m.filter.Start()
	case key.Matches(k, m.KeyMap.Inspect) && n >= 0:
		return m, panel.Send(panel.Inspect{Node: n})
	case key.Matches(k, m.KeyMap.Watch) && n >= 0:
		return m, panel.Send(panel.Watch{Node: n})
	case key.Matches(k, m.KeyMap.Inspect, m.KeyMap.Watch):
		return m, panel.Send(panel.Note{Text: "no node selected"})
	case key.Matches(k, m.KeyMap.Drive):
		return m, panel.Send(panel.Note{Text: "space and 0 1 x z drive an input: the board lists no inputs; tab goes to Inputs"})
	}
	return m, nil
}

// View draws the board in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	lines := make([]string, 0, m.h)
	info := fmt.Sprintf("%d", len(m.order))
	if f := m.filter.View(); f != "" {
		info = fmt.Sprintf("%d of %d  %s", m.Shown(), len(m.order), f)
	}
	nameW := m.labelW
	if m.legend != "" {
		info += "  " + t.Mark("nodes.differs", st.Differs, g.Differs) + " " + m.legend
	}
	if n := m.Selected(); n >= 0 && m.focused && m.label(n, nameW) != m.names.Node[n] {
		info += "  " + m.names.Node[n] // the cut name, whole
	}
	lines = append(lines, t.TitleBar("Nodes", info, m.focused, m.w))
	// columns: marks(3) name state value strength volts margin
	head := fmt.Sprintf("    %-*s %s %s ", nameW, "name", "s", "v")
	if m.strengthW() > 0 {
		head += fmt.Sprintf("%-6s ", "str")
	}
	head += fmt.Sprintf("%5s", "volts")
	if m.margins != nil {
		head += fmt.Sprintf(" %5s", "mrgn")
	}
	lines = append(lines, st.Header.Render(head))
	if len(m.rows) == 0 {
		msg := "no nodes"
		if m.filter.Active() {
			msg = "no node matches " + m.filter.View()
		}
		lines = append(lines, st.Dim.Render("   "+msg))
	}
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		r := m.rows[i]
		if r.node < 0 {
			lines = append(lines, st.Dim.Render("  "+g.Rule+" "+r.sep+" "+strings.Repeat(g.Rule, max(m.w-len(r.sep)-6, 0))))
			continue
		}
		lines = append(lines, m.line(r.node, i == m.cur.Pos, nameW))
	}
	return theme.Block(lines, m.w, m.h)
}

func (m Model) label(n, w int) string {
	if n < len(m.labels) && m.labels[n] != "" {
		return m.labels[n]
	}
	return m.Styles.Theme.Clip(m.names.Node[n], w)
}

func (m Model) line(n int, sel bool, nameW int) string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	mark := func(on bool, name, glyph string, s lipgloss.Style) string {
		if on {
			return t.Mark(name, s, glyph)
		}
		return " "
	}
	cur := " "
	if sel && m.focused {
		cur = g.Cursor
	}
	var b strings.Builder
	b.WriteString(cur)
	b.WriteString(mark(at(m.changed, n), "nodes.changed", g.Changed, st.Changed))
	b.WriteString(mark(at(m.watched, n), "nodes.watched", g.Watched, st.Watched))
	b.WriteByte(' ')
	name := theme.Pad(m.label(n, nameW), nameW)
	if n < len(m.states) {
		ns := m.states[n]
		switch {
		case sel && m.focused:
			b.WriteString(st.Selected.Render(name))
		case m.isOutput(n):
			b.WriteString(st.Output.Render(name))
		default:
			b.WriteString(name) // plain: no style to draw
		}
		b.WriteByte(' ')
		b.WriteString(t.StateLetter(ns.State))
		b.WriteByte(' ')
		b.WriteString(ns.Value.String())
		b.WriteByte(' ')
		if m.strengthW() > 0 {
			fmt.Fprintf(&b, "%-6s ", ns.Strength)
		}
		fmt.Fprintf(&b, "%5s", panel.Volts(ns.Volts))
		if m.margins != nil {
			mg := "-"
			if n < len(m.margins) && !math.IsNaN(m.margins[n]) {
				mg = fmt.Sprintf("%.2f", m.margins[n])
			}
			fmt.Fprintf(&b, " %5s", mg)
		}
	} else {
		b.WriteString(name)
	}
	if at(m.failing, n) {
		b.WriteString(" " + t.Mark("nodes.fail", st.Fail, g.Fail))
	}
	if at(m.differs, n) && n < len(m.other) {
		b.WriteString(" " + t.Mark("nodes.differs", st.Differs, g.Differs) + m.other[n].String())
	}
	return b.String()
}

func (m Model) isOutput(n int) bool { return at(m.isOut, n) }

func at(b []bool, i int) bool { return i >= 0 && i < len(b) && b[i] }

// natLess orders names with their numbers by value: b2 before b10.
func natLess(a, b string) bool {
	for a != "" && b != "" {
		ca, cb := a[0], b[0]
		if isDigit(ca) && isDigit(cb) {
			na, ra := digits(a)
			nb, rb := digits(b)
			if len(na) != len(nb) {
				return len(na) < len(nb)
			}
			if na != nb {
				return na < nb
			}
			a, b = ra, rb
			continue
		}
		if ca != cb {
			return ca < cb
		}
		a, b = a[1:], b[1:]
	}
	return len(a) < len(b)
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func digits(s string) (string, string) {
	i := 0
	for i < len(s) && isDigit(s[i]) {
		i++
	}
	num := strings.TrimLeft(s[:i], "0")
	return num, s[i:]
}
