package sshserve

import (
	tea "github.com/charmbracelet/bubbletea"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
	"railyard/tui"
)

// explorer is the railyard explorer as served: the tui model, with its
// session's trace saved where the server says.
type explorer struct{ *tui.Model }

func (e explorer) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	m, cmd := e.Model.Update(msg)
	// The explorer returns itself; anything else would lose the save guard,
	// so it is not taken.
	if tm, ok := m.(*tui.Model); ok {
		e.Model = tm
	}
	return e, cmd
}

func (e explorer) SaveTrace(path string) error { return e.Session().SaveTrace(path) }

// SaveKeys are the keys that open the explorer's save prompt.
func (e explorer) SaveKeys() []string { return tui.DefaultKeyMap().Save.Keys() }

// openExplorer opens a session on the resolved design and builds the explorer.
func openExplorer(r ExplorerRequest) (tea.Model, error) {
	files := r.Files
	if files == nil {
		files = load.Host(load.Options{})
	}
	s, err := session.OpenFrom(files, r.Design, r.Steps, session.Options{})
	if err != nil {
		return nil, err
	}
	m := tui.New(s, r.Width, r.Height, tui.Options{
		TracePath: r.TracePath,
		ASCII:     r.ASCII,
		NoColor:   r.NoColor,
		Banner:    r.Banner,
		Renderer:  r.Renderer,
	})
	return explorer{m}, nil
}

// demoNames lists the embedded demos (served as demo:NAME).
func demoNames() []string {
	var names []string
	for _, e := range designs.List() {
		names = append(names, e.Name)
	}
	return names
}
