// Package listing holds the two pieces every list panel of the explorer
// shares: a cursor that scrolls a window over rows, and a name filter typed
// after '/'.
package listing

import (
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
)

// Cursor is a selected row and the first row shown, over Len rows seen
// through a window of Height rows.
type Cursor struct {
	Pos, Offset, Len, Height int
	// Skip, when set, marks rows the cursor never rests on (separators).
	// A slice, not a function, so that a cursor copied with its model
	// (panels are values) never reads another copy's rows.
	Skip []bool
}

func (c *Cursor) skip(i int) bool { return i >= 0 && i < len(c.Skip) && c.Skip[i] }

// SetLen changes the number of rows and keeps the cursor inside them.
func (c *Cursor) SetLen(n int) {
	c.Len = n
	c.clamp(1)
}

// SetHeight changes the window's height.
func (c *Cursor) SetHeight(h int) {
	c.Height = max(h, 1)
	c.clamp(1)
}

// Move moves the cursor by d rows (negative: up).
func (c *Cursor) Move(d int) {
	c.Pos += d
	dir := 1
	if d < 0 {
		dir = -1
	}
	c.clamp(dir)
}

// Top and Bottom move to the first and the last row.
func (c *Cursor) Top()    { c.Pos = 0; c.clamp(1) }
func (c *Cursor) Bottom() { c.Pos = c.Len - 1; c.clamp(-1) }

// Set puts the cursor on row i.
func (c *Cursor) Set(i int) { c.Pos = i; c.clamp(1) }

func (c *Cursor) clamp(dir int) {
	if c.Len <= 0 {
		c.Pos, c.Offset = 0, 0
		return
	}
	c.Pos = min(max(c.Pos, 0), c.Len-1)
	{
		for i := 0; i < c.Len && c.skip(c.Pos); i++ {
			next := c.Pos + dir
			if next < 0 || next >= c.Len {
				dir = -dir
				next = c.Pos + dir
			}
			c.Pos = min(max(next, 0), c.Len-1)
		}
	}
	h := max(c.Height, 1)
	if c.Pos < c.Offset {
		c.Offset = c.Pos
	}
	if c.Pos >= c.Offset+h {
		c.Offset = c.Pos - h + 1
	}
	c.Offset = min(max(c.Offset, 0), max(c.Len-h, 0))
	// show the separator above the first row when scrolled to it
	if c.Offset > 0 && c.Pos == c.Offset && c.skip(c.Offset-1) {
		c.Offset--
	}
}

// Window returns the rows [lo, hi) to draw.
func (c *Cursor) Window() (lo, hi int) {
	return c.Offset, min(c.Offset+max(c.Height, 1), c.Len)
}

// Nav are the cursor keys every list shares.
type Nav struct {
	Up, Down, PageUp, PageDown, Home, End key.Binding
}

// DefaultNav: arrows and vi letters.
func DefaultNav() Nav {
	return Nav{
		Up:       key.NewBinding(key.WithKeys("up", "k"), key.WithHelp("↑/k", "up")),
		Down:     key.NewBinding(key.WithKeys("down", "j"), key.WithHelp("↓/j", "down")),
		PageUp:   key.NewBinding(key.WithKeys("pgup", "ctrl+u"), key.WithHelp("pgup", "page up")),
		PageDown: key.NewBinding(key.WithKeys("pgdown", "ctrl+d"), key.WithHelp("pgdn", "page down")),
		Home:     key.NewBinding(key.WithKeys("home"), key.WithHelp("home", "first")),
		End:      key.NewBinding(key.WithKeys("end"), key.WithHelp("end", "last")),
	}
}

// Handle moves c for a navigation key and reports whether it was one.
func (n Nav) Handle(msg tea.KeyMsg, c *Cursor) bool {
	switch {
	case key.Matches(msg, n.Up):
		c.Move(-1)
	case key.Matches(msg, n.Down):
		c.Move(1)
	case key.Matches(msg, n.PageUp):
		c.Move(-max(c.Height-1, 1))
	case key.Matches(msg, n.PageDown):
		c.Move(max(c.Height-1, 1))
	case key.Matches(msg, n.Home):
		c.Top()
	case key.Matches(msg, n.End):
		c.Bottom()
	default:
		return false
	}
	return true
}

// Filter is a name filter: a text field shown while typing, and the text
// it leaves behind. Enter keeps the filter; Esc clears it.
type Filter struct {
	in     Field
	typing bool
}

// NewFilter makes an empty filter.
func NewFilter() Filter {
	return Filter{in: Field{Prompt: "/", Limit: 64}}
}

// Start begins typing.
func (f *Filter) Start() {
	f.typing = true
	f.in.Focus()
}

// Typing reports whether keys go to the filter.
func (f *Filter) Typing() bool { return f.typing }

// Value is the filter text.
func (f *Filter) Value() string { return f.in.Value() }

// Active reports whether a filter is typed or in force.
func (f *Filter) Active() bool { return f.typing || f.in.Value() != "" }

// Clear drops the filter.
func (f *Filter) Clear() {
	f.typing = false
	f.in.Blur()
	f.in.SetValue("")
}

// Update feeds a key to the filter while typing; it reports whether the
// filter text may have changed.
func (f *Filter) Update(msg tea.KeyMsg) bool {
	switch msg.Type {
	case tea.KeyEsc:
		f.Clear()
		return true
	case tea.KeyEnter, tea.KeyTab, tea.KeyUp, tea.KeyDown:
		f.typing = false
		f.in.Blur()
		return false
	}
	return f.in.Update(msg)
}

// Take feeds k to the filter when it is being typed: took says the key
// was the filter's, changed that the text changed (the rows want
// rebuilding).
func (f *Filter) Take(k tea.KeyMsg) (took, changed bool) {
	if !f.typing {
		return false, false
	}
	return true, f.Update(k)
}

// View draws the field while typing, or the filter in force.
func (f *Filter) View() string {
	if f.typing {
		return f.in.View()
	}
	if v := f.in.Value(); v != "" {
		return "/" + v
	}
	return ""
}

// Match reports whether name holds every space-separated word of the
// filter, ignoring case.
func Match(filter, name string) bool {
	if filter == "" {
		return true
	}
	name = strings.ToLower(name)
	for _, w := range strings.Fields(strings.ToLower(filter)) {
		if !strings.Contains(name, w) {
			return false
		}
	}
	return true
}
