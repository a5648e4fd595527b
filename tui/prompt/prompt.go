// Package prompt is the explorer's one-line question at the foot of the
// screen: the file name to save the trace (or, after tab, a VCD, or the
// design with the sizes tried as .sw) under; with the files' place chosen
// by the explorer's owner, only which of them to save; whether to replace
// a file that is there; the step to go to; or the width (tab: length) to
// try on a transistor. Enter answers, Esc cancels; the answer is an intent
// for the root (panel.Save, panel.JumpTo, panel.Resize, panel.Canceled,
// panel.Note).
package prompt

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// Kind is what the prompt asks for.
type Kind uint8

const (
	None       Kind = iota // no prompt is open
	SaveTrace              // a file name for the session trace
	SaveVCD                // a file name for a VCD of the history in force
	Choose                 // trace or VCD, to a place the explorer's owner chose
	Confirm                // replace a file that is there?
	Jump                   // a step number
	SaveDesign             // a file name for the design with the sizes tried (.sw)
	Size                   // a width or length to try on a transistor
)

// KeyMap are the prompt's keys.
type KeyMap struct {
	Accept, Cancel, Switch key.Binding
	Yes, No                key.Binding
}

// DefaultKeyMap: enter accepts, esc cancels, tab switches trace and VCD,
// y and n answer a yes-or-no question.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Accept: key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "ok")),
		Cancel: key.NewBinding(key.WithKeys("esc"), key.WithHelp("esc", "cancel")),
		Switch: key.NewBinding(key.WithKeys("tab"), key.WithHelp("tab", "trace, VCD or design")),
		Yes:    key.NewBinding(key.WithKeys("y"), key.WithHelp("y", "yes")),
		No:     key.NewBinding(key.WithKeys("n"), key.WithHelp("n", "no")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding  { return []key.Binding{k.Accept, k.Cancel, k.Switch} }
func (k KeyMap) FullHelp() [][]key.Binding { return [][]key.Binding{k.ShortHelp(), {k.Yes, k.No}} }

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

// Model is the prompt; its zero value is closed.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	kind     Kind
	field    listing.Field
	defaults map[Kind]string // the default names of the kinds of file offered
	design   bool            // Choose: the design is offered too
	steps    int
	save     panel.Save // Confirm: the save to make if the answer is yes
	size     sizing     // Size
	err      string
	w        int
}

// sizing is what the size prompt asks about.
type sizing struct {
	device int
	name   string
	w, l   float64
	length bool // asking for L, not W
}

// NewSave asks for a file name, offering the trace and VCD defaults.
func NewSave(st Styles, traceName, vcdName string) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, kind: SaveTrace, defaults: map[Kind]string{SaveTrace: traceName, SaveVCD: vcdName}}
	m.field.CursorGlyph = cursorGlyph(st.Theme)
	m.field.SetValue(traceName)
	m.field.Focus()
	return m
}

// WithDesign offers the design with the sizes tried too, as .sw under
// name by default; tab reaches it after the VCD. For a Choose prompt the
// name is not used (the owner names the file).
func (m Model) WithDesign(name string) Model {
	if m.kind == Choose {
		m.design = true
		return m
	}
	m.defaults[SaveDesign] = name
	return m
}

// NewChoose asks only whether to save the trace or a VCD (or, WithDesign,
// the design): the explorer's owner chooses where the file goes and its
// name, so no path is typed.
func NewChoose(st Styles) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st, kind: Choose}
}

// NewSize asks for the width to try on transistor device (name, printable)
// drawn w x l metres; tab asks for the length instead. The field starts
// empty, and takes a number in the design format (0.72u, 720n, 7.2e-7).
func NewSize(st Styles, device int, name string, w, l float64) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, kind: Size, size: sizing{device: device, name: name, w: w, l: l}}
	m.field.CursorGlyph = cursorGlyph(st.Theme)
	m.field.Limit = 24
	m.field.Focus()
	return m
}

// NewConfirm asks whether to replace the file s would write over.
func NewConfirm(st Styles, s panel.Save) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st, kind: Confirm, save: s}
}

