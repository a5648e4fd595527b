package tui

// Reading the session into the panels, so that View never touches it.
// This is also where every string that comes from a file (step labels,
// warning messages, file names) is made printable, once: names were in
// New (panel.Names).

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/session"
	"railyard/tui/logpanel"
	"railyard/tui/panel"
	"railyard/tui/rounds"
	"railyard/tui/stepper"
	"railyard/tui/timeline"
	"railyard/tui/why"
)

// sync copies what the panels draw from the session, so that View never
// touches the session.
func (m *Model) sync() {
	s := m.sess
	nl := s.Netlist()
	hist := s.History()
	last := hist[len(hist)-1]
	nn := nl.NumNodes()
	states := m.states()
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
				m.lastFail = m.names.Node[c.Node]
			}
		}
	}
	ins := nl.Inputs()
	drives := make([]switchsim.Drive, len(ins))
	for i, n := range ins {
		drives[i] = s.InputDrive(n)
	}
	m.inputs.SetStates(drives, states, changed)
	m.inputs.SetWatched(m.watchSet)
	m.nodes.SetStates(states, changed, failing)
	m.nodes.SetWatched(m.watchSet)
	m.nodes.SetMargins(m.margins())

	cond := make([]switchsim.Conduction, nl.NumDevices())
	for d := range cond {
		cond[d] = s.Conduction(d)
	}
	m.devices.SetStates(cond, states, m.vdd(states))
	tried := map[int]switchsim.Device{}
	for _, e := range s.Edits() {
		tried[e.Device] = s.Original().Netlist.Device(e.Device)
	}
	m.devices.SetTried(tried)
	m.devices.SetOhms(m.ohms())
	m.devices.SetBias(m.biases())

	// The rounds view reads the state each changed node had before the action.
	var before []switchsim.NodeState
	if len(hist) > 1 {
		before = make([]switchsim.NodeState, nn)
		for _, c := range last.Changes {
			before[c.Node].State = c.Was
		}
	}
	st := rounds.Settle{Title: m.title(last), Rounds: last.Rounds, Before: before, Oscillated: last.Oscillated,
		Unsettled: last.Unsettled, Decided: last.Decided}
	if len(hist) == 1 {
		st.Title = "start: the first settle, every node from X"
		st.Before = nil
	}
	for _, c := range last.Changes {
		st.Changes = append(st.Changes, rounds.Change{Round: c.Round, Node: c.Node, State: c.State, Volts: c.Volts, Delay: c.Delay})
	}
	st.Slowest, st.Arrival = rounds.SlowestChain(nl, cond, st.Changes)
	m.rounds.Set(st)

	outcomes := make([]stepper.Outcome, s.NumSteps())
	var cols []timeline.Column
	var entries []logpanel.Entry
	m.numSteps, m.nextStep, m.failed = s.NumSteps(), s.NextStep(), 0
	track := s.Track(m.watched)
	for i, e := range hist {
		if e.Action.Kind == session.Step && e.Failed() {
			m.failed++
		}
		col := timeline.Column{Mark: m.th.G.Set, States: track[i], Failed: e.Failed()}
		switch e.Action.Kind {
		case session.Start:
			col.Mark = "0"
		case session.Step:
			col.Mark = fmt.Sprint((e.Action.Step + 1) % 10)
			if i := e.Action.Step; i >= 0 && i < len(outcomes) {
				o := stepper.Outcome{Taken: true}
				for _, c := range e.Checks {
					if session.IsCheck(c) {
						o.Checks = append(o.Checks, stepper.Check{Node: m.names.Node[c.Node], Want: c.Want.String(), Got: c.Got, Pass: c.Pass})
					}
				}
				outcomes[i] = o
			}
		}
		cols = append(cols, col)
		en := logpanel.Entry{Title: m.title(e)}
		if e.Dropped() && e.NumWarnings() > 0 {
			en.Title += fmt.Sprintf(" (%d warnings, details dropped for memory)", e.NumWarnings())
		}
		for _, w := range e.Warnings {
			en.Warnings = append(en.Warnings, logpanel.Warning{Kind: string(w.Kind), Message: diag.Printable(w.Message)})
		}
		entries = append(entries, en)
	}
	m.vectors.SetProgress(outcomes, s.NextStep())
	m.timeline.SetColumns(cols)
	m.timeline.SetWatched(m.watched)
	m.log.SetEntries(entries)
	m.explain()
}

