// Package logpanel is the explorer's warnings log: the warnings of the last
// settle first, then those of the earlier actions in force, newest first.
package logpanel

import (
	"fmt"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/tui/listing"
	"railyard/tui/theme"
)

// KeyMap are the log's keys: it only scrolls.
type KeyMap struct{ listing.Nav }

// DefaultKeyMap scrolls with the arrows.
func DefaultKeyMap() KeyMap { return KeyMap{listing.DefaultNav()} }

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Up, k.Down} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End}}
}

// Styles draw the log.
type Styles struct {
	Theme   *theme.Theme
	Heading lipgloss.Style
	Kind    lipgloss.Style
	Dim     lipgloss.Style
	Warn    lipgloss.Style
}

// DefaultStyles takes the log's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Heading: t.Bold, Kind: t.Warn, Dim: t.Dim, Warn: t.Warn}
}

// Warning is one warning, worded.
type Warning struct {
	Kind, Message string
}

// Entry is one action and its warnings.
type Entry struct {
	Title    string
	Warnings []Warning
}

// Model is the warnings log.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	entries []Entry // oldest first; the last is the last settle
	lines   []string
	offset  int
	focused bool
	w, h    int
}

// New makes an empty log.
func New(st Styles) Model { return Model{KeyMap: DefaultKeyMap(), Styles: st} }

// SetSize gives the log its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.layout()
}

// Focus and Blur tell the log whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// SetEntries gives the actions in force with their warnings, oldest first
// (titles and messages come from files: the caller makes them printable).
func (m *Model) SetEntries(e []Entry) {
	m.entries = e
	m.offset = 0
	m.layout()
}

// Last is the number of warnings of the last settle.
func (m Model) Last() int {
	if len(m.entries) == 0 {
		return 0
	}
	return len(m.entries[len(m.entries)-1].Warnings)
}

func (m *Model) layout() {
	st, t := m.Styles, m.Styles.Theme
	m.lines = m.lines[:0]
	if len(m.entries) == 0 {
		return
	}
	last := m.entries[len(m.entries)-1]
	if len(last.Warnings) == 0 {
		for _, l := range wrap("", "No warnings from the last settle ("+last.Title+").", m.w, 2) {
			m.lines = append(m.lines, st.Dim.Render(l))
		}
	}
	older := 0
	for i := len(m.entries) - 1; i >= 0; i-- {
		e := m.entries[i]
		if len(e.Warnings) == 0 {
			continue
		}
		head := e.Title
		if i == len(m.entries)-1 {
			head = "last settle: " + head
		} else {
			older++
			if older == 1 {
				m.lines = append(m.lines, "")
				m.lines = append(m.lines, st.Dim.Render("earlier actions in force:"))
			}
		}
		m.lines = append(m.lines, st.Heading.Render(t.Clip(fmt.Sprintf("%s (%d)", head, len(e.Warnings)), m.w)))
		for _, w := range e.Warnings {
			prefix := st.Kind.Render(t.G.Warn+" "+w.Kind) + " "
			m.lines = append(m.lines, wrap(prefix, w.Message, m.w, 4)...)
		}
	}
	m.offset = min(m.offset, max(len(m.lines)-m.h, 0))
}

// wrap breaks a message over lines of w cells, the first after prefix and
// the rest indented.
func wrap(prefix, msg string, w, indent int) []string {
	var out []string
	line := "  " + prefix
	width := lipgloss.Width(line)
	for _, word := range splitWords(msg) {
		ww := lipgloss.Width(word)
		if width+ww+1 > w && width > indent {
			out = append(out, line)
			line = fmt.Sprintf("%*s", indent, "")
			width = indent
		}
		if width > indent && line[len(line)-1] != ' ' {
			line += " "
			width++
		}
		line += word
		width += ww
	}
	return append(out, line)
}

func splitWords(s string) []string {
	var out []string
	word := ""
	for _, r := range s {
		if r == ' ' {
			if word != "" {
				out = append(out, word)
			}
			word = ""
			continue
		}
		word += string(r)
	}
	if word != "" {
		out = append(out, word)
	}
	return out
}

// Update scrolls.
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	maxOff := max(len(m.lines)-m.h, 0)
	km := m.KeyMap
	switch {
	case key.Matches(k, km.Down):
		m.offset = min(m.offset+1, maxOff)
	case key.Matches(k, km.Up):
		m.offset = max(m.offset-1, 0)
	case key.Matches(k, km.PageDown):
		m.offset = min(m.offset+m.h-1, maxOff)
	case key.Matches(k, km.PageUp):
		m.offset = max(m.offset-m.h+1, 0)
	case key.Matches(k, km.Home):
		m.offset = 0
	case key.Matches(k, km.End):
		m.offset = maxOff
	}
	return m, nil
}

// View draws the log in its w x h cells.
func (m Model) View() string {
	lo := m.offset
	hi := min(lo+m.h, len(m.lines))
	return theme.Block(m.lines[lo:hi], m.w, m.h)
}
