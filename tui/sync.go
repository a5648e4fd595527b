package tui

// Reading the session into the panels, so that View never touches it.

import (
	"fmt"
	"path/filepath"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/logpanel"
	"railyard/tui/rounds"
	"railyard/tui/stepper"
	"railyard/tui/timeline"
)

// sync copies what the panels draw from the session (under the lock), so
// that View never touches the session.
func (m *Model) sync() {
	s := m.sess
	nl := s.Netlist()
	hist := s.History()
	last := hist[len(hist)-1]
	nn := nl.NumNodes()
	states := last.States
	if states == nil {
		states = make([]switchsim.NodeState, nn)
		for n := range states {
			states[n] = s.Sim.Node(n)
		}
	}
	changed := make([]bool, nn)
	for _, c := range last.Changes {
		changed[c.Node] = true
	}
	failing := make([]bool, nn)
	m.lastFail = ""
	for _, c := range last.Checks {
		if !c.Pass {
			failing[c.Node] = true
			if m.lastFail == "" {
				m.lastFail = nl.NodeName(c.Node)
			}
		}
	}
	ins := nl.Inputs()
	drives := make([]switchsim.Drive, len(ins))
	for i, n := range ins {
		drives[i] = s.Sim.InputDrive(n)
	}
	m.inputs.SetStates(drives, states, changed)
	m.inputs.SetWatched(m.watchSet)
	m.nodes.SetStates(states, changed, failing)
	m.nodes.SetWatched(m.watchSet)

	cond := make([]switchsim.Conduction, nl.NumDevices())
	for d := range cond {
		cond[d] = s.Sim.Conduction(d)
	}
	vals := make([]switchsim.Value, nn)
	for n := range vals {
		vals[n] = states[n].Value
	}
	m.devices.SetStates(cond, vals)

	var before []switchsim.NodeState
	if len(hist) > 1 {
		before = hist[len(hist)-2].States
	}
	st := rounds.Settle{Title: m.title(last), Rounds: last.Rounds, Before: before, Oscillated: last.Oscillated}
	if len(hist) == 1 {
		st.Title = "start: the first settle, every node from X"
		st.Before = nil
	}
	for _, c := range last.Changes {
		st.Changes = append(st.Changes, rounds.Change{Round: c.Round, Node: c.Node, State: c.State})
	}
	m.rounds.Set(st)

	outcomes := make([]stepper.Outcome, s.NumSteps())
	var cols []timeline.Column
	var entries []logpanel.Entry
	m.numSteps, m.nextStep, m.failed = s.NumSteps(), s.NextStep(), 0
	for _, e := range hist {
		if e.Action.Kind == session.Step && e.Failed() {
			m.failed++
		}
		col := timeline.Column{Mark: "+", States: e.States, Failed: e.Failed()}
		switch e.Action.Kind {
		case session.Start:
			col.Mark = "0"
		case session.Step:
			col.Mark = fmt.Sprint((e.Action.Step + 1) % 10)
			if i := e.Action.Step; i >= 0 && i < len(outcomes) {
				o := stepper.Outcome{Taken: true}
				for _, c := range e.Checks {
					if session.IsCheck(c) {
						o.Checks = append(o.Checks, stepper.Check{Node: nl.NodeName(c.Node), Want: c.Want.String(), Got: c.Got, Pass: c.Pass})
					}
				}
				outcomes[i] = o
			}
		}
		cols = append(cols, col)
		en := logpanel.Entry{Title: m.title(e)}
		for _, w := range e.Warnings {
			en.Warnings = append(en.Warnings, logpanel.Warning{Kind: string(w.Kind), Message: w.Message})
		}
		entries = append(entries, en)
	}
	m.vectors.SetProgress(outcomes, s.NextStep())
	m.timeline.SetColumns(cols)
	m.timeline.SetWatched(m.watched)
	m.log.SetEntries(entries)
	m.explain()
}

