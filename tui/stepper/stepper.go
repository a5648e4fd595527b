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
	"railyard/tui/theme"
)

// KeyMap are the view's keys.
type KeyMap struct {
	listing.Nav
	Jump key.Binding
}

// DefaultKeyMap: arrows select a row, enter brings the design to it.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Nav:  listing.DefaultNav(),
		Jump: key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "go to this step")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Jump} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}, {k.Jump}}
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
	focused  bool
	w, h     int
}

// New makes a view of a steps file's rows (none: the design has no steps).
func New(file string, steps []Step, st Styles) *Model {
	m := &Model{KeyMap: DefaultKeyMap(), Styles: st, file: file, steps: steps}
	m.outcomes = make([]Outcome, len(steps))
	m.cur.SetLen(len(steps))
	return m
}

// SetSize gives the view its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.cur.SetHeight(m.listHeight())
}

func (m *Model) listHeight() int {
	// the list takes what the details below leave
	return max(min(len(m.steps), m.h-2-m.detailRows()), min(3, m.h-2))
}

func (m *Model) detailRows() int {
	n := 0
	if m.cur.Pos < len(m.outcomes) {
		n = len(m.outcomes[m.cur.Pos].Checks)
	}
	return min(max(n, 1)+1, max(m.h/2, 2))
}

// Focus and Blur tell the view whether keys go to it.
func (m *Model) Focus()        { m.focused = true }
func (m *Model) Blur()         { m.focused = false }
func (m *Model) Focused() bool { return m.focused }

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
func (m *Model) Selected() int {
	if len(m.steps) == 0 {
		return -1
	}
	return m.cur.Pos
}

// Update handles a key; it reports the row to jump to, or -1.
func (m *Model) Update(msg tea.Msg) int {
	k, ok := msg.(tea.KeyMsg)
	if !ok || len(m.steps) == 0 {
		return -1
	}
	switch {
	case m.KeyMap.Nav.Handle(k, &m.cur):
		m.cur.SetHeight(m.listHeight())
	case key.Matches(k, m.KeyMap.Jump):
		return m.cur.Pos
	}
	return -1
}

// View draws the view in its w x h cells.
func (m *Model) View() string {
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
	numW := len(fmt.Sprint(len(m.steps)))
	// the label gets what the apply and want columns leave, at least a third
	rest := 0
	for _, s := range m.steps {
		rest = max(rest, lipgloss.Width(s.Apply)+3+lipgloss.Width(s.Want))
	}
	labelW := min(max(m.maxLabel(), 5), max(m.w-6-numW-rest, m.w/3, 8))
	if m.maxLabel() == 0 {
		labelW = -1 // no labels: no column (and no space after the number)
		lines = append(lines, st.Header.Render(fmt.Sprintf("    %*s %s", numW, "#", "apply | want")))
	} else {
		lines = append(lines, st.Header.Render(fmt.Sprintf("    %*s %-*s %s", numW, "#", labelW, "label", "apply | want")))
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
			b.WriteString(st.Next.Render(g.Next))
		default:
			b.WriteByte(' ')
		}
		switch {
		case o.Taken && o.Failed() > 0:
			b.WriteString(st.Fail.Render(g.Fail))
		case o.Taken:
			b.WriteString(st.Pass.Render(g.Pass))
		default:
			b.WriteByte(' ')
		}
		label := ""
		if labelW > 0 {
			label = t.Clip(s.Label, labelW)
			label += strings.Repeat(" ", labelW-lipgloss.Width(label))
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
		rest := s.Apply
		if s.Want != "" {
			rest += " | " + s.Want
		}
		b.WriteString(" " + st.Dim.Render(t.Clip(rest, max(m.w-lipgloss.Width(b.String())-1, 1))))
		lines = append(lines, b.String())
	}
	if hi < len(m.steps) {
		lines = append(lines, st.Dim.Render(fmt.Sprintf("    %s %d more", g.Ellipsis, len(m.steps)-hi)))
	}
	lines = append(lines, m.details()...)
	return theme.Block(lines, m.w, m.h)
}

// details spells out the selected row's checks.
func (m *Model) details() []string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	i := m.cur.Pos
	if i >= len(m.steps) {
		return nil
	}
	o := m.outcomes[i]
	head := fmt.Sprintf("step %d", i+1)
	if m.steps[i].Label != "" {
		head += " " + m.steps[i].Label
	}
	out := []string{st.Heading.Render(t.Clip(head, m.w))}
	switch {
	case !o.Taken && i == m.next:
		out = append(out, st.Dim.Render("  not applied yet: n applies it"))
	case !o.Taken:
		out = append(out, st.Dim.Render("  not applied yet: enter goes to it"))
	case len(o.Checks) == 0:
		out = append(out, st.Dim.Render("  applied; this row checks nothing"))
	}
	if o.Taken {
		for _, c := range o.Checks {
			mark, style, verdict := g.Pass, st.Pass, "pass"
			if !c.Pass {
				mark, style, verdict = g.Fail, st.Fail, "FAIL"
			}
			out = append(out, fmt.Sprintf("  %s %s want %s got %s (value %s, %s) %s",
				style.Render(mark), c.Node, c.Want, t.StateLetter(c.Got.State), c.Got.Value, c.Got.Strength, style.Render(verdict)))
		}
	}
	return out
}

func (m *Model) maxLabel() int {
	w := 0
	for _, s := range m.steps {
		w = max(w, lipgloss.Width(s.Label))
	}
	return w
}
