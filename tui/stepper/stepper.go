// Package stepper is the explorer's steps view: the rows of the steps file,
// which have been applied and whether their checks passed, the row that the
// next step applies, and the check results of the selected row. A failed
// check is marked on its row with a glyph and spelled out below the list.
package stepper

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

// KeyMap are the view's keys.
type KeyMap struct {
	listing.Nav
	Jump        key.Binding
	Left, Right key.Binding // scroll the apply | want column
}

// DefaultKeyMap: arrows select a row, enter brings the design to it, left
// and right scroll the values when they do not fit.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:   listing.DefaultNav(),
		Jump:  key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "go to this step")),
		Left:  key.NewBinding(key.WithKeys("left", ","), key.WithHelp("←", "scroll values left")),
		Right: key.NewBinding(key.WithKeys("right", "."), key.WithHelp("→", "scroll values right")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Jump, k.Left, k.Right} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Jump, k.Left, k.Right}}
}

// Styles draw the view.
type Styles struct {
	Theme    *theme.Theme
	Header   lipgloss.Style
	Selected lipgloss.Style
	Next     lipgloss.Style
	Pass     lipgloss.Style
	Fail     lipgloss.Style
	Dim      lipgloss.Style
	Heading  lipgloss.Style
}

// DefaultStyles takes the view's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Header: t.Dim, Selected: t.Selected, Next: t.Accent.Bold(true),
		Pass: t.Pass, Fail: t.Fail, Dim: t.Dim, Heading: t.Bold}
}

// Step is one row of the steps file, worded.
type Step struct {
	Label string
	Apply string // "a=1 b=0"
	Want  string // "y=1 z=-"
}

// Check is one check result.
type Check struct {
	Node string
	Want string
	Got  switchsim.NodeState
	Pass bool
}

// Outcome is what applying a row gave, if it is in the history in force.
type Outcome struct {
	Taken  bool
	Checks []Check
}

// Failed counts the failed checks.
func (o Outcome) Failed() int {
	n := 0
	for _, c := range o.Checks {
		if !c.Pass {
			n++
		}
	}
	return n
}

// Model is the steps view.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	file     string
	steps    []Step
	outcomes []Outcome
	next     int
	cur      listing.Cursor
	hoff     int // runes of the apply | want column scrolled off to the left
	focused  bool
	w, h     int
}

// New makes a view of a steps file's rows (none: the design has no steps).
// The file name and the rows' labels come from a file: the caller makes
// them printable.
func New(file string, steps []Step, st Styles) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, file: file, steps: steps}
	m.outcomes = make([]Outcome, len(steps))
	m.cur.SetLen(len(steps))
	return m
}

// SetSize gives the view its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(m.listHeight())
}

func (m Model) listHeight() int {
	// the list takes what the details below leave, at least three rows
	return max(min(len(m.steps), m.h-2-len(m.details())), min(3, m.h-2))
}

// Focus and Blur tell the view whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// SetProgress gives each row's outcome and the row the next step applies.
// The selection follows the last row applied.
func (m *Model) SetProgress(outcomes []Outcome, next int) {
	m.outcomes, m.next = outcomes, next
	if next > 0 {
		m.cur.Set(next - 1)
	} else {
		m.cur.Set(0)
	}
	m.cur.SetHeight(m.listHeight())
}

// Selected is the row under the cursor, or -1.
func (m Model) Selected() int {
	if len(m.steps) == 0 {
		return -1
	}
	return m.cur.Pos
}

// Update handles a key; enter asks the root to go to the row (panel.JumpTo).
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	if len(m.steps) == 0 {
		if key.Matches(k, m.KeyMap.Jump) {
			return m, panel.Send(panel.Note{Text: "this design has no steps file: give one with --steps"})
		}
		return m, nil
	}
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
		m.cur.SetHeight(m.listHeight())
	case key.Matches(k, m.KeyMap.Jump):
		return m, panel.Send(panel.JumpTo{Row: m.cur.Pos})
	case key.Matches(k, m.KeyMap.Left):
		m.hoff = max(m.hoff-8, 0)
	case key.Matches(k, m.KeyMap.Right):
		// stop when the end of the longest row is in view
		labelW, numW := m.columns()
		m.hoff = min(m.hoff+8, max(m.maxValues()-m.valuesW(labelW, numW)+2, 0))
	}
	return m, nil
}

