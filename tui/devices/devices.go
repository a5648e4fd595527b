// Package devices is the explorer's device table: every transistor and
// pull with its gate's value (and volts, where they are not a full level),
// whether it is on, off or of unknown state, and its size, filterable by
// name, with the devices of the inspected node's group marked. Enter on a
// row asks why its gate holds its value; W asks for another size to try.
package devices

import (
	"fmt"
	"math"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the table's keys.
type KeyMap struct {
	listing.Nav
	Filter    key.Binding
	GroupOnly key.Binding
	Inspect   key.Binding
	Size      key.Binding
}

// DefaultKeyMap: arrows, '/' to filter, o to show only the marked group,
// enter to ask why the selected device's gate holds its value.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:       listing.DefaultNav(),
		Filter:    key.NewBinding(key.WithKeys("/"), key.WithHelp("/", "filter devices")),
		GroupOnly: key.NewBinding(key.WithKeys("o"), key.WithHelp("o", "only the node's group")),
		Inspect:   key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "why: its gate")),
		Size:      key.NewBinding(key.WithKeys("W"), key.WithHelp("W", "try another W or L")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Inspect, k.Size, k.Filter, k.GroupOnly}
}
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Inspect, k.Size, k.Filter, k.GroupOnly}}
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
	names     *panel.Names
	cond      []switchsim.Conduction
	states    []switchsim.NodeState // by node
	vdd       float64
	ohms      []float64        // by device: on-resistance, NaN where not known
	bias      []switchsim.Bias // by device: physical mode's bias (nil in ideal mode)
	loaded    map[int]string   // devices with a size tried: their W/L as loaded
	group     []bool           // by device
	groupOf   string
	groupOnly bool
	search    []string // per device: the words a filter matches
	nameMax   int
	rows      []int
	cur       listing.Cursor
	filter    listing.Filter
	focused   bool
	w, h      int
	labels    []string // by device: the name fitted to labelW
	labelW    int
}

// New makes a table for a netlist.
func New(nl *switchsim.Netlist, names *panel.Names, st Styles) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, nl: nl, names: names, filter: listing.NewFilter(), vdd: math.NaN()}
	m.search = make([]string, nl.NumDevices())
	for d := range m.search {
		dv := nl.Device(d)
		w := []string{names.Device[d], names.Node[dv.A], names.Node[dv.B]}
		if dv.Gate >= 0 {
			w = append(w, names.Node[dv.Gate])
		}
		m.search[d] = strings.Join(w, " ")
		m.nameMax = max(m.nameMax, lipgloss.Width(names.Device[d]))
	}
	m.rebuild()
	return m
}

// SetSize gives the table its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(h - 3) // info, column heads, the selected device's line
	if nw := m.nameWidth(); nw != m.labelW || m.labels == nil {
		m.labelW = nw
		m.labels = listing.Shorten(m.names.Device, nw, m.Styles.Theme.G.Ellipsis)
	}
}

func (m Model) nameWidth() int { return min(max(m.nameMax, 6), max(m.w*3/10, 6)) }

// Focus and Blur tell the table whether keys go to it.
func (m *Model) Focus()            { m.focused = true }
func (m *Model) Blur()             { m.focused = false }
func (m Model) Focused() bool      { return m.focused }
func (m Model) Filtering() bool    { return m.filter.Typing() }
func (m *Model) StartFilter()      { m.filter.Start() }
func (m Model) FilterText() string { return m.filter.Value() }

// ClearFilter drops the filter and the group-only view; it reports whether
// either was in force.
func (m *Model) ClearFilter() bool {
	had := m.filter.Active() || m.groupOnly
	m.filter.Clear()
	m.groupOnly = false
	m.rebuild()
	return had
}

// SetNetlist gives the netlist after a size was tried or a corner
// switched (the same devices and nodes, other sizes or technology),
// keeping the cursor and the filter.
func (m *Model) SetNetlist(nl *switchsim.Netlist) { m.nl = nl }

// SetTried gives the devices whose size was tried, with their W/L as
// loaded (size words it), shown beside the size in force.
func (m *Model) SetTried(loaded map[int]switchsim.Device) {
	m.loaded = map[int]string{}
	for d, dv := range loaded {
		m.loaded[d] = size(dv)
	}
}

// SetStates gives each device's conduction, every node's state and the
// supply's volts (NaN in ideal mode), so that a gate's volts are shown
// where they are not a full level.
func (m *Model) SetStates(cond []switchsim.Conduction, states []switchsim.NodeState, vdd float64) {
	m.cond, m.states, m.vdd = cond, states, vdd
}

