// Package session is the layer between the engine and its users (the batch
// commands, the explorer and the SSH server): a loaded design and its steps,
// the history of actions with snapshots to move backwards, the results of
// each settle, check outcomes, and the trace being recorded.
package session

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// Options choose the model and the check rule.
type Options struct {
	Mode      switchsim.Mode
	FullSwing bool // 0 and 1 checks also require the strong, full-level states
	// KeepStates bounds the designs whose full node states are kept with every
	// event (for timelines and waveforms): at most this many nodes; 0 means
	// DefaultKeepStates.
	KeepStates int
	// SnapshotBudget bounds the bytes of snapshots kept for going back; older
	// ones are dropped and rebuilt on demand by re-simulating from the nearest
	// kept one. 0 means DefaultSnapshotBudget.
	SnapshotBudget int64
}

// Defaults for the memory bounds of a session.
const (
	DefaultKeepStates     = 20000     // nodes: about 640 KB per event at the limit
	DefaultSnapshotBudget = 256 << 20 // bytes
)

// Kind is the kind of an action.
type Kind uint8

const (
	Start Kind = iota // the first settle after loading
	Set               // one input set by the user
	Step              // one row of the steps file applied
	Back              // return to the state before the last action
)

func (k Kind) String() string { return [...]string{"start", "set", "step", "back"}[k] }

// Action is one thing the user did.
type Action struct {
	Kind   Kind
	Node   int             // Set: the input
	Drive  switchsim.Drive // Set: its drive
	Step   int             // Step: the row index in the steps file (0-based)
	Label  string          // Step: the row's label
	Drives []InputDrive    // Step: the drives applied (kept so a trace replays without the steps file)
	Checks []steps.Want    // Step: the wanted values, parallel to the steps' check columns
	Nodes  []int           // Step: the check columns' nodes
}

// InputDrive is one input and the drive applied to it.
type InputDrive struct {
	Node  int
	Drive switchsim.Drive
}

// Change is one node change in one round.
type Change struct {
	Round int // 1-based
	Node  int
	switchsim.NodeState
	Delay float64 // seconds, NaN where unknown or in ideal mode
}

// CheckResult is one check of a step.
type CheckResult struct {
	Node int
	Want steps.Want
	Got  switchsim.NodeState
	Pass bool
}

// Warning is one warning of a settle, worded.
type Warning struct {
	switchsim.Warning
	Message string
}

// Event is the record of one action: what it did to the design.
type Event struct {
	Seq        int // position in the trace, from 0
	Action     Action
	Rounds     int
	Changes    []Change
	Checks     []CheckResult
	Warnings   []Warning
	Oscillated bool
	// States are every node's states after the action (nil for very large designs).
	States []switchsim.NodeState
	// Depth is the number of actions in the history after this one (for timelines).
	Depth int
}

// Failed reports whether any check of the event failed.
func (e *Event) Failed() bool {
	for _, c := range e.Checks {
		if !c.Pass {
			return true
		}
	}
	return false
}

// Session is one loaded design being simulated.
type Session struct {
	Design     *netfile.Design
	DesignPath string // as given: a path or demo:NAME
	Hash       string // sha256 of the design source, hex
	Steps      *steps.Steps
	StepsPath  string
	StepsHash  string
	Opts       Options
	Sim        *switchsim.Sim

	history []*Event              // the actions in force, oldest first (history[0] is Start)
	snaps   []*switchsim.Snapshot // snaps[i]: the state after history[i]
	cursors []int                 // cursors[i]: the next step row after history[i]
	trace   []*Event              // every action, including those undone
}

