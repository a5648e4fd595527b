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
	"railyard/switchsim/diag"
	"railyard/tui/fightplot"
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
	phys    Physics
	plotAt  int      // the raw line the fight's picture goes before (-1: none)
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
	for i, l := range m.raw {
		if i == m.plotAt {
			m.lines = append(m.lines, m.plotLines()...)
		}
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

// Physics is what physical mode adds to an explanation: the node's margins
// and, for a node of a fight, its picture. The zero value (ideal mode)
// adds nothing.
type Physics struct {
	Margin *switchsim.Margin
	Fight  *switchsim.FightPicture
	Vdd    float64
}

// SetPhysics gives the margins and the fight of the node the next Set
// explains.
func (m *Model) SetPhysics(p Physics) { m.phys = p }

// plotRows is the height of the fight's picture: a third of the view, 4 to
// 10 rows, so that at 80x24 it shows with the node's head above it.
func (m Model) plotRows() int { return min(max(m.h/3, 4), 10) }

// plotLines draws the fight of the node explained for the view's width.
func (m Model) plotLines() []string {
	f := m.phys.Fight
	if f == nil {
		return nil
	}
	t := m.Styles.Theme
	by := func(ds []int) string {
		var ns []string
		for i, d := range ds {
			if i == 3 {
				ns = append(ns, fmt.Sprintf("+%d", len(ds)-3))
				break
			}
			ns = append(ns, m.names.Device[d])
		}
		return strings.Join(ns, " ")
	}
	p := fightplot.Picture{Currents: f.Currents, Vdd: m.phys.Vdd, Volts: f.Volts, VIL: f.VIL, VIH: f.VIH, VM: f.StageVM,
		Node: m.names.Node[f.Node], UpBy: by(f.Up), DownBy: by(f.Down)}
	st := fightplot.Styles{Up: t.State[switchsim.State1], Down: t.State[switchsim.State0], Cross: t.Bold,
		Axis: t.Dim, Marker: t.Accent, ASCII: t.ASCII}
	lines := fightplot.Lines(p, m.w, m.plotRows(), st)
	if len(lines) == 0 {
		return nil
	}
	head := m.Styles.Heading.Render("The fight:") + " " + m.Styles.Dim.Render(t.Clip("each side's current against volts", max(m.w-11, 1)))
	return append([]string{head}, lines...)
}

// Node is the node explained, or -1.
func (m Model) Node() int { return m.node }

// Set words an explanation; states are every node's states (for the gates'
// volts) and vdd the supply's volts (NaN in ideal mode). The scroll
// position is kept when the same node is explained again after a change.
// extra lines (the node's standing warnings, worded) go at the end.
func (m *Model) Set(e switchsim.Explanation, states []switchsim.NodeState, vdd float64, extra []string) {
	same := e.Node == m.node
	m.node = e.Node
	lv := Levels{States: states, Vdd: vdd, Margin: m.phys.Margin}
	m.raw = append(Lines(m.nl, m.names, e, lv, m.Styles), extra...)
	m.plotAt = -1
	if m.phys.Fight != nil && m.phys.Fight.Node == e.Node {
		m.plotAt = 2 + len(marginLines(e, lv, m.Styles)) // under the head and the margins
	}
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
	Margin *switchsim.Margin // the node's margins (physical mode), nil: none
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
	out = append(out, marginLines(e, lv, st)...)
	if a := switchsim.AnalysisWords(nl, e); a != "" {
		out = append(out, st.Heading.Render("How it was decided:")+" "+diag.Printable(a))
	}

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
		out = append(out, st.Heading.Render(fmt.Sprintf("%s %s:", verb, diag.Count(len(e.Winning), "path"))))
		for _, p := range e.Winning {
			out = append(out, pathLines(nl, names, p, lv, st)...)
		}
	} else if !e.Floating {
		out = append(out, "", "No single path sets it: its value comes from the whole group.")
	}
	if len(e.Opposing) > 0 {
		out = append(out, "")
		if e.State == switchsim.StateX {
			out = append(out, st.Heading.Render(fmt.Sprintf("Reached by %s of other values (none wins):", diag.Count(len(e.Opposing), "path"))))
		} else {
			out = append(out, st.Heading.Render(fmt.Sprintf("Opposed by %s (they lose):", diag.Count(len(e.Opposing), "path"))))
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

// marginLines words the node's margins: how far its level is from the
// undefined band, and for a node of a fight that drives a stage, how far it
// is from that stage's switching threshold and which way the stage reads it.
func marginLines(e switchsim.Explanation, lv Levels, st Styles) []string {
	m := lv.Margin
	if m == nil || math.IsNaN(m.Noise) || e.Source {
		return nil
	}
	var out []string
	v := e.Volts
	switch {
	case m.Noise < 0:
		out = append(out, fmt.Sprintf("Margin %.2f V: inside the band between VIL and VIH, by %.2f V.", m.Noise, -m.Noise))
	case e.Value == switchsim.V1:
		out = append(out, fmt.Sprintf("Margin %.2f V: %.2f V is that far above VIH.", m.Noise, v))
	case e.Value == switchsim.V0:
		out = append(out, fmt.Sprintf("Margin %.2f V: %.2f V is that far below VIL.", m.Noise, v))
	default:
		out = append(out, fmt.Sprintf("Margin %.2f V from the band between VIL and VIH.", m.Noise))
	}
	if !math.IsNaN(m.Write) {
		reads := "1"
		if v < m.StageVM {
			reads = "0"
		}
		out = append(out, fmt.Sprintf("Write margin %.2f V from the driven stage's VM %.2f V: it reads a %s.",
			m.Write, m.StageVM, reads))
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

func farads(c float64) string {
	switch {
	case c >= 1e-12:
		return fmt.Sprintf("%.3g pF", c*1e12)
	case c >= 1e-15:
		return fmt.Sprintf("%.3g fF", c*1e15)
	}
	return fmt.Sprintf("%.3g F", c)
}