// NewJump asks for a step number from 1 to steps. The field starts empty:
// a suggested number would be typed onto (2 after a suggested 5 is 52).
func NewJump(st Styles, steps int) Model {
	m := Model{KeyMap: DefaultKeyMap(), Styles: st, kind: Jump, steps: steps}
	m.field.CursorGlyph = cursorGlyph(st.Theme)
	m.field.Limit = 9
	m.field.Focus()
	return m
}

func cursorGlyph(t *theme.Theme) string {
	if t.ASCII {
		return "_"
	}
	return "▏"
}

// Active reports whether the prompt is open.
func (m Model) Active() bool { return m.kind != None }

// Kind is what the prompt is asking for now.
func (m Model) Kind() Kind { return m.kind }

// Value is the text typed so far.
func (m Model) Value() string { return m.field.Value() }

// SetSize gives the prompt its line (h is always 1).
func (m *Model) SetSize(w, _ int) { m.w = w }

// Update handles a key. When the prompt closes it becomes inactive and
// the command carries the answer.
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok || m.kind == None {
		return m, nil
	}
	km := m.KeyMap
	closeWith := func(intent tea.Msg) (Model, tea.Cmd) {
		m.kind = None
		return m, panel.Send(intent)
	}
	switch m.kind {
	case Confirm:
		switch {
		case key.Matches(k, km.Yes):
			s := m.save
			s.Overwrite = true
			return closeWith(s)
		case key.Matches(k, km.No, km.Cancel):
			return closeWith(panel.Canceled{What: diag.Printable(m.save.Path) + " left as it was"})
		}
		m.err = "y or n"
		return m, nil
	case Choose:
		switch {
		case key.Matches(k, km.Cancel):
			return closeWith(panel.Canceled{What: "nothing saved"})
		case key.Matches(k, km.Switch):
			switch {
			case m.save.Kind == panel.SaveTrace:
				m.save.Kind = panel.SaveVCD
			case m.save.Kind == panel.SaveVCD && m.design:
				m.save.Kind = panel.SaveDesign
			default:
				m.save.Kind = panel.SaveTrace
			}
		case key.Matches(k, km.Accept):
			return closeWith(panel.Save{Kind: m.save.Kind})
		}
		return m, nil
	}
	if m.kind == Size {
		return m.sizeKey(k)
	}
	switch {
	case key.Matches(k, km.Cancel):
		return closeWith(panel.Canceled{What: "canceled"})
	case key.Matches(k, km.Switch) && m.kind != Jump:
		old, next := m.kind, SaveVCD
		switch {
		case old == SaveVCD && m.defaults[SaveDesign] != "":
			next = SaveDesign
		case old != SaveTrace:
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
		return m, nil
	case key.Matches(k, km.Accept):
		v := strings.TrimSpace(m.field.Value())
		if m.kind == Jump {
			n, err := strconv.Atoi(v)
			switch {
			case v == "":
				return closeWith(panel.Note{Text: "no step given: g then a number from 1 to " + strconv.Itoa(m.steps)})
			case err != nil || n < 1 || n > m.steps:
				return closeWith(panel.Note{Text: fmt.Sprintf("there is no step %s: the steps file has %d (1 to %d)", v, m.steps, m.steps)})
			}
			return closeWith(panel.JumpTo{Row: n - 1})
		}
		if v == "" {
			m.err = "a file name, please"
			return m, nil
		}
		kind := panel.SaveTrace
		switch m.kind {
		case SaveVCD:
			kind = panel.SaveVCD
		case SaveDesign:
			kind = panel.SaveDesign
		}
		return closeWith(panel.Save{Kind: kind, Path: v})
	}
	if m.kind == Jump && k.Type == tea.KeyRunes {
		for _, r := range k.Runes {
			if r < '0' || r > '9' {
				m.err = "digits only"
				return m, nil
			}
		}
	}
	if m.field.Update(k) {
		m.err = ""
	}
	return m, nil
}

