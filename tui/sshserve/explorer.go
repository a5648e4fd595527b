package sshserve

import (
	"errors"
	"io"
	"path/filepath"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
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

// WriteTrace writes the whole session's trace (the server keeps it when
// the session ends).
func (e explorer) WriteTrace(w io.Writer) error {
	_, err := trace.Write(e.Session(), w, "")
	return err
}

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
	// keeps the trace at the end itself. The trace names the design as the
	// designs folder holds it, so that it replays elsewhere with replay
	// --designs.
	opt := trace.Options{DesignName: servedName(r.Design)}
	if r.Steps != "" {
		opt.StepsName = servedName(r.Steps)
	}
	if _, err := trace.Start(s, "", opt); err != nil {
		return nil, err
	}
	m := tui.New(s, r.Width, r.Height, tui.Options{
		Save:     r.Save,
		ASCII:    r.ASCII,
		NoColor:  r.NoColor,
		Banner:   r.Banner,
		Renderer: r.Renderer,
	})
	return explorer{m}, nil
}

// servedName is a served file's name relative to the designs folder (the
// folder is flat: a name is a file in it), or demo:NAME as it is.
func servedName(p string) string {
	if isDemo(p) {
		return p
	}
	return filepath.Base(p)
}

// demoNames lists the embedded demos (served as demo:NAME).
func demoNames() []string {
	var names []string
	for _, e := range designs.All() {
		names = append(names, e.Name)
	}
	return names
}

// isDemo reports whether a name is an embedded demo (load.CutDemo).
func isDemo(name string) bool {
	_, ok := load.CutDemo(name)
	return ok
}
