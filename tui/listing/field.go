package listing

import (
	"strings"

	tea "github.com/charmbracelet/bubbletea"
)

// Field is a one-line text field: enough editing for a file name or a
// filter, with a cursor that does not blink (a blinking cursor redraws the
// screen twice a second, which costs bytes over a slow SSH link).
type Field struct {
	Prompt string
	Limit  int // 0: no limit
	// CursorGlyph is drawn at the insertion point when the field has focus.
	CursorGlyph string

	text    []rune
	pos     int
	focused bool
}

// SetValue replaces the text and puts the cursor at its end.
func (f *Field) SetValue(s string) {
	f.text = []rune(s)
	f.pos = len(f.text)
}

// Value is the text.
func (f *Field) Value() string { return string(f.text) }

// Focus and Blur start and stop editing.
func (f *Field) Focus() { f.focused = true; f.pos = len(f.text) }
func (f *Field) Blur()  { f.focused = false }

// Focused reports whether the field takes keys.
func (f *Field) Focused() bool { return f.focused }

// Update edits the text for a key; it reports whether the text changed.
func (f *Field) Update(k tea.KeyMsg) bool {
	before := string(f.text)
	switch k.Type {
	case tea.KeyRunes, tea.KeySpace:
		r := k.Runes
		if k.Type == tea.KeySpace {
			r = []rune{' '}
		}
		for _, c := range r {
			if c < ' ' || (f.Limit > 0 && len(f.text) >= f.Limit) {
				continue
			}
			f.text = append(f.text[:f.pos], append([]rune{c}, f.text[f.pos:]...)...)
			f.pos++
		}
	case tea.KeyBackspace:
		if f.pos > 0 {
			f.text = append(f.text[:f.pos-1], f.text[f.pos:]...)
			f.pos--
		}
	case tea.KeyDelete:
		if f.pos < len(f.text) {
			f.text = append(f.text[:f.pos], f.text[f.pos+1:]...)
		}
	case tea.KeyLeft:
		f.pos = max(f.pos-1, 0)
	case tea.KeyRight:
		f.pos = min(f.pos+1, len(f.text))
	case tea.KeyHome, tea.KeyCtrlA:
		f.pos = 0
	case tea.KeyEnd, tea.KeyCtrlE:
		f.pos = len(f.text)
	case tea.KeyCtrlU:
		f.text, f.pos = f.text[f.pos:], 0
	case tea.KeyCtrlW:
		i := f.pos
		for i > 0 && f.text[i-1] == ' ' {
			i--
		}
		for i > 0 && f.text[i-1] != ' ' {
			i--
		}
		f.text, f.pos = append(f.text[:i], f.text[f.pos:]...), i
	}
	return string(f.text) != before
}

// View draws the prompt and the text, with the cursor while focused.
func (f *Field) View() string {
	if !f.focused {
		return f.Prompt + string(f.text)
	}
	c := f.CursorGlyph
	if c == "" {
		c = "_"
	}
	var b strings.Builder
	b.WriteString(f.Prompt)
	b.WriteString(string(f.text[:f.pos]))
	b.WriteString(c)
	b.WriteString(string(f.text[f.pos:]))
	return b.String()
}