// Hash returns the hex sha256 of b.
func Hash(b []byte) string {
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// Open loads a design (a path or demo:NAME) and its steps, from the
// command line's file system: stepsPath if given, else the design's
// default steps if there are any.
func Open(designPath, stepsPath string, opt Options) (*Session, error) {
	return OpenFrom(load.Host(load.Options{}), designPath, stepsPath, opt)
}

// OpenFrom is Open through a loader: a served folder, or the command
// line's file system with the reader options of its flags. The paths the
// session records are the loader's names for them (load.Loader.Path).
func OpenFrom(l *load.Loader, designPath, stepsPath string, opt Options) (*Session, error) {
	ld, err := l.Open(designPath, stepsPath)
	if err != nil {
		return nil, err
	}
	s := New(ld.Design, l.Path(designPath), ld.Steps, opt)
	if ld.StepsName != "" {
		s.StepsPath = l.Path(ld.StepsName)
		s.StepsHash = Hash(ld.StepsSource)
	}
	return s, nil
}

// New starts a session on a loaded design and settles it once.
func New(d *netfile.Design, designPath string, st *steps.Steps, opt Options) *Session {
	if opt.KeepStates == 0 {
		opt.KeepStates = DefaultKeepStates
	}
	if opt.SnapshotBudget == 0 {
		opt.SnapshotBudget = DefaultSnapshotBudget
	}
	s := &Session{Design: d, DesignPath: designPath, Hash: Hash(d.Source), Steps: st, Opts: opt,
		Sim: switchsim.NewSim(d.Netlist, switchsim.Options{Mode: opt.Mode})}
	s.record(Action{Kind: Start}, 0)
	return s
}

// Netlist returns the design's netlist.
func (s *Session) Netlist() *switchsim.Netlist { return s.Design.Netlist }

// History returns the actions in force, oldest first.
func (s *Session) History() []*Event { return s.history }

// Trace returns every action taken, including undone ones, in order.
func (s *Session) Trace() []*Event { return s.trace }

// Last returns the latest event in force.
func (s *Session) Last() *Event { return s.history[len(s.history)-1] }

// NextStep is the index of the step row that Next applies (len(Rows) at the end).
func (s *Session) NextStep() int { return s.cursors[len(s.cursors)-1] }

// NumSteps is the number of rows in the steps file (0 without one).
func (s *Session) NumSteps() int {
	if s.Steps == nil {
		return 0
	}
	return len(s.Steps.Rows)
}

// ErrNotInput is returned when a drive is applied to a node that is not an input.
var ErrNotInput = errors.New("not an input")

// SetInput drives one input and settles.
func (s *Session) SetInput(node int, d switchsim.Drive) (*Event, error) {
	if node < 0 || node >= s.Netlist().NumNodes() || s.Netlist().NodeKind(node) != switchsim.Input {
		return nil, fmt.Errorf("%w: node %d", ErrNotInput, node)
	}
	if err := s.Sim.SetInput(node, d); err != nil {
		return nil, err
	}
	return s.record(Action{Kind: Set, Node: node, Drive: d}, s.NextStep()), nil
}

// SetByName drives one input, named, and settles.
func (s *Session) SetByName(name string, d switchsim.Drive) (*Event, error) {
	n, ok := s.Netlist().Lookup(name)
	if !ok || s.Netlist().NodeKind(n) != switchsim.Input {
		return nil, fmt.Errorf("%q is not an input of %s", name, s.Design.Name)
	}
	return s.SetInput(n, d)
}

// Toggle flips an input: 0 becomes 1, anything else becomes 0.
func (s *Session) Toggle(node int) (*Event, error) {
	d := switchsim.Drive0
	if s.Sim.InputDrive(node) == switchsim.Drive0 {
		d = switchsim.Drive1
	}
	return s.SetInput(node, d)
}

// ApplyStep applies row i of the steps file, settles and checks.
func (s *Session) ApplyStep(i int) (*Event, error) {
	if s.Steps == nil || i < 0 || i >= len(s.Steps.Rows) {
		return nil, fmt.Errorf("no step %d", i+1)
	}
	row := s.Steps.Rows[i]
	a := Action{Kind: Step, Step: i, Label: row.Label, Checks: row.Wants, Nodes: s.Steps.Check}
	for c, n := range s.Steps.Apply {
		a.Drives = append(a.Drives, InputDrive{n, row.Drives[c]})
	}
	return s.apply(a, i+1), nil
}

// apply runs a Step action (from the steps file or a trace).
func (s *Session) apply(a Action, cursor int) *Event {
	for _, in := range a.Drives {
		s.Sim.SetInput(in.Node, in.Drive)
	}
	return s.record(a, cursor)
}

// Next applies the next step row; ok is false at the end of the steps.
func (s *Session) Next() (*Event, bool) {
	i := s.NextStep()
	if i >= s.NumSteps() {
		return nil, false
	}
	e, _ := s.ApplyStep(i)
	return e, true
}

// RunToEnd applies the remaining steps; with stopOnFail it stops after the
// first step whose check fails. It returns the events applied.
func (s *Session) RunToEnd(stopOnFail bool) []*Event {
	var out []*Event
	for {
		e, ok := s.Next()
		if !ok {
			return out
		}
		out = append(out, e)
		if stopOnFail && e.Failed() {
			return out
		}
	}
}

// GoBack returns to the state before the last action in force; it is
// recorded in the trace. It reports false at the start.
func (s *Session) GoBack() bool {
	if len(s.history) <= 1 {
		return false
	}
	s.history = s.history[:len(s.history)-1]
	s.snaps = s.snaps[:len(s.snaps)-1]
	s.cursors = s.cursors[:len(s.cursors)-1]
	s.restoreLast()
	prev := s.history[len(s.history)-1]
	e := &Event{Seq: len(s.trace), Action: Action{Kind: Back}, States: prev.States, Depth: len(s.history)}
	s.trace = append(s.trace, e)
	return true
}

// JumpTo brings the session to the state just after step row i (0-based),
// going back or forward through the steps as needed; i = -1 is before the
// first step.
func (s *Session) JumpTo(i int) {
	for s.NextStep() > i+1 && s.GoBack() {
	}
	for s.NextStep() <= i {
		if _, ok := s.Next(); !ok {
			return
		}
	}
}

// record settles after the action's inputs were applied and keeps the event.
func (s *Session) record(a Action, cursor int) *Event {
	r := s.Sim.Settle()
	e := &Event{Seq: len(s.trace), Action: a, Rounds: r.Rounds, Oscillated: r.Oscillated}
	for round := 0; round < len(r.RoundEnd); round++ {
		lo := 0
		if round > 0 {
			lo = int(r.RoundEnd[round-1])
		}
		for k := lo; k < int(r.RoundEnd[round]); k++ {
			e.Changes = append(e.Changes, Change{Round: round + 1, Node: int(r.Changed[k]),
				NodeState: r.After[k], Delay: r.Delay[k]})
		}
	}
	for _, w := range r.Warnings {
		e.Warnings = append(e.Warnings, Warning{w, s.Sim.Message(w)})
	}
	for c, n := range a.Nodes {
		if c >= len(a.Checks) {
			break
		}
		got := s.Sim.Node(n)
		e.Checks = append(e.Checks, CheckResult{Node: n, Want: a.Checks[c], Got: got, Pass: a.Checks[c].Check(got, s.Opts.FullSwing)})
	}
	if nn := s.Netlist().NumNodes(); nn <= s.Opts.KeepStates {
		e.States = make([]switchsim.NodeState, nn)
		for n := range e.States {
			e.States[n] = s.Sim.Node(n)
		}
	}
	s.history = append(s.history, e)
	s.snaps = append(s.snaps, s.Sim.Snapshot())
	s.trimSnapshots()
	s.cursors = append(s.cursors, cursor)
	e.Depth = len(s.history)
	s.trace = append(s.trace, e)
	return e
}

// FormatVolts prints a voltage, or "-" where unknown.
func FormatVolts(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return fmt.Sprintf("%.3f", v)
}

// snapshotBytes estimates one snapshot's size: per node the value, strength,
// state, volts, drive and flags plus physical mode's record; per device its
// state and physical record.
func (s *Session) snapshotBytes() int64 {
	nl := s.Netlist()
	return int64(nl.NumNodes())*64 + int64(nl.NumDevices())*16
}

// trimSnapshots drops the snapshots of older history entries beyond the
// budget. The first (after loading) is always kept, so any state can be
// rebuilt from it.
func (s *Session) trimSnapshots() {
	keep := s.Opts.SnapshotBudget / max(1, s.snapshotBytes())
	keep = max(keep, 2)
	held := int64(0)
	for i := len(s.snaps) - 1; i >= 1; i-- {
		if s.snaps[i] == nil {
			continue
		}
		held++
		if held > keep-1 {
			s.snaps[i] = nil
		}
	}
}

// restoreLast brings the simulator to the state after the last event in
// force: from its snapshot, or by re-simulating the actions after the
// nearest kept snapshot (the engine is deterministic).
func (s *Session) restoreLast() {
	last := len(s.snaps) - 1
	j := last
	for s.snaps[j] == nil {
		j--
	}
	s.Sim.Restore(s.snaps[j])
	for i := j + 1; i <= last; i++ {
		a := s.history[i].Action
		switch a.Kind {
		case Set:
			s.Sim.SetInput(a.Node, a.Drive)
		case Step:
			for _, in := range a.Drives {
				s.Sim.SetInput(in.Node, in.Drive)
			}
		}
		s.Sim.Settle()
	}
	if j != last {
		s.snaps[last] = s.Sim.Snapshot()
		s.trimSnapshots()
	}
}
