// Package why is the explorer's inspector: it words the engine's
// explanation of one node (the winning paths device by device with their
// gate states, and a gate's volts wherever it is not at a full level, the
// opposing paths, the devices of unknown state, the device that degraded
// the level, the divider and the charge-sharing group).
package why

import (
	"fmt"
	"math"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the inspector's keys: it only scrolls.
type KeyMap struct{ listing.Nav }

// DefaultKeyMap scrolls with the arrows.
func DefaultKeyMap() KeyMap { return KeyMap{listing.DefaultNav()} }

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Up, k.Down} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}}
}

// Styles draw the inspector.
type Styles struct {
	Theme   *theme.Theme
	Heading lipgloss.Style
	Node    lipgloss.Style
	Device  lipgloss.Style
	Dim     lipgloss.Style
	Warn    lipgloss.Style
}

// DefaultStyles takes the inspector's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Heading: t.Bold, Node: t.Accent, Device: t.Marked, Dim: t.Dim, Warn: t.Warn}
}

// Model is the inspector.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	nl      *switchsim.Netlist
	names   *panel.Names
	node    int
	raw     []string // as worded
	lines   []string // wrapped to the width
	offset  int      // the first line shown
	focused bool
	w, h    int
}

// New makes an empty inspector for a netlist.
func New(nl *switchsim.Netlist, names *panel.Names, st Styles) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st, nl: nl, names: names, node: -1}
}

// SetSize gives the inspector its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.wrap()
}

func (m *Model) wrap() {
	m.lines = m.lines[:0]
	for _, l := range m.raw {
		m.lines = append(m.lines, theme.Wrap(l, m.w)...)
	}
	m.offset = min(m.offset, max(len(m.lines)-max(m.h, 1), 0))
}

// Focus and Blur tell the inspector whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// SetNetlist gives the netlist after a size was tried (the same devices
// and nodes, other sizes).
func (m *Model) SetNetlist(nl *switchsim.Netlist) { m.nl = nl }

// Node is the node explained, or -1.
func (m Model) Node() int { return m.node }

// Set words an explanation; states are every node's states (for the gates'
// volts) and vdd the supply's volts (NaN in ideal mode). The scroll
// position is kept when the same node is explained again after a change.
// extra lines (the node's standing warnings, worded) go at the end.
func (m *Model) Set(e switchsim.Explanation, states []switchsim.NodeState, vdd float64, extra []string) {
	same := e.Node == m.node
	m.node = e.Node
	m.raw = append(Lines(m.nl, m.names, e, Levels{states, vdd}, m.Styles), extra...)
	if !same {
		m.offset = 0
	}
	m.wrap()
}

// Update scrolls.
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	h := max(m.h, 1)
	last := max(len(m.lines)-h, 0)
	switch {
	case key.Matches(k, m.KeyMap.Down):
		m.offset = min(m.offset+1, last)
	case key.Matches(k, m.KeyMap.Up):
		m.offset = max(m.offset-1, 0)
	case key.Matches(k, m.KeyMap.PageDown):
		m.offset = min(m.offset+h-1, last)
	case key.Matches(k, m.KeyMap.PageUp):
		m.offset = max(m.offset-h+1, 0)
	case key.Matches(k, m.KeyMap.Home):
		m.offset = 0
	case key.Matches(k, m.KeyMap.End):
		m.offset = last
	}
	return m, nil
}

// View draws the inspector in its w x h cells.
func (m Model) View() string {
	if m.node < 0 {
		return theme.Block([]string{
			m.Styles.Dim.Render("Select a node on the board and press enter"),
			m.Styles.Dim.Render("(or w) to see why it holds its state."),
		}, m.w, m.h)
	}
	lo := m.offset
	hi := min(lo+m.h, len(m.lines))
	view := m.lines[lo:hi]
	if hi < len(m.lines) && len(view) > 0 {
		view = append(append([]string(nil), view[:len(view)-1]...),
			m.Styles.Dim.Render(fmt.Sprintf("%s %d more lines", m.Styles.Theme.G.Ellipsis, len(m.lines)-hi+1)))
	}
	return theme.Block(view, m.w, m.h)
}

