package tui

// Rebuilt sessions: the other mode (the history re-simulated), a size
// tried on a transistor (the design edited, the history re-simulated), a
// finding's sequence as the steps (the same design from its start). The
// root swaps the session it explores for the new one, which records a
// trace of its own from its start.

import (
	"fmt"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/tui/prompt"
	"railyard/tui/stepper"
)

// rebuild makes a session with build, giving it a trace as the session
// explored had (the same options, its spool in the same folder); a trace
// begun for a rebuild that then failed is released.
func (m *Model) rebuild(build func(session.Attach) (*session.Session, error)) (*session.Session, error) {
	opt, dir := trace.Options{}, ""
	if w := trace.Of(m.sess); w != nil {
		opt, dir = w.Options(), w.SpoolDir()
	}
	var made *trace.Writer
	ns, err := build(func(ns *session.Session) error {
		w, err := trace.Start(ns, dir, opt)
		made = w
		return err
	})
	if err != nil && made != nil {
		made.Close()
	}
	return ns, err
}

// setSession makes ns the session explored, and releases the old one's
// trace (the new one records the history again from its start).
func (m *Model) setSession(ns *session.Session) {
	old := m.sess
	if w := trace.Of(old); w != nil {
		w.Close()
	}
	m.sess = ns
	if ns.Netlist() != old.Netlist() {
		m.devices.SetNetlist(ns.Netlist())
		m.why.SetNetlist(ns.Netlist())
	}
	if ns.Steps() != old.Steps() {
		m.vectors = stepper.New(m.stepsName(), stepRows(ns, m.names), stepper.DefaultStyles(m.th))
		m.applyFocus()
	}
	if (m.search != nil || m.found != nil) && m.foundOf != (searchKey{ns.Netlist(), ns.Options().Mode}) {
		m.dropSearch()
	}
	m.nodes.SetDiffers(nil, nil, "")
	m.sync()
	m.layout()
}

// stepsName is what the Vectors view calls the steps: the file's name, or
// the finding whose sequence they are.
func (m *Model) stepsName() string {
	if m.findingSteps != "" {
		return m.findingSteps
	}
	return stepsFile(m.sess)
}

// otherMode is the mode the mode key switches to.
func otherMode(m switchsim.Mode) switchsim.Mode {
	if m == switchsim.Ideal {
		return switchsim.Physical
	}
	return switchsim.Ideal
}

// switchMode re-simulates the history in force in the other mode and
// marks the nodes whose logic value the two modes give differently.
func (m *Model) switchMode() {
	from := m.sess.Options().Mode
	to := otherMode(from)
	ns, err := m.rebuild(func(a session.Attach) (*session.Session, error) { return session.Remode(m.sess, to, a) })
	if err != nil {
		m.fail(fmt.Sprintf("could not switch to %s mode: %v", to, err))
		return
	}
	old := m.sess
	m.setSession(ns)
	differ := m.markDiffers(old, "vs "+from.String())
	m.say(fmt.Sprintf("%s mode: %s; %s re-simulated", to, differWords(differ, from.String()), diag.Count(ns.Len()-1, "action")))
}

// markDiffers marks on the board the nodes whose logic value differs
// between old and the session now, until the next action, and returns
// their names.
func (m *Model) markDiffers(old *session.Session, against string) []string {
	nl := m.sess.Netlist()
	differs := make([]bool, nl.NumNodes())
	other := make([]switchsim.Value, nl.NumNodes())
	var names []string
	for n := range differs {
		if nl.NodeKind(n) != switchsim.Internal {
			continue
		}
		if v := old.Node(n).Value; v != m.sess.Node(n).Value {
			differs[n], other[n] = true, v
			names = append(names, m.names.Node[n])
		}
	}
	if len(names) == 0 {
		m.nodes.SetDiffers(nil, nil, "")
		return nil
	}
	m.nodes.SetDiffers(differs, other, fmt.Sprintf("%d %s", len(names), against))
	return names
}

// differWords says which nodes differ, naming a few.
func differWords(names []string, against string) string {
	if len(names) == 0 {
		return "no node's logic value differs from " + against
	}
	shown := names
	if len(shown) > 4 {
		shown = shown[:4]
	}
	more := ""
	if len(names) > len(shown) {
		more = fmt.Sprintf(" and %d more", len(names)-len(shown))
	}
	return fmt.Sprintf("%s %s from %s: %s%s (≠ in Nodes)", diag.Count(len(names), "node"), verb(len(names), "differs", "differ"),
		against, strings.Join(shown, " "), more)
}

