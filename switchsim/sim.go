package switchsim

import "math"

// Mode chooses the model: Physical (MODEL.md §2-§4, the default) or Ideal (§2-§3 alone).
type Mode uint8

const (
	Physical Mode = iota
	Ideal
)

func (m Mode) String() string { return [...]string{"physical", "ideal"}[m] }

// Options configure a Sim.
type Options struct {
	Mode Mode
	// RoundLimit bounds the rounds of one settle before the design is
	// reported as oscillating; 0 takes DefaultRoundLimit(netlist).
	RoundLimit int
}

// DefaultRoundLimit is 2 x nodes + 64. Every round of a settle that has not
// ended changes at least one node, and in logic without feedback a node
// changes at most once per level of depth, so acyclic logic settles in at
// most (nodes + 1) rounds and is never mistaken for an oscillation.
func DefaultRoundLimit(nl *Netlist) int { return 2*nl.NumNodes() + 64 }

// NodeState is one node's resolved state.
type NodeState struct {
	Value    Value
	Strength Strength
	State    State
	Volts    float64 // NaN in ideal mode or where unknown
	Floating bool    // no driving path: the value is stored charge
}

// Warning is one finding of a settle. Kind is one of the Warn* constants;
// Device and Other are -1 where they do not apply. Sim.Message words it.
type Warning struct {
	Kind   string
	Node   int
	Device int
	Other  int // a second device or node, by kind
	Volts  float64
}

// Warning kinds (FORMAT.md).
const (
	WarnDegraded      = "degraded"
	WarnLevelLost     = "level-lost"
	WarnContention    = "contention"
	WarnConflict      = "conflict"
	WarnChargeSharing = "charge-sharing"
	WarnHeldByCharge  = "held-by-charge"
	WarnPartialOn     = "partial-on"
	WarnFloatingGate  = "floating-gate"
	WarnOscillation   = "oscillation"
)

// Result is what one settle did. Its slices belong to the Sim and are
// overwritten by the next Settle; copy what must be kept.
type Result struct {
	Rounds   int
	Changed  []int32     // node numbers, round after round
	RoundEnd []int32     // round r (0-based) changed Changed[RoundEnd[r-1]:RoundEnd[r]]
	Delay    []float64   // parallel to Changed: Elmore delay estimate in seconds, NaN in ideal mode
	After    []NodeState // parallel to Changed: the node's state as that round left it
	Warnings []Warning
	// Oscillated is set when the round limit was reached; the nodes still
	// changing were set to X and settling went on.
	Oscillated bool
}

// Round returns the nodes changed in round r (0-based).
func (r *Result) Round(i int) []int32 {
	lo := int32(0)
	if i > 0 {
		lo = r.RoundEnd[i-1]
	}
	return r.Changed[lo:r.RoundEnd[i]]
}

// Sim simulates one compiled netlist. It is not safe for concurrent use;
// run one Sim per goroutine (they may share the Netlist).
type Sim struct {
	nl    *Netlist
	mode  Mode
	limit int

	// node state
	val     []Value
	str     []Strength
	state   []State
	volts   []float64
	drive   []Drive // inputs only
	source  []bool  // rails and driven inputs
	fight   []bool  // X from an equal-strength fight, for the conflict warning
	contest []bool  // driven, but the group holds a source of the other value
	shared  []bool  // floating, and charge of another value joined it in the last solve
	cond    []Conduction

	// pending work between Settle calls
	initial   bool
	dirtyIn   []int32
	dirtyMark []bool
	wasSrc    []bool

	// scratch, reused by every settle
	epoch      uint32
	gmark      []uint32 // node -> epoch of the group that took it this round
	smark      []uint32 // node -> group id that listed it as a source
	dmark      []uint32 // device -> group id that listed it
	seedMark   []uint32
	touchMark  []uint32 // node -> settle stamp: solved during this settle
	settleID   uint32
	gid        uint32
	seeds      []int32
	gates      []int32
	lastChange []int32
	touched    []int32
	g          group
	res        Result
	warnMark   []uint32

	best    []Strength
	inj     []Value
	done    []uint32
	pot     [2][]Strength
	pdone   [2][]uint32
	buckets [Supply + 1][]int32
	comp    []int32

	phys physState
}

