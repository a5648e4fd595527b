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
// that the whole session's trace is kept when it ends, a traceWatcher so
// that the server learns when the trace reaches its cap, and a Closer that
// releases the trace's spool when the session is over.
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

// TraceFull reports whether the session's trace has stopped recording
// (traceWatcher): capped is true once an action was left out, and why says
// what stopped it (the size cap, or an action with a line too long for a
// trace).
func (e explorer) TraceFull() (capped bool, why string) {
	w := trace.Of(e.Session())
	if w == nil {
		return false, ""
	}
	capped, _, why = w.Capped()
	return capped, why
}

// Close stops what the explorer runs in the background (its
// reachable-state search: the user has left) and releases the trace's
// spool; the explorer records nothing after.
func (e explorer) Close() error {
	e.Model.Close()
	if w := trace.Of(e.Session()); w != nil {
		return w.Close()
	}
	return nil
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
	opt := trace.Options{DesignName: servedName(r.Design), MaxBytes: r.MaxTrace}
	if r.Steps != "" {
		opt.StepsName = servedName(r.Steps)
	}
	// The spool takes the disk the saves take (TraceDir), and the server's
	// own paths stay out of what the user reads.
	if _, err := trace.Start(s, r.TraceDir, opt); err != nil {
		return nil, &keeperError{shown: "the server cannot keep this session's trace; ask the server's keeper", err: err}
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

// keeperError is an error whose detail is for the server's keeper (its
// log), not for the user, who reads shown.
type keeperError struct {
	shown string
	err   error
}

func (e *keeperError) Error() string { return e.shown }
func (e *keeperError) Unwrap() error { return e.err }

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
