// Package reach checks a design in every state it can reach (the README,
// "Checking every reachable state"; DEVELOPERS.md, "The reachable-state
// search"). Starting from the settled state with every input 0, or after
// a reset sequence the caller gives, it tries every input change that can
// follow (each input flipped, and on request every pair of inputs changed
// together) and searches the settled states breadth first, so that every
// finding comes with a shortest input sequence from the start.
//
// A state is the inputs' drives and every node's logic value, packed two
// bits a slot; two settles that agree on both are one state, and the
// search goes on from the first one reached. The package uses the engine
// alone: one switchsim.Sim, its snapshots to return to a state, and its
// warnings and node states to judge each settle.
package reach

import (
	"fmt"
	"math"
	"time"

	"railyard/switchsim"
)

// Kind is the kind of a finding.
type Kind string

// Finding kinds. The engine's warnings give most of them; FloatingOutput and
// DegradedOutput are read from the outputs' states in every state reached.
const (
	Conflict       Kind = "conflict"        // a node X from a fight of a 0 and a 1 (in physical mode also a divider in the undefined band)
	LevelLost      Kind = "level-lost"      // a level in the undefined band (physical mode)
	FloatingOutput Kind = "floating-output" // an output left floating (state Z)
	Race           Kind = "race"            // a node whose settled value depends on the order of the inputs' changes
	Glitch         Kind = "glitch"          // a node held by charge (before or after the step) that may pulse: a dynamic node can lose its charge
	WriteFail      Kind = "write-fail"      // a fight still there after the settle inside a feedback loop: a write that did not flip it
	Short          Kind = "short"           // a device on or unknown between two sources of different values
	Oscillation    Kind = "oscillation"     // a node still changing at the round limit
	Hazard         Kind = "hazard"          // a driven node that may pulse: harmless unless what it feeds samples it
	Contention     Kind = "contention"      // a fight one side wins
	DegradedOutput Kind = "degraded-output" // an output at L or H: weak, threshold-dropped or contested
)

// Failing reports whether a finding of this kind makes `check` fail: a
// conflict, a lost level, a floating output, a race, a glitch on a dynamic
// node, a failed write or a short. The others are reported for reading.
func (k Kind) Failing() bool {
	switch k {
	case Conflict, LevelLost, FloatingOutput, Race, Glitch, WriteFail, Short:
		return true
	}
	return false
}

// The engine's warning kinds that arrive with its race analysis, failed
// writes and shorts (untyped, so they compare with the engine's kind whether
// it is a string or a string type).
const (
	warnRace      = "race"
	warnGlitch    = "glitch"
	warnWriteFail = "write-fail"
	warnShort     = "short"
)

// Set is one input and the drive applied to it.
type Set struct {
	Input int // node number
	Drive switchsim.Drive
}

// Defaults and limits of the search.
const (
	// DefaultMaxStates is the state cap: about 28 bytes a state for a
	// 20-node cell (the packed key, its table slot, the parent and the
	// depth), so some tens of MB at the cap, plus the snapshots of states
	// not yet expanded (DefaultSnapshotBudget).
	DefaultMaxStates = 1_000_000
	// MaxInputs bounds the inputs of a design the search takes.
	MaxInputs = 20
	// DefaultBudget bounds the estimated work, in device-settles: states
	// times moves per state times devices. On the development machine a
	// settle costs at most some tens of ns a device, so the default is some
	// minutes of CPU in the worst case (the README's performance section).
	DefaultBudget = 2e10
	// DefaultSnapshotBudget bounds the bytes of snapshots held for states
	// found but not yet expanded; beyond it a state is rebuilt by replaying
	// its sequence from the start when its turn comes.
	DefaultSnapshotBudget = 256 << 20
)

// Options configure a search.
type Options struct {
	Mode  switchsim.Mode
	Pairs bool // also change every pair of inputs together
	// NoGlitches skips phase A on single-input steps (switchsim.RacesGlitches,
	// the default): faster, and blind to a pulse that one input's change can
	// cause (the static-1 hazard of a selector whose select changes alone).
	NoGlitches bool
	// Reset is applied, row after row and each row settled, after the
	// settle with every input 0; the search starts from the state it leaves.
	Reset [][]Set
	// MaxStates is the state cap (0: DefaultMaxStates).
	MaxStates int
	// Budget bounds Plan.Cost (0: DefaultBudget; +Inf: no bound).
	Budget float64
	// SnapshotBudget bounds the snapshots held (0: DefaultSnapshotBudget).
	SnapshotBudget int64
	// Progress, when set, is called at most once every ProgressEvery (the
	// clock is read every 64 transitions) and once at the end.
	Progress      func(Progress)
	ProgressEvery time.Duration

	verifyKeys bool // tests: compare every key built from a settle's changes with one packed afresh
}

func (o Options) maxStates() int {
	if o.MaxStates <= 0 {
		return DefaultMaxStates
	}
	return o.MaxStates
}

func (o Options) budget() float64 {
	if o.Budget <= 0 {
		return DefaultBudget
	}
	return o.Budget
}

// Progress is how far a search has got.
type Progress struct {
	States, Transitions, Frontier int
	Elapsed                       time.Duration
}