// margins are every node's noise margins (physical mode; nil in ideal).
func (m *Model) margins() []float64 {
	if m.sess.Options().Mode != switchsim.Physical {
		return nil
	}
	out := make([]float64, m.sess.Netlist().NumNodes())
	for n := range out {
		out[n] = session.NodeMargin(m.sess.Margin(n))
	}
	return out
}

// ohms are the devices' on-resistance estimates (physical mode's, for
// the delay; nil in ideal mode).
func (m *Model) ohms() []float64 {
	if m.sess.Options().Mode != switchsim.Physical {
		return nil
	}
	nl := m.sess.Netlist()
	out := make([]float64, nl.NumDevices())
	for d := range out {
		out[d] = nl.OnResistance(d)
	}
	return out
}

// biases are, by device, what physical mode knows of it: partly on, and
// the static current through it (nil in ideal mode).
func (m *Model) biases() []switchsim.Bias {
	if m.sess.Options().Mode != switchsim.Physical {
		return nil
	}
	out := make([]switchsim.Bias, m.sess.Netlist().NumDevices())
	for d := range out {
		out[d] = m.sess.DeviceBias(d)
	}
	return out
}

// states are every node's states after the last action.
func (m *Model) states() []switchsim.NodeState {
	st := make([]switchsim.NodeState, m.sess.Netlist().NumNodes())
	for n := range st {
		st[n] = m.sess.Node(n)
	}
	return st
}

// vdd is the supply's volts (NaN in ideal mode): what a full 1 is.
func (m *Model) vdd(states []switchsim.NodeState) float64 {
	if p := m.sess.Netlist().Power(); p >= 0 && p < len(states) {
		return states[p].Volts
	}
	return math.NaN()
}

// explain re-reads the inspected node's explanation; its group (which the
// engine gives with it) marks the devices.
func (m *Model) explain() {
	if m.inspect < 0 {
		return
	}
	nl := m.sess.Netlist()
	e := m.sess.Explain(m.inspect)
	states := m.states()
	var phys why.Physics
	if m.sess.Options().Mode == switchsim.Physical {
		mg := m.sess.Margin(m.inspect)
		phys = why.Physics{Margin: &mg, Vdd: m.sess.Netlist().Tech.Vdd}
		if f, ok := m.sess.Fight(m.inspect); ok {
			phys.Fight = &f
		}
	}
	m.why.SetPhysics(phys)
	m.why.Set(e, states, m.vdd(states), m.nodeWarnings(m.inspect))
	group := make([]bool, nl.NumDevices())
	for _, d := range e.Devices {
		group[d] = true
	}
	label := m.names.Node[m.inspect]
	if len(e.Devices) == 0 {
		label += " (none: nothing conducts to it)"
		if e.Source {
			label = m.names.Node[m.inspect] + " (none: it only gates)"
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
				ws = append(ws, m.th.Warn.Render(m.th.G.Warn+" "+string(w.Kind))+" "+diag.Printable(w.Message))
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

// stepRows words the steps file's rows for the vectors view, printable.
func stepRows(s *session.Session, names *panel.Names) []stepper.Step {
	if s.Steps() == nil {
		return nil
	}
	out := make([]stepper.Step, len(s.Steps().Rows))
	for i, r := range s.Steps().Rows {
		var ap, wa []string
		for c, n := range s.Steps().Apply {
			if c < len(r.Drives) {
				ap = append(ap, names.Node[n]+"="+r.Drives[c].String())
			}
		}
		for c, n := range s.Steps().Check {
			if c < len(r.Wants) && r.Wants[c].String() != "-" {
				wa = append(wa, names.Node[n]+"="+r.Wants[c].String())
			}
		}
		out[i] = stepper.Step{Label: diag.Printable(r.Label), Apply: strings.Join(ap, " "), Want: strings.Join(wa, " ")}
	}
	return out
}

func stepsFile(s *session.Session) string {
	if s.StepsPath() == "" {
		return ""
	}
	return filepath.Base(s.StepsPath())
}