// Levels are what the wording needs to show a gate's volts: every node's
// state and the supply's volts (NaN in ideal mode).
type Levels struct {
	States []switchsim.NodeState
	Vdd    float64
}

// gate words a gate node and its value, with its volts when they are not
// a full level (a gate at 1.14 V is the point of a lost level).
func (lv Levels) gate(names *panel.Names, g int, v switchsim.Value) string {
	s := fmt.Sprintf("%s=%s", names.Node[g], v)
	if g < len(lv.States) && !panel.FullLevel(lv.States[g].Volts, lv.Vdd) {
		s += fmt.Sprintf(" (%s V)", panel.Volts(lv.States[g].Volts))
	}
	return s
}

// Lines words an explanation, one line a fact.
func Lines(nl *switchsim.Netlist, names *panel.Names, e switchsim.Explanation, lv Levels, st Styles) []string {
	t := st.Theme
	name := func(n int) string { return names.Node[n] }
	dev := func(d int) string { return names.Device[d] }
	var out []string
	add := func(f string, a ...any) { out = append(out, fmt.Sprintf(f, a...)) }
	head := fmt.Sprintf("%s is %s", st.Node.Render(name(e.Node)), t.StateLetter(e.State))
	head += fmt.Sprintf(": value %s, %s", e.Value, e.Strength)
	if !math.IsNaN(e.Volts) {
		head += fmt.Sprintf(", %.2f V", e.Volts)
	}
	out = append(out, head)
	out = append(out, st.Dim.Render(stateMeaning(e)))

	if e.Source {
		switch nl.NodeKind(e.Node) {
		case switchsim.Power, switchsim.Ground:
			add("It is a rail: it holds its value at supply strength.")
		default:
			add("It is an input driven %s at supply strength: nothing in the design changes it.", e.Value)
		}
		return out
	}

	if len(e.Winning) > 0 {
		out = append(out, "")
		verb := "Set by"
		if e.Floating {
			verb = "Holds charge from"
		}
		out = append(out, st.Heading.Render(fmt.Sprintf("%s %s:", verb, plural(len(e.Winning), "path"))))
		for _, p := range e.Winning {
			out = append(out, pathLines(nl, names, p, lv, st)...)
		}
	} else if !e.Floating {
		out = append(out, "", "No single path sets it: its value comes from the whole group.")
	}
	if len(e.Opposing) > 0 {
		out = append(out, "")
		if e.State == switchsim.StateX {
			out = append(out, st.Heading.Render(fmt.Sprintf("Reached by %s of other values (none wins):", plural(len(e.Opposing), "path"))))
		} else {
			out = append(out, st.Heading.Render(fmt.Sprintf("Opposed by %s (they lose):", plural(len(e.Opposing), "path"))))
		}
		for _, p := range e.Opposing {
			out = append(out, pathLines(nl, names, p, lv, st)...)
		}
	}
	if e.Divider == nil && !math.IsNaN(e.Volts) && len(e.Winning) > 0 && len(e.Opposing) > 0 &&
		e.Opposing[0].Strength > e.Winning[0].Strength {
		out = append(out, st.Dim.Render("A stronger path loses: in physical mode the devices' resistances decide a fight (a divider), and this side pulls harder."))
	}
	if e.Contested {
		out = append(out, st.Warn.Render(t.G.Warn+" contested: a source of the other value reaches its group"))
	}
	if len(e.Unknown) > 0 {
		out = append(out, "")
		unknown := make([]string, len(e.Unknown))
		for i, d := range e.Unknown {
			dv := nl.Device(d)
			g := "?=X"
			if dv.Gate >= 0 {
				g = lv.gate(names, dv.Gate, switchsim.VX)
			}
			unknown[i] = st.Device.Render(dev(d)) + " (gate " + g + ")"
		}
		out = append(out, st.Warn.Render(t.G.Warn+" unknown devices in its group: ")+strings.Join(unknown, ", "))
	}
	if e.Degrader >= 0 {
		out = append(out, "", fmt.Sprintf("Level degraded by %s (%s): a threshold drop.",
			st.Device.Render(dev(e.Degrader)), nl.Device(e.Degrader).Kind))
	}
	if e.Divider != nil {
		out = append(out, "", fmt.Sprintf("Divider: %s to the 1 side, %s to the 0 side %s %.2f V",
			panel.Ohms(e.Divider.Up), panel.Ohms(e.Divider.Down), t.G.Arrow, e.Divider.Volts))
		// Left for physical mode's margins and a picture of the fight (not
		// built here): the node's margins (switchsim's Sim.Margin, not yet
		// read through the session: Noise to the band, Write to the driven
		// stage's VM) go on this line, and the fight is drawn below it:
		// each side's current against the node's voltage from 0 to vdd
		// (the level-1 curves of the devices the divider names), with the
		// point where they cross (the node's level) and the band between
		// VIL and VIH marked.
	}
	if e.Floating {
		out = append(out, "")
		if len(e.Sharing) > 1 {
			out = append(out, st.Heading.Render("Shares charge with:"))
			for _, n := range e.Sharing {
				if n == e.Node {
					continue
				}
				add("  %s  %s, %s", st.Node.Render(name(n)), farads(nl.NodeCap(n)), nl.NodeCharge(n))
			}
			add("  (itself: %s, %s)", farads(nl.NodeCap(e.Node)), nl.NodeCharge(e.Node))
		} else {
			add("Nothing drives it and no other floating node joins it: it keeps its own charge (%s, %s).",
				farads(nl.NodeCap(e.Node)), nl.NodeCharge(e.Node))
		}
	}
	return out
}

