package sshserve

import (
	"errors"
	"io"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
	"railyard/tui"
)

// explorer is the railyard explorer as served: the tui model, a Saver so
// that the whole session's trace is kept when it ends.
type explorer struct{ *tui.Model }

func (e explorer) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	m, cmd := e.Model.Update(msg)
	// The explorer returns itself; anything else would lose the trace kept
	// at the end, so it is not taken.
	if tm, ok := m.(*tui.Model); ok {
		e.Model = tm
	}
	return e, cmd
}

func (e explorer) WriteTrace(w io.Writer) error { return e.Session().WriteTrace(w) }

// openExplorer opens a session on the resolved design and builds the explorer.
func openExplorer(r ExplorerRequest) (tea.Model, error) {
	if r.Save == nil {
		return nil, errors.New("internal error: a served explorer needs a place to save")
	}
	files := r.Files
	if files == nil {
		files = load.Host(load.Options{})
	}
	s, err := session.OpenFrom(files, r.Design, r.Steps, session.Options{})
	if err != nil {
		return nil, err
	}
	// Options.Save is always set, so the save key never asks for a path
	// (which would be a path on the server); no TracePath, as the server
	// keeps the trace at the end itself.
	m := tui.New(s, r.Width, r.Height, tui.Options{
		Save:     r.Save,
		ASCII:    r.ASCII,
		NoColor:  r.NoColor,
		Banner:   r.Banner,
		Renderer: r.Renderer,
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