func verb(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// openSize asks for the size to try on device d.
func (m *Model) openSize(d int) {
	dv := m.sess.Netlist().Device(d)
	m.prompt = prompt.NewSize(prompt.DefaultStyles(m.th), d, m.names.Device[d], dv.W, dv.L)
	m.prompt.SetSize(m.w, 1)
}

// resize tries device d at w x l: the design re-settles with it and the
// history in force is replayed; the board marks the nodes whose value the
// size changed.
func (m *Model) resize(d int, w, l float64) {
	name := m.names.Device[d]
	was := m.sess.Netlist().Device(d)
	ns, err := m.rebuild(func(a session.Attach) (*session.Session, error) { return session.Resize(m.sess, d, w, l, a) })
	if err != nil {
		m.fail("could not try that size on " + name + ": " + err.Error())
		return
	}
	old := m.sess
	m.setSession(ns)
	m.designSaved = false
	now := ns.Netlist().Device(d)
	change := sizeChange(was, now)
	differ := m.markDiffers(old, "vs "+sizeBefore(was, now))
	msg := name + " " + change
	if e := ns.Last(); e.Action.Kind == session.Step && countChecks(e) > 0 {
		if e.Failed() {
			msg += fmt.Sprintf(": step %d still fails", e.Action.Step+1)
		} else {
			msg += fmt.Sprintf(": step %d passes", e.Action.Step+1)
		}
		if e.Decided {
			msg += ", decided by race analysis (the rounds did not settle: r)"
		}
	}
	msg += "; " + differWords(differ, "before") + "; " + diag.Count(ns.Len()-1, "action") + " re-simulated"
	if ns.Edited() {
		msg += "; s saves the design as .sw"
	} else {
		msg += "; the design is the one loaded again"
	}
	m.say(msg)
}

// sizeBefore words the size before, of what changed: "W 1.44u".
func sizeBefore(was, now switchsim.Device) string {
	f := netfile.FormatNumber
	switch {
	case was.W != now.W && was.L != now.L:
		return "W/L " + f(was.W) + "/" + f(was.L)
	case was.L != now.L:
		return "L " + f(was.L)
	}
	return "W " + f(was.W)
}

// sizeChange words what changed between two sizes of a transistor, as the
// design format writes sizes: "W 1.44u -> 200n"; for the same size, the
// width alone ("W 1.44u").
func sizeChange(was, now switchsim.Device) string {
	f := netfile.FormatNumber
	switch {
	case was.W != now.W && was.L != now.L:
		return "W/L " + f(was.W) + "/" + f(was.L) + " -> " + f(now.W) + "/" + f(now.L)
	case was.L != now.L:
		return "L " + f(was.L) + " -> " + f(now.L)
	case was.W != now.W:
		return "W " + f(was.W) + " -> " + f(now.W)
	}
	return "W " + f(now.W)
}

// openFinding makes finding i's shortest sequence the steps, on the same
// design from its start, and shows them.
func (m *Model) openFinding(i int) {
	if m.found == nil || i < 0 || i >= len(m.auditOrder) {
		m.note("no finding to open: the search has not run on this design and mode (a runs it)")
		return
	}
	f := m.found.Findings[m.auditOrder[i]]
	nl := m.sess.Netlist()
	st := findingSteps(nl, f)
	ns, err := m.rebuild(func(a session.Attach) (*session.Session, error) { return session.Restart(m.sess, st, a) })
	if err != nil {
		m.fail("could not open the finding's sequence: " + err.Error())
		return
	}
	what := string(f.Kind)
	if f.Node >= 0 {
		what += " on " + m.names.Node[f.Node]
	} else if f.Device >= 0 {
		what += " on " + m.names.Device[f.Device]
	}
	m.findingSteps = "the sequence to " + what
	m.setSession(ns)
	m.view = ViewVectors
	msg := fmt.Sprintf("steps: the shortest sequence to %s, %s", what, diag.Count(len(st.Rows), "row"))
	if len(st.Check) > 0 {
		msg += fmt.Sprintf(", the last checks %s is %s as the search saw it", m.names.Node[f.Node], f.Got.State)
	}
	msg += "; n walks it"
	m.say(msg)
	m.layout()
}