// sizeKey handles a key of the size prompt: tab swaps W and L, enter
// reads the number and answers with the size to try; a number that does
// not read, or is no size for a cell, keeps the prompt open and says why.
func (m Model) sizeKey(k tea.KeyMsg) (Model, tea.Cmd) {
	km := m.KeyMap
	switch {
	case key.Matches(k, km.Cancel):
		m.kind = None
		return m, panel.Send(panel.Canceled{What: "size left as it was"})
	case key.Matches(k, km.Switch):
		m.size.length = !m.size.length
		m.err = ""
		return m, nil
	case key.Matches(k, km.Accept):
		v := strings.TrimSpace(m.field.Value())
		x, err := netfile.ParseNumber(v)
		r := netfile.SizeRange
		switch {
		case v == "":
			m.err = "a size, please (0.72u)"
		case err != nil:
			m.err = fmt.Sprintf("%q is not a number: write it as in a design, 0.72u or 720n", v)
		case x <= 0:
			m.err = "a size must be positive"
		case x < r.Min || x > r.Max:
			m.err = fmt.Sprintf("%s reads as %g m, not a cell's size (%s to %s m)%s", v, x,
				netfile.FormatNumber(r.Min), netfile.FormatNumber(r.Max), prefixHint(v, x))
		default:
			w, l := m.size.w, m.size.l
			if m.size.length {
				l = x
			} else {
				w = x
			}
			m.kind = None
			return m, panel.Send(panel.Resize{Device: m.size.device, W: w, L: l})
		}
		return m, nil
	}
	if m.field.Update(k) {
		m.err = ""
	}
	return m, nil
}

// prefixHint suggests the prefix a size without one probably lacked.
func prefixHint(written string, x float64) string {
	for _, p := range []struct {
		prefix string
		scale  float64
	}{{"u", 1e-6}, {"n", 1e-9}} {
		if v := x * p.scale; v >= netfile.SizeRange.Min && v <= netfile.SizeRange.Max && strings.IndexAny(written[len(written)-1:], "fpnumkMG") < 0 {
			return ": " + written + p.prefix + "?"
		}
	}
	return ""
}

// View draws the prompt on its line.
func (m Model) View() string {
	st := m.Styles
	q, hint, field := "", "", m.field.View()
	switch m.kind {
	case None:
		return ""
	case SaveTrace:
		q, hint = "save trace as ", "  enter save · tab VCD instead · esc cancel"
	case SaveVCD:
		q, hint = "export VCD as ", "  enter save · tab trace instead · esc cancel"
		if m.defaults[SaveDesign] != "" {
			hint = "  enter save · tab the design instead · esc cancel"
		}
	case SaveDesign:
		q, hint = "save design as ", "  enter save · tab trace · esc cancel"
	case Choose:
		field = ""
		switch m.save.Kind {
		case panel.SaveVCD:
			q, hint = "save a VCD of the history", "  enter save · tab the trace instead · esc cancel"
			if m.design {
				hint = "  enter save · tab the design instead · esc cancel"
			}
		case panel.SaveDesign:
			q, hint = "save the design with the sizes tried (.sw)", "  enter save · tab the trace instead · esc cancel"
		default:
			q, hint = "save the session trace", "  enter save · tab a VCD instead · esc cancel"
		}
	case Size:
		what, now := "W", m.size.w
		other := "L"
		if m.size.length {
			what, now, other = "L", m.size.l, "W"
		}
		q = fmt.Sprintf("%s: try %s (now %s) ", m.size.name, what, netfile.FormatNumber(now))
		hint = "  enter try · tab " + other + " instead · esc cancel"
	case Confirm:
		field = ""
		q, hint = diag.Printable(m.save.Path)+" is there: replace it?", "  y replace · n keep it"
	case Jump:
		q, hint = "go to step (1-"+strconv.Itoa(m.steps)+") ", "  enter go · esc cancel"
	}
	if st.Theme.ASCII {
		hint = strings.ReplaceAll(hint, "·", "|")
	}
	line := st.Question.Render(q) + field
	if m.err != "" {
		line += "  " + st.Error.Render(m.err)
	} else {
		line += st.Hint.Render(hint)
	}
	return theme.Fit(line, m.w)
}