// Plan is the cost of a search estimated before it starts.
type Plan struct {
	Inputs, Devices int
	Moves           int     // input changes tried from each state
	States          float64 // estimated states: 2^inputs (one per input vector), at most the cap
	Cost            float64 // States x Moves x Devices, in device-settles
}

// Estimate returns the plan of a search. A cell that stores state can reach
// more states than it has input vectors; the cap bounds those.
func Estimate(nl *switchsim.Netlist, opt Options) Plan {
	k := len(nl.Inputs())
	p := Plan{Inputs: k, Devices: nl.NumDevices(), Moves: k}
	if opt.Pairs {
		p.Moves += k * (k - 1) / 2
	}
	p.States = math.Min(float64(opt.maxStates()), math.Exp2(float64(k)))
	p.Cost = p.States * float64(max(p.Moves, 1)) * float64(max(p.Devices, 1))
	return p
}

// TooManyInputsError refuses a design with more inputs than MaxInputs.
type TooManyInputsError struct{ Inputs, Max int }

func (e *TooManyInputsError) Error() string {
	return fmt.Sprintf("the design has %d inputs; the reachable-state search takes at most %d", e.Inputs, e.Max)
}

// OverBudgetError refuses a search whose estimated cost is over the budget.
type OverBudgetError struct {
	Plan   Plan
	Budget float64
}

func (e *OverBudgetError) Error() string {
	return fmt.Sprintf("the search would take about %.3g device-settles (%.0f states x %d moves x %d devices), over the budget of %.3g",
		e.Plan.Cost, e.Plan.States, e.Plan.Moves, e.Plan.Devices, e.Budget)
}

// Check returns the plan of a search, or why the search is refused: too
// many inputs or over the budget. Search calls it first; a caller that must
// refuse before printing anything calls it itself.
func Check(nl *switchsim.Netlist, opt Options) (Plan, error) {
	p := Estimate(nl, opt)
	if p.Inputs > MaxInputs {
		return p, &TooManyInputsError{p.Inputs, MaxInputs}
	}
	for _, row := range opt.Reset {
		for _, s := range row {
			if s.Input < 0 || s.Input >= nl.NumNodes() || nl.NodeKind(s.Input) != switchsim.Input {
				return p, fmt.Errorf("reset: node %d is not an input", s.Input)
			}
		}
	}
	if b := opt.budget(); p.Cost > b {
		return p, &OverBudgetError{p, b}
	}
	return p, nil
}

// Stop says why a search ended.
type Stop uint8

const (
	Done        Stop = iota // every reachable state was explored
	AtCap                   // the state cap was reached
	AtTimeLimit             // the context's deadline passed
	Canceled                // the context was canceled
)

func (s Stop) String() string {
	return [...]string{"done", "cap", "time-limit", "canceled"}[s]
}

// Finding is one problem, reported once however often it occurs.
type Finding struct {
	Kind    Kind
	Node    int // -1 where it names no node
	Device  int // -1 where it names no device
	Message string
	// States counts the states where it occurs: for a condition of a state
	// (a conflict, a lost level, a floating output...) the states that hold
	// it; for what a step does (a race, a glitch, an oscillation) the states
	// from which some step shows it. Transitions counts the settles that
	// showed it. The start state counts as a state, not a transition.
	States, Transitions int
	// Steps is the shortest input sequence that reaches it: Steps[0] sets
	// every input 0, then come the reset rows, then one row a move with the
	// inputs it changes.
	Steps [][]Set
	Moves int // the rows of Steps after the start and the reset
	// Got is the node's state at the end of Steps, as the search saw it.
	Got switchsim.NodeState
}

// Failing reports whether the finding makes `check` fail.
func (f Finding) Failing() bool { return f.Kind.Failing() }

// Report is what a search found.
type Report struct {
	Inputs      []int // node numbers, in declaration order
	Plan        Plan
	States      int // states found (the start included)
	Transitions int // settles tried from explored states
	Depth       int // the longest shortest sequence, in moves
	Stopped     Stop
	Replays     int   // states rebuilt by replay, beyond the snapshot budget
	TableBytes  int64 // memory kept for the states found: keys, index, parents, depths
	Elapsed     time.Duration
	Findings    []Finding // in the order first seen
	// Margin is the worst noise margin (switchsim.Margin.Noise) of a node
	// whose level is read, an output or an internal node that gates a
	// device, over every settle of the search, in volts: NaN in ideal mode
	// and where no such node has a known voltage. MarginNode is that node (-1:
	// none), MarginSteps the shortest input sequence to the settle that
	// showed it (as Finding.Steps) and MarginGot the output's state there.
	Margin      float64
	MarginNode  int
	MarginSteps [][]Set
	MarginGot   switchsim.NodeState
}

// AnyFailing reports whether any finding makes `check` fail.
func (r *Report) AnyFailing() bool {
	for _, f := range r.Findings {
		if f.Failing() {
			return true
		}
	}
	return false
}

// Pass reports whether the search explored every reachable state and found
// nothing failing.
func (r *Report) Pass() bool { return r.Stopped == Done && !r.AnyFailing() }
