package sshserve

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim/diag"
)

// PickerKeyMap is the picker's keys.
type PickerKeyMap struct {
	Up, Down, Open, Quit key.Binding
}

// DefaultPickerKeyMap returns the picker's default keys.
func DefaultPickerKeyMap() PickerKeyMap {
	return PickerKeyMap{
		Up:   key.NewBinding(key.WithKeys("up", "k"), key.WithHelp("↑/k", "up")),
		Down: key.NewBinding(key.WithKeys("down", "j"), key.WithHelp("↓/j", "down")),
		Open: key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "open")),
		Quit: key.NewBinding(key.WithKeys("q", "esc", "ctrl+c"), key.WithHelp("q", "quit")),
	}
}

// picker lists what the server serves and lets the user choose one; the
// host model opens the choice.
type picker struct {
	keys          PickerKeyMap
	names         []string
	cursor, top   int
	width, height int
	ascii         bool
	err           string // why the last choice could not be opened
}

func newPicker(names []string, width, height int, ascii bool) *picker {
	keys := DefaultPickerKeyMap()
	if ascii {
		keys.Up.SetHelp("up/k", "up")
		keys.Down.SetHelp("down/j", "down")
	}
	return &picker{keys: keys, names: names, width: width, height: height, ascii: ascii}
}

func (p *picker) update(msg tea.Msg) tea.Cmd {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		p.width, p.height = msg.Width, msg.Height
	case tea.KeyMsg:
		switch {
		case key.Matches(msg, p.keys.Quit):
			return tea.Quit
		case key.Matches(msg, p.keys.Up):
			if p.cursor > 0 {
				p.cursor--
			}
		case key.Matches(msg, p.keys.Down):
			if p.cursor < len(p.names)-1 {
				p.cursor++
			}
		case key.Matches(msg, p.keys.Open):
			if len(p.names) > 0 {
				name := p.names[p.cursor]
				return func() tea.Msg { return choose{name} }
			}
		}
	}
	return nil
}

// rows is the number of list lines that fit: title, blank, error and help take four.
func (p *picker) rows() int { return max(1, p.height-4) }

func (p *picker) view() string {
	var b strings.Builder
	b.WriteString("railyard · choose a design\n\n")
	if len(p.names) == 0 {
		b.WriteString("  (nothing is served here)\n")
	}
	n := p.rows()
	if p.cursor < p.top {
		p.top = p.cursor
	}
	if p.cursor >= p.top+n {
		p.top = p.cursor - n + 1
	}
	mark := "▸ "
	if p.ascii {
		mark = "> "
	}
	for i := p.top; i < len(p.names) && i < p.top+n; i++ {
		// A name is a file name in the folder: shown printable, chosen as it is.
		line := "  " + diag.Printable(p.names[i])
		if i == p.cursor {
			line = mark + diag.Printable(p.names[i])
		}
		b.WriteString(ansi.Truncate(line, max(1, p.width), "") + "\n")
	}
	if p.err != "" {
		b.WriteString(ansi.Truncate("! "+p.err, max(1, p.width), "") + "\n")
	} else {
		b.WriteString("\n")
	}
	k := p.keys
	b.WriteString(ansi.Truncate(fmt.Sprintf("%s %s · %s %s · %s %s · %s %s",
		k.Up.Help().Key, k.Up.Help().Desc, k.Down.Help().Key, k.Down.Help().Desc,
		k.Open.Help().Key, k.Open.Help().Desc, k.Quit.Help().Key, k.Quit.Help().Desc), max(1, p.width), ""))
	return b.String()
}
