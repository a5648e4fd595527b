package tui

// The corner key: the same history re-simulated at the design's next
// technology corner (nominal, then each corner statement in order, then
// nominal again). The root swaps the session it explores for the new one
// (rebuild, setSession, as for a mode switch), which records a trace of its
// own from its start (with a corner line, so that it replays at that
// corner), and marks the nodes whose logic value differs.

import (
	"fmt"
	"slices"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/session"
)

// nextCorner moves the session to the next corner of the cycle.
func (m *Model) nextCorner() {
	names := session.CornerNames(m.sess.Design())
	switch {
	case len(names) == 0:
		m.note("this design names no technology corners (corner NAME KEY=VALUE ... statements in its .sw)")
		return
	case m.sess.Options().Mode != switchsim.Physical:
		m.note("corners are technology values: they need physical mode")
		return
	}
	next := names[0]
	if i := slices.Index(names, m.sess.Corner()); i >= 0 {
		next = ""
		if i+1 < len(names) {
			next = names[i+1]
		}
	}
	ns, err := m.rebuild(func(a session.Attach) (*session.Session, error) { return session.Recorner(m.sess, next, a) })
	if err != nil {
		m.fail(fmt.Sprintf("could not switch to corner %s: %v", diag.Printable(session.CornerLabel(next)), diag.Printable(err.Error())))
		return
	}
	old := m.sess
	wasFailed := m.failedChecks()
	m.setSession(ns)
	differ := m.markDiffers(old, "vs "+diag.Printable(old.CornerName()))
	tech := ns.Netlist().Tech
	m.say(fmt.Sprintf("corner %s: %s; %s; vdd %.2f V, vtn %.3f V, vtp %.3f V; %s re-simulated",
		diag.Printable(ns.CornerName()), failedWords(m.failedChecks(), wasFailed),
		differWords(differ, diag.Printable(old.CornerName())), tech.Vdd, tech.Vtn, tech.Vtp, diag.Count(ns.Len()-1, "action")))
}

// failedChecks counts the failed checks of the history in force.
func (m *Model) failedChecks() int {
	k := 0
	for _, e := range m.sess.History() {
		for _, c := range e.Checks {
			if session.IsCheck(c) && !c.Pass {
				k++
			}
		}
	}
	return k
}

func failedWords(now, before int) string {
	switch {
	case now == before:
		return fmt.Sprintf("%s failed, as before", diag.Count(now, "check"))
	case now > before:
		return fmt.Sprintf("%s failed, %d more than before", diag.Count(now, "check"), now-before)
	}
	return fmt.Sprintf("%s failed, %d fewer than before", diag.Count(now, "check"), before-now)
}