// explain re-reads the inspected node's explanation and group (lock held).
func (m *Model) explain() {
	if m.inspect < 0 {
		return
	}
	s := m.sess
	nl := s.Netlist()
	e := s.Sim.Explain(m.inspect)
	m.why.Set(nl, e, m.nodeWarnings(m.inspect))
	group := make([]bool, nl.NumDevices())
	devs := groupDevices(s, m.inspect)
	for _, d := range devs {
		group[d] = true
	}
	label := nl.NodeName(m.inspect)
	if len(devs) == 0 {
		label += " (none: nothing conducts to it)"
		if e.Source {
			label = nl.NodeName(m.inspect) + " (none: it only gates)"
		}
	}
	m.devices.SetGroup(label, group)
}

// nodeWarnings words the warnings that still stand for node n: those of the
// latest action that solved it (changed it or warned about it), since its
// state has not moved after that.
func (m *Model) nodeWarnings(n int) []string {
	hist := m.sess.History()
	for i := len(hist) - 1; i >= 0; i-- {
		e := hist[i]
		var ws []string
		for _, w := range e.Warnings {
			if w.Node == n {
				ws = append(ws, m.th.Warn.Render(m.th.G.Warn+" "+string(w.Kind))+" "+w.Message)
			}
		}
		touched := len(ws) > 0
		for _, c := range e.Changes {
			if c.Node == n {
				touched = true
				break
			}
		}
		if touched {
			if len(ws) == 0 {
				return nil
			}
			head := m.th.Bold.Render("Warnings since " + m.title(e) + ":")
			return append([]string{"", head}, ws...)
		}
	}
	return nil
}

// groupDevices lists the devices that are not off and join the node's group
// (the node and the non-source nodes reached through them), for marking.
func groupDevices(s *session.Session, n int) []int {
	nl := s.Netlist()
	isSource := func(x int) bool {
		switch nl.NodeKind(x) {
		case switchsim.Power, switchsim.Ground:
			return true
		case switchsim.Input:
			return s.Sim.InputDrive(x) != switchsim.DriveZ
		}
		return false
	}
	seen := map[int]bool{n: true}
	devSeen := map[int]bool{}
	var devs []int
	queue := []int{n}
	if isSource(n) {
		// an input or rail: its group is what it drives directly
		for _, d := range nl.ChannelDevices(n) {
			if s.Sim.Conduction(d) != switchsim.Off && !devSeen[d] {
				devSeen[d] = true
				devs = append(devs, d)
			}
		}
		return devs
	}
	for i := 0; i < len(queue); i++ {
		x := queue[i]
		for _, d := range nl.ChannelDevices(x) {
			if s.Sim.Conduction(d) == switchsim.Off {
				continue
			}
			if !devSeen[d] {
				devSeen[d] = true
				devs = append(devs, d)
			}
			o := nl.Other(d, x)
			if !seen[o] && !isSource(o) {
				seen[o] = true
				queue = append(queue, o)
			}
		}
	}
	return devs
}

// stepRows words the steps file's rows for the vectors view.
func stepRows(s *session.Session) []stepper.Step {
	if s.Steps == nil {
		return nil
	}
	nl := s.Netlist()
	out := make([]stepper.Step, len(s.Steps.Rows))
	for i, r := range s.Steps.Rows {
		var ap, wa []string
		for c, n := range s.Steps.Apply {
			if c < len(r.Drives) {
				ap = append(ap, nl.NodeName(n)+"="+r.Drives[c].String())
			}
		}
		for c, n := range s.Steps.Check {
			if c < len(r.Wants) && r.Wants[c].String() != "-" {
				wa = append(wa, nl.NodeName(n)+"="+r.Wants[c].String())
			}
		}
		out[i] = stepper.Step{Label: r.Label, Apply: strings.Join(ap, " "), Want: strings.Join(wa, " ")}
	}
	return out
}

func stepsFile(s *session.Session) string {
	if s.StepsPath == "" {
		return ""
	}
	return filepath.Base(s.StepsPath)
}
