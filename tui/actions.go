package tui

// The actions: what a key does to the session, and how it is reported.

import (
	"fmt"
	"path/filepath"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/switchsim/wave"
	"railyard/tui/prompt"
)

// change runs an action that changes the session, unless read-only.
func (m *Model) change(fn func()) {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: only the session's owner can change it")
		return
	}
	m.lock()
	fn()
	m.sync()
	m.unlock()
	if m.opt.OnChange != nil {
		m.opt.OnChange()
	}
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
		m.fail("this design has no steps file: set the inputs by hand")
		return
	}
	e, ok := m.sess.Next()
	if !ok {
		m.fail(fmt.Sprintf("no more steps: all %d applied (p goes back)", m.sess.NumSteps()))
		return
	}
	m.report(e)
}

func (m *Model) back() {
	last := m.sess.Last()
	if !m.sess.GoBack() {
		m.fail("already at the start: nothing to undo")
		return
	}
	m.say("back: undid " + m.title(last))
}

func (m *Model) run(stopOnFail bool) {
	if m.sess.NumSteps() == 0 {
		m.fail("this design has no steps file")
		return
	}
	if m.sess.NextStep() >= m.sess.NumSteps() {
		m.fail("no more steps to run (p goes back, g goes to a step)")
		return
	}
	evs := m.sess.RunToEnd(stopOnFail)
	last := evs[len(evs)-1]
	if last.Failed() {
		m.report(last)
		m.status += fmt.Sprintf("; stopped there after %s", plural(len(evs), "step"))
		return
	}
	failed := 0
	for _, e := range evs {
		if e.Failed() {
			failed++
		}
	}
	if failed > 0 {
		m.fail(fmt.Sprintf("ran %s to the end: %d failed (v lists them)", plural(len(evs), "step"), failed))
		return
	}
	m.say(fmt.Sprintf("ran %s to the end: every check passed", plural(len(evs), "step")))
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
	counts := fmt.Sprintf("%s, %s", plural(e.Rounds, "round"), plural(len(e.Changes), "change"))
	// the short title: the step's label is in the rounds view, and a long
	// one would push the counts off an 80-column line
	short := m.title(e)
	if e.Action.Kind == session.Step {
		short = fmt.Sprintf("step %d", e.Action.Step+1)
	}
	msg := short + ": " + counts
	if n := len(e.Warnings); n > 0 {
		msg += ", " + plural(n, "warning") + " (l)"
	}
	if e.Oscillated {
		msg += ", OSCILLATED"
	}
	if e.Failed() {
		nl := m.sess.Netlist()
		var bad []string
		for _, c := range e.Checks {
			if !c.Pass {
				bad = append(bad, fmt.Sprintf("%s want %s got %s", nl.NodeName(c.Node), c.Want, c.Got.State))
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

func (m *Model) say(s string) { m.status, m.statusBad = s, false }

func (m *Model) fail(s string) { m.status, m.statusBad = s, true }

// title words an action briefly.
func (m *Model) title(e *session.Event) string {
	a := e.Action
	switch a.Kind {
	case session.Start:
		return "start"
	case session.Set:
		return "set " + m.sess.Netlist().NodeName(a.Node) + "=" + a.Drive.String()
	case session.Step:
		t := fmt.Sprintf("step %d", a.Step+1)
		if a.Label != "" {
			t += " " + a.Label
		}
		return t
	}
	return a.Kind.String()
}

func (m *Model) openSave() {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: saving is the owner's")
		return
	}
	base := m.sess.Design().Name
	if base == "" {
		base = strings.TrimSuffix(filepath.Base(strings.TrimPrefix(m.sess.DesignPath(), "demo:")), ".sw")
	}
	tr, vcd := base+".trace", base+".vcd"
	if m.opt.TracePath != "" {
		tr = m.opt.TracePath
	}
	m.prompt = prompt.NewSave(prompt.DefaultStyles(m.th), tr, vcd)
}

func (m *Model) openJump() {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: only the session's owner can change it")
		return
	}
	if m.sess.NumSteps() == 0 {
		m.fail("this design has no steps file")
		return
	}
	m.prompt = prompt.NewJump(prompt.DefaultStyles(m.th), m.sess.NumSteps(), min(m.sess.NextStep()+1, m.sess.NumSteps()))
}

func (m *Model) answer(a *prompt.Answer) {
	if a.Canceled {
		m.say("canceled")
		return
	}
	switch a.Kind {
	case prompt.Jump:
		m.change(func() { m.jump(a.Step) })
	case prompt.SaveTrace:
		m.lock()
		saved, err := trace.Save(m.sess, a.Text)
		m.unlock()
		if err != nil {
			m.fail("could not save the trace: " + err.Error())
			return
		}
		msg := fmt.Sprintf("saved the trace (%s) to %s; railyard replay %s repeats it", plural(saved.Actions, "action"), a.Text, a.Text)
		if saved.Skipped > 0 {
			msg = fmt.Sprintf("saved the first %s to %s: %s, so the last %d were not kept", plural(saved.Actions, "action"), a.Text, saved.Why, saved.Skipped)
		}
		m.say(msg)
	case prompt.SaveVCD:
		m.lock()
		err := wave.Save(m.sess, a.Text, wave.Options{})
		n := m.sess.Len()
		m.unlock()
		if err != nil {
			m.fail("could not export the VCD: " + err.Error())
			return
		}
		m.say(fmt.Sprintf("exported a VCD of %s to %s", plural(n, "action"), a.Text))
	}
}