// group is the scratch of one group being solved.
type group struct {
	nodes      []int32 // non-source nodes
	srcs       []int32 // boundary sources
	devs       []int32 // devices not off
	hasUnknown bool
	nval       []Value    // parallel to nodes
	nstr       []Strength // parallel to nodes
	nstate     []State
	nvolts     []float64
	contested  []bool
	srcHas     [3]bool // the boundary has a 0, 1, X source
}

// NewSim makes a simulator with every node at stored X, inputs at X.
// The first Settle resolves the whole design.
func NewSim(nl *Netlist, opt Options) *Sim {
	nn, nd := nl.NumNodes(), nl.NumDevices()
	s := &Sim{nl: nl, mode: opt.Mode, limit: opt.RoundLimit, initial: true}
	if s.limit <= 0 {
		s.limit = DefaultRoundLimit(nl)
	}
	s.val, s.str, s.state = make([]Value, nn), make([]Strength, nn), make([]State, nn)
	s.volts, s.drive, s.source, s.fight = make([]float64, nn), make([]Drive, nn), make([]bool, nn), make([]bool, nn)
	s.cond = make([]Conduction, nd)
	s.contest, s.shared = make([]bool, nn), make([]bool, nn)
	s.dirtyMark = make([]bool, nn)
	s.gmark, s.smark, s.seedMark, s.touchMark = make([]uint32, nn), make([]uint32, nn), make([]uint32, nn), make([]uint32, nn)
	s.warnMark = make([]uint32, nn)
	s.dmark = make([]uint32, nd)
	s.lastChange = make([]int32, nn)
	s.best, s.inj, s.done = make([]Strength, nn), make([]Value, nn), make([]uint32, nn)
	for v := 0; v < 2; v++ {
		s.pot[v], s.pdone[v] = make([]Strength, nn), make([]uint32, nn)
	}
	for n := 0; n < nn; n++ {
		s.val[n], s.str[n], s.state[n], s.volts[n] = VX, nl.nodeCharge[n], StateZ, math.NaN()
		switch nl.nodeKind[n] {
		case Power:
			s.val[n], s.str[n], s.state[n], s.source[n] = V1, Supply, State1, true
		case Ground:
			s.val[n], s.str[n], s.state[n], s.source[n] = V0, Supply, State0, true
		case Input:
			s.drive[n], s.str[n], s.state[n], s.source[n] = DriveX, Supply, StateX, true
		}
	}
	for d := 0; d < nd; d++ {
		s.cond[d] = s.condOf(d)
	}
	s.physInit()
	for _, r := range []int32{nl.power, nl.ground} {
		s.volts[r] = s.physSourceVolts(s.val[r])
	}
	return s
}

// Netlist returns the netlist being simulated.
func (s *Sim) Netlist() *Netlist { return s.nl }

// Mode returns the simulation mode.
func (s *Sim) Mode() Mode { return s.mode }

// RoundLimit returns the round limit in force.
func (s *Sim) RoundLimit() int { return s.limit }

func (s *Sim) condOf(d int) Conduction {
	g := s.nl.devGate[d]
	if g < 0 {
		return On
	}
	return conduction(s.nl.devKind[d], s.val[g])
}

// SetInput applies a drive to a primary input; it takes effect at the next Settle.
func (s *Sim) SetInput(n int, d Drive) error {
	if n < 0 || n >= len(s.val) || s.nl.nodeKind[n] != Input {
		return ErrUnknownNode
	}
	if s.drive[n] == d {
		return nil
	}
	s.drive[n] = d
	if !s.dirtyMark[n] {
		s.dirtyMark[n] = true
		s.dirtyIn = append(s.dirtyIn, int32(n))
	}
	return nil
}