func stateMeaning(e switchsim.Explanation) string {
	switch e.State {
	case switchsim.State0, switchsim.State1:
		return "driven strong at full level, nothing opposes it"
	case switchsim.StateL, switchsim.StateH:
		return "a weak, degraded or contested logic " + e.Value.String()
	case switchsim.StateZ:
		return "floating: it keeps a stored " + e.Value.String() + " as charge"
	}
	return "unknown: a fight of equal strengths, or an X gate that could change it"
}

// pathLines draws a path from its source to the node, one device a line.
func pathLines(nl *switchsim.Netlist, names *panel.Names, p switchsim.Path, lv Levels, st Styles) []string {
	t := st.Theme
	src := names.Node[p.Source]
	kind := "charge"
	switch nl.NodeKind(p.Source) {
	case switchsim.Power:
		kind = "power rail"
	case switchsim.Ground:
		kind = "ground rail"
	case switchsim.Input:
		kind = "input"
	}
	weak := ""
	if p.Weakest >= 0 {
		weak = ", limited by " + st.Device.Render(names.Device[p.Weakest])
	}
	out := []string{fmt.Sprintf("  %s %s (%s) %s %s%s", t.G.Next, st.Node.Render(src), kind, p.Value, p.Strength, weak)}
	for _, s := range p.Steps {
		dv := nl.Device(s.Device)
		gate := "always on"
		if s.Gate >= 0 {
			gate = "gate " + lv.gate(names, s.Gate, s.GateValue)
		}
		par := ""
		for _, o := range s.Parallel {
			par += ", " + st.Device.Render(names.Device[o])
		}
		if par != "" {
			par = " (in parallel with" + par[1:] + ")"
		}
		out = append(out, fmt.Sprintf("    %s %s %s  %s, %s %s %s%s", st.Device.Render(names.Device[s.Device]), dv.Kind, gate,
			s.Conduction, names.Node[s.From], t.G.Arrow, names.Node[s.To], par))
	}
	if len(p.Steps) == 0 {
		out = append(out, st.Dim.Render("    (its own stored charge)"))
	}
	return out
}

func plural(n int, w string) string {
	if n == 1 {
		return "1 " + w
	}
	return fmt.Sprintf("%d %ss", n, w)
}

func farads(c float64) string {
	switch {
	case c >= 1e-12:
		return fmt.Sprintf("%.3g pF", c*1e12)
	case c >= 1e-15:
		return fmt.Sprintf("%.3g fF", c*1e15)
	}
	return fmt.Sprintf("%.3g F", c)
}