// SetBias gives each device's bias in physical mode (nil in ideal): a
// device off by logic whose gate passes its threshold shows as partly on,
// with its static current in the selected device's line.
func (m *Model) SetBias(b []switchsim.Bias) { m.bias = b }

// partly reports whether device d is partly on.
func (m Model) partly(d int) bool { return d < len(m.bias) && m.bias[d].PartlyOn }

// SetOhms gives each device's on-resistance estimate in ohms (NaN where
// there is none); the table shows the column when any is known.
func (m *Model) SetOhms(ohms []float64) { m.ohms = ohms }

// SetGroup marks the devices of a node's group (indexed by device).
func (m *Model) SetGroup(node string, group []bool) {
	m.groupOf, m.group = node, group
	if m.groupOnly {
		m.rebuild()
	}
}

// Shown is the number of devices listed.
func (m Model) Shown() int { return len(m.rows) }

// Selected is the device under the cursor, or -1.
func (m Model) Selected() int {
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

// Update handles a key when the table is focused. Enter asks the root for
// the Why view of the device's gate (a pull has none: of the node it pulls).
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
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
	case key.Matches(k, m.KeyMap.Filter):
		m.filter.Start()
	case key.Matches(k, m.KeyMap.GroupOnly):
		m.groupOnly = !m.groupOnly
		m.rebuild()
	case key.Matches(k, m.KeyMap.Inspect):
		d := m.Selected()
		if d < 0 {
			return m, panel.Send(panel.Note{Text: "no device selected"})
		}
		dv := m.nl.Device(d)
		n := dv.Gate
		if n < 0 {
			n = dv.A
			if m.nl.NodeKind(n) == switchsim.Power || m.nl.NodeKind(n) == switchsim.Ground {
				n = dv.B
			}
		}
		return m, panel.Send(panel.Inspect{Node: n})
	case key.Matches(k, m.KeyMap.Size):
		d := m.Selected()
		if d < 0 {
			return m, panel.Send(panel.Note{Text: "no device selected"})
		}
		dv := m.nl.Device(d)
		switch {
		case dv.Kind != switchsim.NMOS && dv.Kind != switchsim.PMOS:
			return m, panel.Send(panel.Note{Text: m.names.Device[d] + " is a " + dv.Kind.String() + ": it has no W/L to try (only transistors have)"})
		case dv.Ohms > 0:
			return m, panel.Send(panel.Note{Text: m.names.Device[d] + " has a resistance of its own: its W/L would change nothing"})
		}
		return m, panel.Send(panel.AskSize{Device: d})
	}
	return m, nil
}

// View draws the table in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	nameW := m.labelW
	kindW := 6
	if m.w < 60 {
		kindW = 4 // nmos, pmos, pull: the channel names the rail of a pull
	}
	gateW := max(min(m.w/5, 12), 7)
	partial := m.anyPartialGate()
	if partial {
		gateW += 6 // room for " 1.14V": the channel is cut first
	}
	showWL := m.w >= 72
	showOhms := showWL && m.anyOhms()
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
	head := fmt.Sprintf("  %-*s %-*s %-*s %-3s ", nameW, "name", kindW, "kind", gateW, "gate", "is")
	if showWL {
		head += fmt.Sprintf("%-9s ", "W/L um")
	}
	if showOhms {
		head += fmt.Sprintf("%-9s ", "R on")
	}
	lines := []string{
		st.Dim.Render(t.Clip("devices "+info, m.w)),
		st.Header.Render(head + "channel"),
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
			b.WriteString(t.Mark("devices.group", st.Group, g.Group))
		} else {
			b.WriteByte(' ')
		}
		name := theme.Pad(t.Clip(m.label(d), nameW), nameW)
		switch {
		case sel && m.focused:
			name = st.Selected.Render(name)
		case inGroup:
			name = st.Group.Render(name)
		}
		b.WriteString(name)
		fmt.Fprintf(&b, " %-*s ", kindW, kindName(dv.Kind, kindW))
		b.WriteString(theme.Pad(m.gateCell(dv, gateW, partial), gateW))
		b.WriteByte(' ')
		b.WriteString(m.condCell(d))
		b.WriteByte(' ')
		if showWL {
			b.WriteString(theme.Pad(size(dv), 9) + " ")
		}
		if showOhms {
			r := math.NaN()
			if d < len(m.ohms) {
				r = m.ohms[d]
			}
			if math.IsNaN(r) {
				b.WriteString(theme.Pad("-", 9) + " ")
			} else {
				b.WriteString(theme.Pad(panel.Ohms(r), 9) + " ")
			}
		}
		b.WriteString(m.names.Node[dv.A] + g.Rule + m.names.Node[dv.B])
		lines = append(lines, b.String())
	}
	for len(lines) < m.h-1 {
		lines = append(lines, "")
	}
	lines = append(lines, m.detail())
	return theme.Block(lines, m.w, m.h)
}