// View draws the view in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	if len(m.steps) == 0 {
		return theme.Block([]string{
			st.Dim.Render("This design has no steps file."),
			st.Dim.Render("Give one with --steps FILE, or set inputs by hand."),
		}, m.w, m.h)
	}
	taken, failed := 0, 0
	for _, o := range m.outcomes {
		if o.Taken {
			taken++
			if o.Failed() > 0 {
				failed++
			}
		}
	}
	info := fmt.Sprintf("%s  %d of %d applied", m.file, taken, len(m.steps))
	if failed > 0 {
		info += "  " + st.Fail.Render(fmt.Sprintf("%s %d failing", g.Fail, failed))
	}
	lines := []string{st.Dim.Render(t.Clip(info, m.w))}
	labelW, numW := m.columns()
	values := "apply | want"
	if m.hoff > 0 {
		values += fmt.Sprintf(" (from +%d, %s)", m.hoff, m.KeyMap.Left.Help().Key)
	} else if m.valuesW(labelW, numW) < m.maxValues() {
		values += fmt.Sprintf(" (%s scrolls)", m.KeyMap.Right.Help().Key)
	}
	if labelW < 0 {
		lines = append(lines, st.Header.Render(fmt.Sprintf("    %*s %s", numW, "#", values)))
	} else {
		lines = append(lines, st.Header.Render(fmt.Sprintf("    %*s %-*s %s", numW, "#", labelW, "label", values)))
	}
	lo, hi := m.cur.Window()
	for i := lo; i < hi; i++ {
		s := m.steps[i]
		o := m.outcomes[i]
		var b strings.Builder
		sel := i == m.cur.Pos
		switch {
		case sel && m.focused:
			b.WriteString(g.Cursor)
		default:
			b.WriteByte(' ')
		}
		switch {
		case i == m.next:
			b.WriteString(t.Mark("stepper.next", st.Next, g.Next))
		default:
			b.WriteByte(' ')
		}
		switch {
		case o.Taken && o.Failed() > 0:
			b.WriteString(t.Mark("stepper.fail", st.Fail, g.Fail))
		case o.Taken:
			b.WriteString(t.Mark("stepper.pass", st.Pass, g.Pass))
		default:
			b.WriteByte(' ')
		}
		label := ""
		if labelW > 0 {
			label = theme.Pad(t.Clip(s.Label, labelW), labelW)
		}
		num := fmt.Sprintf(" %*d", numW, i+1)
		if labelW > 0 {
			num += " "
		}
		if sel && m.focused {
			b.WriteString(st.Selected.Render(num + label))
		} else {
			b.WriteString(num + label)
		}
		rest := []rune(s.Apply)
		if s.Want != "" {
			rest = []rune(s.Apply + " | " + s.Want)
		}
		off := min(m.hoff, len(rest))
		text := string(rest[off:])
		if off > 0 {
			text = g.Ellipsis + text
		}
		b.WriteString(" " + st.Dim.Render(t.Clip(text, max(m.w-lipgloss.Width(b.String())-1, 1))))
		lines = append(lines, b.String())
	}
	if hi < len(m.steps) {
		lines = append(lines, st.Dim.Render(fmt.Sprintf("    %s %d more", g.Ellipsis, len(m.steps)-hi)))
	}
	lines = append(lines, m.details()...)
	return theme.Block(lines, m.w, m.h)
}

// columns are the widths of the label (-1: no labels, no column) and of
// the row number.
func (m Model) columns() (labelW, numW int) {
	numW = len(fmt.Sprint(len(m.steps)))
	if m.maxLabel() == 0 {
		return -1, numW
	}
	// the label gets what the apply and want columns leave, at least a third
	return min(max(m.maxLabel(), 5), max(m.w-6-numW-m.maxValues(), m.w/3, 8)), numW
}

// valuesW is the cells left for the apply | want column on a row.
func (m Model) valuesW(labelW, numW int) int {
	used := 3 + 1 + numW + 1
	if labelW > 0 {
		used += labelW + 1
	}
	return m.w - used
}

// maxValues is the longest apply | want text, in runes.
func (m Model) maxValues() int {
	w := 0
	for _, s := range m.steps {
		n := len([]rune(s.Apply))
		if s.Want != "" {
			n += 3 + len([]rune(s.Want))
		}
		w = max(w, n)
	}
	return w
}

// details spells out the selected row: what it applies and wants, in full
// (wrapped, so no wanted value is cut off), and its checks once applied.
func (m Model) details() []string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	i := m.cur.Pos
	if i >= len(m.steps) || m.w <= 0 {
		return nil
	}
	o := m.outcomes[i]
	s := m.steps[i]
	head := fmt.Sprintf("step %d", i+1)
	if s.Label != "" {
		head += " " + s.Label
	}
	out := []string{st.Heading.Render(t.Clip(head, m.w))}
	wrap := func(l string) { out = append(out, theme.Wrap(l, m.w)...) }
	switch {
	case !o.Taken && i == m.next:
		out = append(out, st.Dim.Render("  not applied yet: n applies it"))
	case !o.Taken:
		out = append(out, st.Dim.Render("  not applied yet: enter goes to it"))
	case len(o.Checks) == 0:
		out = append(out, st.Dim.Render("  applied; this row checks nothing"))
	}
	if s.Apply != "" {
		wrap(st.Dim.Render("  applies " + s.Apply))
	}
	if !o.Taken && s.Want != "" {
		wrap(st.Dim.Render("  wants   " + s.Want))
	}
	if o.Taken {
		for _, c := range o.Checks {
			mark, style, verdict := g.Pass, st.Pass, "pass"
			if !c.Pass {
				mark, style, verdict = g.Fail, st.Fail, "FAIL"
			}
			wrap(fmt.Sprintf("  %s %s want %s got %s (value %s, %s) %s",
				style.Render(mark), c.Node, c.Want, t.StateLetter(c.Got.State), c.Got.Value, c.Got.Strength, style.Render(verdict)))
		}
	}
	// at most half the view: the list keeps the rest
	if lim := max(m.h/2, 2); len(out) > lim {
		out = append(out[:lim-1], st.Dim.Render(fmt.Sprintf("  %s %d more lines", g.Ellipsis, len(out)-lim+1)))
	}
	return out
}

func (m Model) maxLabel() int {
	w := 0
	for _, s := range m.steps {
		w = max(w, lipgloss.Width(s.Label))
	}
	return w
}
