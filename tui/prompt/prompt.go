// Package prompt is the explorer's one-line question at the foot of the
// screen: the file name to save the trace (or, after tab, a VCD) under, or
// the step to go to. Enter answers, Esc cancels.
package prompt

import (
	"strconv"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/tui/listing"
	"railyard/tui/theme"
)

// Kind is what the prompt asks for.
type Kind uint8

const (
	SaveTrace Kind = iota // a file name for the session trace
	SaveVCD               // a file name for a VCD of the history in force
	Jump                  // a step number
)

// KeyMap are the prompt's keys.
type KeyMap struct {
	Accept, Cancel, Switch key.Binding
}

// DefaultKeyMap: enter accepts, esc cancels, tab switches trace and VCD.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Accept: key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "ok")),
		Cancel: key.NewBinding(key.WithKeys("esc"), key.WithHelp("esc", "cancel")),
		Switch: key.NewBinding(key.WithKeys("tab"), key.WithHelp("tab", "trace or VCD")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding  { return []key.Binding{k.Accept, k.Cancel, k.Switch} }
func (k KeyMap) FullHelp() [][]key.Binding { return [][]key.Binding{k.ShortHelp()} }

// Styles draw the prompt.
type Styles struct {
	Theme    *theme.Theme
	Question lipgloss.Style
	Hint     lipgloss.Style
	Error    lipgloss.Style
}

// DefaultStyles takes the prompt's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Question: t.Accent.Bold(true), Hint: t.Dim, Error: t.Error}
}

// Answer is what the prompt gives back when it closes.
type Answer struct {
	Kind     Kind
	Text     string
	Step     int // Jump: 0-based row
	Canceled bool
}

// Model is an open prompt.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	kind     Kind
	field    listing.Field
	defaults [2]string // trace and VCD default names
	steps    int
	err      string
}

// NewSave asks for a file name, offering the trace and VCD defaults.
func NewSave(st Styles, traceName, vcdName string) *Model {
	m := &Model{KeyMap: DefaultKeyMap(), Styles: st, kind: SaveTrace, defaults: [2]string{traceName, vcdName}}
	m.field.CursorGlyph = cursorGlyph(st.Theme)
	m.field.SetValue(traceName)
	m.field.Focus()
	return m
}

// NewJump asks for a step number from 1 to steps.
func NewJump(st Styles, steps, suggest int) *Model {
	m := &Model{KeyMap: DefaultKeyMap(), Styles: st, kind: Jump, steps: steps}
	m.field.CursorGlyph = cursorGlyph(st.Theme)
	m.field.Limit = 9
	if suggest > 0 {
		m.field.SetValue(strconv.Itoa(suggest))
	}
	m.field.Focus()
	return m
}

func cursorGlyph(t *theme.Theme) string {
	if t.ASCII {
		return "_"
	}
	return "▏"
}

// Kind is what the prompt is asking for now.
func (m *Model) Kind() Kind { return m.kind }

// Value is the text typed so far.
func (m *Model) Value() string { return m.field.Value() }

// Update handles a key; it returns an answer when the prompt closes.
func (m *Model) Update(msg tea.Msg) *Answer {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return nil
	}
	switch {
	case key.Matches(k, m.KeyMap.Cancel):
		return &Answer{Kind: m.kind, Canceled: true}
	case key.Matches(k, m.KeyMap.Switch) && m.kind != Jump:
		old, next := m.kind, SaveVCD
		if old == SaveVCD {
			next = SaveTrace
		}
		// carry the name across, swapping the default extension
		v := m.field.Value()
		if v == m.defaults[old] || v == "" {
			v = m.defaults[next]
		}
		m.kind = next
		m.field.SetValue(v)
		m.err = ""
		return nil
	case key.Matches(k, m.KeyMap.Accept):
		v := strings.TrimSpace(m.field.Value())
		if m.kind == Jump {
			n, err := strconv.Atoi(v)
			if err != nil || n < 1 || n > m.steps {
				m.err = "a step number from 1 to " + strconv.Itoa(m.steps)
				return nil
			}
			return &Answer{Kind: Jump, Text: v, Step: n - 1}
		}
		if v == "" {
			m.err = "a file name, please"
			return nil
		}
		return &Answer{Kind: m.kind, Text: v}
	}
	if m.kind == Jump && k.Type == tea.KeyRunes {
		for _, r := range k.Runes {
			if r < '0' || r > '9' {
				m.err = "digits only"
				return nil
			}
		}
	}
	if m.field.Update(k) {
		m.err = ""
	}
	return nil
}

// View draws the prompt on one line of w cells.
func (m *Model) View(w int) string {
	st := m.Styles
	q := ""
	hint := ""
	switch m.kind {
	case SaveTrace:
		q, hint = "save trace as ", "  enter save · tab VCD instead · esc cancel"
	case SaveVCD:
		q, hint = "export VCD as ", "  enter save · tab trace instead · esc cancel"
	case Jump:
		q, hint = "go to step (1-"+strconv.Itoa(m.steps)+") ", "  enter go · esc cancel"
	}
	if st.Theme.ASCII {
		hint = strings.ReplaceAll(hint, "·", "|")
	}
	line := st.Question.Render(q) + m.field.View()
	if m.err != "" {
		line += "  " + st.Error.Render(m.err)
	} else {
		line += st.Hint.Render(hint)
	}
	return theme.Fit(line, w)
}