// InputDrive returns the drive applied to an input.
func (s *Sim) InputDrive(n int) Drive { return s.drive[n] }

// Node returns node n's resolved state.
func (s *Sim) Node(n int) NodeState {
	return NodeState{s.val[n], s.str[n], s.state[n], s.volts[n], s.str[n].IsCharge()}
}

// Conduction returns device d's present state.
func (s *Sim) Conduction(d int) Conduction { return s.cond[d] }

// Snapshot is a saved Sim state for moving backwards.
type Snapshot struct {
	val   []Value
	str   []Strength
	state []State
	volts []float64
	drive []Drive
	src   []bool
	fight []bool
	cond  []Conduction
	phys  physSnapshot
}

// Snapshot saves the present state (after a Settle).
func (s *Sim) Snapshot() *Snapshot {
	return &Snapshot{
		append([]Value(nil), s.val...), append([]Strength(nil), s.str...),
		append([]State(nil), s.state...), append([]float64(nil), s.volts...),
		append([]Drive(nil), s.drive...), append([]bool(nil), s.source...),
		append([]bool(nil), s.fight...), append([]Conduction(nil), s.cond...), s.physSave(),
	}
}

// Restore returns to a saved state. Pending input changes are dropped.
func (s *Sim) Restore(sn *Snapshot) {
	copy(s.val, sn.val)
	copy(s.str, sn.str)
	copy(s.state, sn.state)
	copy(s.volts, sn.volts)
	copy(s.drive, sn.drive)
	copy(s.source, sn.src)
	copy(s.fight, sn.fight)
	copy(s.cond, sn.cond)
	s.physRestore(sn.phys)
	for _, n := range s.dirtyIn {
		s.dirtyMark[n] = false
	}
	s.dirtyIn = s.dirtyIn[:0]
	s.initial = false
}

// Settle advances unit-delay rounds until no node changes (MODEL.md §5).
func (s *Sim) Settle() *Result {
	nl := s.nl
	r := &s.res
	r.Rounds, r.Oscillated = 0, false
	r.Changed, r.RoundEnd, r.Delay, r.Warnings = r.Changed[:0], r.RoundEnd[:0], r.Delay[:0], r.Warnings[:0]
	r.After = r.After[:0]
	s.settleID++
	s.touched = s.touched[:0]
	s.seeds = s.seeds[:0] // s.gates may hold fan-out left queued by a stopped settle
	s.nextEpoch()

	if s.initial {
		s.initial = false
		for n := range s.val {
			if s.nl.nodeKind[n] == Input {
				s.applyDrive(n)
			}
			if !s.source[n] {
				s.seed(int32(n))
			}
		}
		for d := range s.cond {
			s.cond[d] = s.condOf(d)
		}
	}
	// Inputs changed by the user: their new value is in place before round 1,
	// so the devices they gate switch in round 1. All drives are applied
	// before any seeding, so that seeding sees every input's new role.
	wasSource := s.wasSrc[:0]
	changedIn := s.dirtyIn[:0]
	for _, n := range s.dirtyIn {
		s.dirtyMark[n] = false
		if d := s.drive[n]; (d == DriveZ && !s.source[n]) || (d != DriveZ && s.source[n] && s.val[n] == d.Value()) {
			continue // set and set back since the last Settle: nothing changed
		}
		changedIn = append(changedIn, n)
		wasSource = append(wasSource, s.source[n])
		old := s.val[n]
		s.applyDrive(int(n))
		if s.val[n] != old || s.source[n] != wasSource[len(wasSource)-1] {
			s.gates = append(s.gates, n)
		}
	}
	s.wasSrc = wasSource
	for i, n := range changedIn {
		if !s.source[n] {
			s.seed(n)
		}
		if wasSource[i] || s.source[n] {
			for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
				if s.cond[d] != Off || s.physLeak(d) {
					o := nl.other(d, n)
					if !s.source[o] {
						s.seed(o)
					}
				}
			}
		}
	}
	s.dirtyIn = s.dirtyIn[:0]

	limit, extra := s.limit, false
	for round := int32(1); ; round++ {
		// Devices whose gate changed in the round before switch now.
		for _, gn := range s.gates {
			for _, d := range nl.gateDev[nl.gateStart[gn]:nl.gateStart[gn+1]] {
				c := s.condOf(int(d))
				moved := s.physGateMoved(d) // always called: it records the gate's voltage for this round
				if c != s.cond[d] || moved {
					s.cond[d] = c
					if a := nl.devA[d]; !s.source[a] {
						s.seed(a)
					}
					if b := nl.devB[d]; !s.source[b] {
						s.seed(b)
					}
				}
			}
		}
		s.gates = s.gates[:0]
		if len(s.seeds) == 0 {
			break
		}
		if int(round) > limit {
			// The forcing is a round of its own: the nodes set to X are its changes.
			r.Oscillated = true
			r.Rounds = int(round)
			s.forceOscillating(round)
			r.RoundEnd = append(r.RoundEnd, int32(len(r.Changed)))
			s.seeds = s.seeds[:0]
			s.nextEpoch()
			if extra {
				// Still changing after the nodes were set to X: stop here. The
				// fan-out of the forced nodes stays queued in s.gates and is
				// taken up by the next Settle, so device states never go stale.
				break
			}
			extra = true
			limit += s.limit
			continue
		}
		r.Rounds = int(round)
		for _, n := range s.seeds {
			if s.gmark[n] != s.epoch {
				s.solveGroup(n, round)
			}
		}
		s.seeds = s.seeds[:0]
		r.RoundEnd = append(r.RoundEnd, int32(len(r.Changed)))
		s.nextEpoch()
	}
	s.settleWarnings()
	return r
}

