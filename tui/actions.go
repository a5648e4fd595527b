package tui

// The actions: what an intent does to the session, and how it is reported.

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/outfile"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/switchsim/wave"
	"railyard/tui/panel"
	"railyard/tui/prompt"
)

// change runs an action that changes the session, then copies the
// session into the panels again. The marks of what a mode switch or a
// size tried changed stay only until the next action.
func (m *Model) change(fn func()) {
	m.nodes.SetDiffers(nil, nil, "")
	fn()
	m.sync()
	m.layout()
}

// setInput drives an input (d < 0: toggle) and reports the settle.
func (m *Model) setInput(n, d int) {
	var e *session.Event
	var err error
	if d < 0 {
		e, err = m.sess.Toggle(n)
	} else {
		e, err = m.sess.SetInput(n, switchsim.Drive(d))
	}
	if err != nil {
		m.fail(err.Error())
		return
	}
	m.report(e)
}

func (m *Model) next() {
	if m.sess.NumSteps() == 0 {
		m.note("this design has no steps file: set the inputs by hand")
		return
	}
	e, ok := m.sess.Next()
	if !ok {
		m.note(fmt.Sprintf("no more steps: all %d applied (p goes back)", m.sess.NumSteps()))
		return
	}
	m.report(e)
}

func (m *Model) back() {
	last := m.sess.Last()
	if !m.sess.GoBack() {
		m.note("already at the start: nothing to undo")
		return
	}
	m.say("back: undid " + m.title(last))
}

func (m *Model) run(stopOnFail bool) {
	if m.sess.NumSteps() == 0 {
		m.note("this design has no steps file")
		return
	}
	if m.sess.NextStep() >= m.sess.NumSteps() {
		m.note("no more steps to run (p goes back, g goes to a step)")
		return
	}
	evs := m.sess.RunToEnd(stopOnFail)
	last := evs[len(evs)-1]
	if last.Failed() {
		m.report(last)
		m.status += fmt.Sprintf("; stopped there after %s", diag.Count(len(evs), "step"))
		return
	}
	failed := 0
	for _, e := range evs {
		if e.Failed() {
			failed++
		}
	}
	if failed > 0 {
		m.fail(fmt.Sprintf("ran %s to the end: %d failed (v lists them)", diag.Count(len(evs), "step"), failed))
		return
	}
	m.say(fmt.Sprintf("ran %s to the end: every check passed", diag.Count(len(evs), "step")))
}

func (m *Model) jump(row int) {
	m.sess.JumpTo(row)
	e := m.sess.Last()
	if e.Action.Kind == session.Step && e.Action.Step == row {
		m.report(e)
		m.status = "went to " + m.status
		return
	}
	m.say(fmt.Sprintf("went to step %d", row+1))
}

// report words what an event did on the status line.
func (m *Model) report(e *session.Event) {
	counts := fmt.Sprintf("%s, %s", diag.Count(e.Rounds, "round"), diag.Count(len(e.Changes), "change"))
	// the short title: the step's label is in the rounds view, and a long
	// one would push the counts off an 80-column line
	short := m.title(e)
	if e.Action.Kind == session.Step {
		short = fmt.Sprintf("step %d", e.Action.Step+1)
	}
	msg := short + ": " + counts
	if n := len(e.Warnings); n > 0 {
		msg += ", " + diag.Count(n, "warning") + " (l)"
	}
	if e.Oscillated {
		msg += ", OSCILLATED"
	} else if e.Decided {
		msg += ", decided by race analysis (r)"
	}
	if e.Failed() {
		var bad []string
		for _, c := range e.Checks {
			if !c.Pass {
				bad = append(bad, fmt.Sprintf("%s want %s got %s", m.names.Node[c.Node], c.Want, c.Got.State))
			}
		}
		// the failure first: a long label must not push it off the line
		where := "CHECK FAILED"
		if e.Action.Kind == session.Step {
			where = fmt.Sprintf("CHECK FAILED at step %d", e.Action.Step+1)
		}
		m.fail(where + ": " + strings.Join(bad, ", ") + " (" + counts + ")")
		return
	}
	if len(e.Checks) > 0 {
		if n := countChecks(e); n == 1 {
			msg += "; the check passes"
		} else {
			msg += fmt.Sprintf("; %d checks pass", n)
		}
	}
	m.say(msg)
}

func countChecks(e *session.Event) int {
	n := 0
	for _, c := range e.Checks {
		if session.IsCheck(c) {
			n++
		}
	}
	return n
}

// The status line: say for what was done, note for a key that did nothing
// and why (information, not a failure), fail for a failed check or an
// error. Everything shown is printable: an error may quote a file.
func (m *Model) say(s string)  { m.status, m.statusAs = diag.Printable(s), statusOK }
func (m *Model) note(s string) { m.status, m.statusAs = diag.Printable(s), statusNote }
func (m *Model) fail(s string) { m.status, m.statusAs = diag.Printable(s), statusFail }

// title words an action briefly.
func (m *Model) title(e *session.Event) string {
	a := e.Action
	switch a.Kind {
	case session.Start:
		return "start"
	case session.Set:
		return "set " + m.names.Node[a.Node] + "=" + a.Drive.String()
	case session.Step:
		t := fmt.Sprintf("step %d", a.Step+1)
		if a.Label != "" {
			t += " " + diag.Printable(a.Label)
		}
		return t
	}
	return a.Kind.String()
}

