package tui

import "github.com/charmbracelet/bubbles/key"

// KeyMap are the keys that work wherever the focus is.
type KeyMap struct {
	Quit, Help, Close      key.Binding
	FocusNext, FocusPrev   key.Binding
	Next, Prev, Jump       key.Binding
	RunToFail, RunToEnd    key.Binding
	Save                   key.Binding
	Filter                 key.Binding
	Rounds, Vectors, Why   key.Binding
	Devices, Timeline, Log key.Binding
	Audit                  key.Binding
	Mode                   key.Binding
	Corner                 key.Binding
}

// DefaultKeyMap is the explorer's layout of keys.
func DefaultKeyMap() KeyMap {
	b := func(keys []string, k, desc string) key.Binding {
		return key.NewBinding(key.WithKeys(keys...), key.WithHelp(k, desc))
	}
	return KeyMap{
		Quit:      b([]string{"q", "ctrl+c"}, "q", "quit"),
		Help:      b([]string{"?"}, "?", "all keys"),
		Close:     b([]string{"esc"}, "esc", "close / clear filter"),
		FocusNext: b([]string{"tab"}, "tab", "next panel"),
		FocusPrev: b([]string{"shift+tab"}, "shift+tab", "previous panel"),
		Next:      b([]string{"n"}, "n", "next step"),
		Prev:      b([]string{"p"}, "p", "back: undo last action"),
		Jump:      b([]string{"g"}, "g", "go to step…"),
		RunToFail: b([]string{"f"}, "f", "run to first failing check"),
		RunToEnd:  b([]string{"e"}, "e", "run to the end"),
		Save:      b([]string{"s"}, "s", "save trace / VCD / design"),
		Filter:    b([]string{"/"}, "/", "filter"),
		Rounds:    b([]string{"r"}, "r", "rounds of the last settle"),
		Vectors:   b([]string{"v"}, "v", "vectors: the steps file"),
		Why:       b([]string{"w"}, "w", "why: inspect node"),
		Devices:   b([]string{"d"}, "d", "devices"),
		Timeline:  b([]string{"t"}, "t", "timeline"),
		Log:       b([]string{"l"}, "l", "warnings log"),
		Audit:     b([]string{"a"}, "a", "audit: every reachable state"),
		Mode:      b([]string{"i"}, "i", "ideal / physical mode"),
		Corner:    b([]string{"c"}, "c", "next technology corner"),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Next, k.Prev, k.FocusNext, k.Help, k.Quit}
}

func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{
		{k.Next, k.Prev, k.Jump, k.RunToFail, k.RunToEnd},
		{k.Rounds, k.Vectors, k.Why, k.Devices, k.Timeline, k.Log, k.Audit},
		{k.Mode, k.Corner, k.FocusNext, k.FocusPrev, k.Filter, k.Save, k.Help, k.Close, k.Quit},
	}
}