func (s *Sim) nextEpoch() {
	s.epoch++
	if s.epoch == 0 { // wrapped: clear the stamps
		clear(s.gmark)
		clear(s.seedMark)
		s.epoch = 1
	}
}

func (s *Sim) seed(n int32) {
	if s.seedMark[n] == s.epoch {
		return
	}
	s.seedMark[n] = s.epoch
	s.seeds = append(s.seeds, n)
}

func (s *Sim) applyDrive(n int) {
	d := s.drive[n]
	if d == DriveZ {
		s.source[n] = false
		return // keeps its value as charge; its group is solved
	}
	s.source[n] = true
	s.val[n], s.str[n], s.fight[n] = d.Value(), Supply, false
	s.state[n] = [...]State{State0, State1, StateX}[d]
	s.volts[n] = s.physSourceVolts(d.Value())
}

// forceOscillating sets to X every node that changed in the last W rounds
// before this one (W is an eighth of the limit, at least 16), records them as
// this round's changes and queues their fan-out.
func (s *Sim) forceOscillating(round int32) {
	window := int32(s.limit / 8)
	if window < 16 {
		window = 16
	}
	for _, n := range s.touched {
		if lc := s.lastChange[n]; lc > 0 && lc >= round-window && !s.source[n] {
			st := StateX
			if s.str[n].IsCharge() {
				st = StateZ
			}
			if s.val[n] != VX || s.state[n] != st {
				s.val[n], s.state[n], s.volts[n] = VX, st, math.NaN()
				s.lastChange[n] = round
				s.res.Changed = append(s.res.Changed, n)
				s.res.Delay = append(s.res.Delay, math.NaN())
				s.res.After = append(s.res.After, s.Node(int(n)))
			}
			s.gates = append(s.gates, n)
			if s.warnMark[n] != s.settleID {
				s.res.Warnings = append(s.res.Warnings, Warning{Kind: WarnOscillation, Node: int(n), Device: -1, Other: -1, Volts: math.NaN()})
				s.warnMark[n] = s.settleID
			}
		}
	}
}