// openSave asks what to save: with Options.Save, only the trace or a VCD
// (the owner chose the place); else a file name, the trace's by default.
func (m *Model) openSave() {
	st := prompt.DefaultStyles(m.th)
	base := m.sess.Design().Name
	if base == "" {
		base = load.BaseName(m.sess.DesignPath())
	}
	if m.opt.Save != nil {
		m.prompt = prompt.NewChoose(st)
	} else {
		tr, vcd := base+".trace", base+".vcd"
		if m.opt.TracePath != "" {
			tr = m.opt.TracePath
		}
		m.prompt = prompt.NewSave(st, diag.Printable(tr), diag.Printable(vcd))
	}
	if m.sess.Edited() {
		// a name of its own by default: the design as loaded is replaced
		// only when its name is typed and the question answered
		m.prompt = m.prompt.WithDesign(diag.Printable(base + "-edited.sw"))
	}
	m.prompt.SetSize(m.w, 1)
}

func (m *Model) openJump() {
	if m.sess.NumSteps() == 0 {
		m.note("this design has no steps file: g needs one")
		return
	}
	m.prompt = prompt.NewJump(prompt.DefaultStyles(m.th), m.sess.NumSteps())
	m.prompt.SetSize(m.w, 1)
}

// save writes what a save intent asks for: through Options.Save, or to
// the path typed, asking first before it replaces a file this explorer
// did not write itself.
func (m *Model) save(s panel.Save) {
	write := func(w io.Writer) error { _, err := trace.Write(m.sess, w, ""); return err }
	what := traceWhat(m.sess)
	switch s.Kind {
	case panel.SaveVCD:
		write = func(w io.Writer) error { return wave.Write(w, m.sess, wave.Options{}) }
		what = fmt.Sprintf("a VCD of %s", diag.Count(len(m.sess.History()), "action"))
	case panel.SaveDesign:
		if !m.sess.Edited() {
			m.note("the design has no size tried: there is nothing to save as .sw (W on a device row tries one)")
			return
		}
		src := m.sess.Design().Source
		write = func(w io.Writer) error { _, err := w.Write(src); return err }
		what = fmt.Sprintf("the design with %s", diag.Count(len(m.sess.Edits()), "size")+" tried")
		if !strings.EqualFold(filepath.Ext(s.Path), ".sw") && m.opt.Save == nil {
			m.fail(s.Path + ": a design is saved as .sw: give a name that ends in .sw; nothing written")
			return
		}
	}
	if m.opt.Save != nil {
		shown, err := m.opt.Save(s.Kind, write)
		if err != nil {
			m.fail("could not save " + what + ": " + err.Error())
			return
		}
		m.say("saved " + what + " as " + shown)
		return
	}
	path := filepath.Clean(s.Path)
	if !s.Overwrite && !m.written[path] {
		fi, err := os.Lstat(path)
		switch {
		case err == nil && !fi.Mode().IsRegular():
			m.fail(s.Path + " is not a regular file: nothing written; choose another name")
			return
		case err == nil:
			m.prompt = prompt.NewConfirm(prompt.DefaultStyles(m.th), s)
			m.prompt.SetSize(m.w, 1)
			return
		case !errors.Is(err, fs.ErrNotExist):
			m.fail("could not save " + what + ": " + err.Error())
			return
		}
	}
	var err error
	switch s.Kind {
	case panel.SaveVCD:
		err = wave.Save(m.sess, path, wave.Options{}) // never over the design, its steps, a link or a device
	case panel.SaveDesign:
		// over the design as loaded only after the question above, never
		// over its steps, a link or a device
		var keep []outfile.Keep
		if p := m.sess.StepsPath(); p != "" {
			keep = append(keep, outfile.Keep{Path: p, What: "the steps file"})
		}
		err = outfile.Write(path, keep, write)
	default:
		_, err = trace.Save(m.sess, path)
	}
	if err != nil {
		m.fail("could not save " + what + ": " + err.Error())
		return
	}
	m.written[path] = true
	msg := "saved " + what + " to " + path
	switch s.Kind {
	case panel.SaveTrace:
		msg += "; railyard replay " + path + " repeats it"
		if m.sess.Edited() && !m.designSaved {
			msg += " once the edited design is saved (s, tab to the design) and the trace saved again"
		}
	case panel.SaveDesign:
		// the session now names its design by the file, so that a trace
		// saved from here on replays on it
		if err := m.sess.SavedAs(path, m.sess.Design().Source); err == nil {
			m.designSaved = true
		}
		msg += "; railyard explore " + path + " opens it"
	}
	m.say(msg)
}

// traceWhat words the trace a save writes: its actions, counted as replay
// counts them (the start, sets, steps and backs), and the cap when the
// trace reached it.
func traceWhat(s *session.Session) string {
	w := trace.Of(s)
	if w == nil {
		return "the trace"
	}
	what := "the trace (" + diag.Count(w.Actions(), "action")
	if capped, skipped, why := w.Capped(); capped {
		what += fmt.Sprintf("; %s, so the last %d were not kept", why, skipped)
	}
	return what + ")"
}