func (m Model) label(d int) string {
	if d < len(m.labels) {
		return m.labels[d]
	}
	return m.names.Device[d]
}

// gateCell words a device's gate: name=value, with its volts where they
// are not a full level and withVolts.
func (m Model) gateCell(dv switchsim.Device, w int, withVolts bool) string {
	t := m.Styles.Theme
	if dv.Gate < 0 {
		return "-"
	}
	v, volts := "?", ""
	if dv.Gate < len(m.states) {
		ns := m.states[dv.Gate]
		v = ns.Value.String()
		if withVolts && !panel.FullLevel(ns.Volts, m.vdd) {
			volts = " " + panel.Volts(ns.Volts) + "V"
		}
	}
	return t.Clip(m.names.Node[dv.Gate], max(w-2-len(volts), 1)) + "=" + v + volts
}

func (m Model) condCell(d int) string {
	st, t := m.Styles, m.Styles.Theme
	c := switchsim.On
	if d < len(m.cond) {
		c = m.cond[d]
	}
	switch {
	case c == switchsim.On:
		return t.Mark("devices.on", st.On, "on ")
	case c == switchsim.Off && m.partly(d):
		return t.Mark("devices.partly", st.On, "on~") // off by logic, conducting: partly on
	case c == switchsim.Off:
		return t.Mark("devices.off", st.Off, "off")
	}
	return t.Mark("devices.unknown", st.Unknown, "X? ")
}

// detail is the selected device in full, whatever the width: its name,
// kind, gate with volts, conduction, size and channel.
func (m Model) detail() string {
	st, t := m.Styles, m.Styles.Theme
	d := m.Selected()
	if d < 0 {
		return ""
	}
	dv := m.nl.Device(d)
	parts := []string{m.names.Device[d], dv.Kind.String()}
	if dv.Gate >= 0 {
		parts = append(parts, "gate "+m.gateCell(dv, 1<<20, true))
	}
	c := "on"
	if d < len(m.cond) {
		c = m.cond[d].String()
	}
	if m.partly(d) {
		c = "partly on" // off by logic, its gate past its threshold
		if a := m.bias[d].Current; !math.IsNaN(a) {
			c += " " + session.Amps(a) + " static"
		}
	}
	parts = append(parts, c)
	if sz := size(dv); sz != "-" {
		if was, ok := m.loaded[d]; ok {
			sz += " (tried; loaded " + was + ")"
		}
		parts = append(parts, "W/L "+sz+" um")
	}
	if d < len(m.ohms) && !math.IsNaN(m.ohms[d]) {
		parts = append(parts, "R on "+panel.Ohms(m.ohms[d]))
	}
	parts = append(parts, m.names.Node[dv.A]+t.G.Rule+m.names.Node[dv.B])
	return st.Dim.Render(t.Clip(t.G.Cursor+" "+strings.Join(parts, "  "), m.w))
}

func (m Model) anyPartialGate() bool {
	if math.IsNaN(m.vdd) {
		return false
	}
	for _, d := range m.rows {
		if g := m.nl.Device(d).Gate; g >= 0 && g < len(m.states) && !panel.FullLevel(m.states[g].Volts, m.vdd) {
			return true
		}
	}
	return false
}

func (m Model) anyOhms() bool {
	for _, r := range m.ohms {
		if !math.IsNaN(r) {
			return true
		}
	}
	return false
}

// size words a device's W/L in micrometres ("-" for a pull, which has none).
func size(dv switchsim.Device) string {
	if dv.W <= 0 || dv.L <= 0 {
		return "-"
	}
	return fmt.Sprintf("%.3g/%.3g", dv.W*1e6, dv.L*1e6)
}

// kindName fits a device kind in w cells (4 or 6).
func kindName(k switchsim.DeviceKind, w int) string {
	switch {
	case k == switchsim.Tran:
		return "tran" // always on between two nodes: no rail, so no pull
	case k >= switchsim.PullUp && w < 6:
		return "pull"
	case k == switchsim.PullUp:
		return "pullup"
	case k == switchsim.PullDown:
		return "pulldn"
	}
	return k.String()
}
