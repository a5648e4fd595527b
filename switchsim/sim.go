package switchsim

import "math"

// Mode chooses the model: Physical (switchsim §2-§4, the default) or Ideal (§2-§3 alone).
type Mode uint8

const (
	Physical Mode = iota
	Ideal
)

func (m Mode) String() string { return [...]string{"physical", "ideal"}[m] }

// Options configure a Sim.
type Options struct {
	Mode Mode
	// RoundLimit bounds the unit-delay rounds of one settle; 0 takes
	// DefaultRoundLimit(netlist). Rounds that pass it did not settle: race
	// analysis decides the step.
	RoundLimit int
	// Races says when race analysis runs (DEVELOPERS.md "Race analysis").
	Races RaceMode
	// CaseSplits bounds case analysis: the X nodes split on in one settle.
	// 0 takes DefaultCaseSplits; a negative value turns case analysis off.
	CaseSplits int
}

// DefaultRoundLimit is 2 x nodes + 2. Every round of a settle that has not
// ended changes at least one node, and logic without feedback changes a
// node only in the round after a node gating its group changed, so it
// settles within nodes + 1 rounds and is never stopped by the limit. The
// second share leaves room for feedback logic that does settle (a write
// through a keeper loop takes a round or two per loop). Rounds that pass
// the limit are not called an oscillation: race analysis decides.
func DefaultRoundLimit(nl *Netlist) int { return 2*nl.NumNodes() + 2 }

// Node flags of the last solve (Sim.nflag), one byte a node.
const (
	nfFight   uint8 = 1 << iota // X from an equal-strength fight, for the conflict warning
	nfContest                   // driven, but the group holds a source of the other value
	nfShared                    // floating, and charge of another value joined it in the last solve
	// nfDirty: an input given a drive since the last settle (listed in
	// dirtyIn). Settle clears it before any solve, so the solves, which set
	// the three flags above together, never meet it.
	nfDirty
)

func nodeFlags(fight, contest, shared bool) uint8 {
	var f uint8
	if fight {
		f |= nfFight
	}
	if contest {
		f |= nfContest
	}
	if shared {
		f |= nfShared
	}
	return f
}

// flag reports whether node n has flag f.
func (s *Sim) flag(n int32, f uint8) bool { return s.nflag[n]&f != 0 }

// fights lists the nodes' fight flags (a Snapshot's).
func (s *Sim) fights() []bool {
	out := make([]bool, len(s.nflag))
	for n, f := range s.nflag {
		out[n] = f&nfFight != 0
	}
	return out
}

// RaceMode says when race analysis runs.
type RaceMode uint8

const (
	// RacesWhenNeeded: on every settle but the first that changes more than
	// one input or whose unit-delay rounds do not settle.
	RacesWhenNeeded RaceMode = iota
	// RacesEveryStep: on every settle but the first that changes an input.
	RacesEveryStep
	// RacesOff: never; rounds that pass the limit end in forcing rounds
	// (the plain unit-delay settle, for comparison and benchmarks).
	RacesOff
	// RacesGlitches: as RacesWhenNeeded, and on a settle that changes one
	// input to 0 or 1, phase A alone runs first (race.go, phaseAlone): the
	// nodes it makes X that the rounds bring back to their value are
	// glitches. The rounds decide the step as under RacesWhenNeeded.
	RacesGlitches
)

func (m RaceMode) String() string {
	return [...]string{"when-needed", "every-step", "off", "glitches"}[m]
}

// DefaultCaseSplits is the number of X nodes case analysis splits on in
// one settle: each split is two settles of the nodes it reaches.
const DefaultCaseSplits = 32

// NodeState is one node's resolved state.
type NodeState struct {
	Value    Value
	Strength Strength
	State    State
	Floating bool    // no driving path: the value is stored charge
	Volts    float64 // NaN in ideal mode or where unknown
}

// Result is what one settle did. Its slices belong to the Sim and are
// overwritten by the next Settle; copy what must be kept.
//
// Rounds, Changed, RoundEnd, Delay and After are the rounds a person
// watches: the unit-delay rounds, and after them, when race or case
// analysis gave some node another state than the rounds left it in, one
// decision round with those nodes (Analysis.Decided). The node states
// after Settle are the analysis's wherever it ran.
type Result struct {
	Rounds   int
	Changed  []int32     // node numbers, round after round
	RoundEnd []int32     // round r (0-based) changed Changed[RoundEnd[r-1]:RoundEnd[r]]
	Delay    []float64   // parallel to Changed: Elmore delay estimate in seconds, NaN in ideal mode
	After    []NodeState // parallel to Changed: the node's state as that round left it
	Warnings []Warning
	// Settled is set when the unit-delay rounds ended by themselves, before
	// the round limit.
	Settled bool
	// Oscillated is set when some node was found to keep changing (an
	// oscillation warning): it is X.
	Oscillated bool
	Analysis   Analysis
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
	nl     *Netlist
	mode   Mode
	limit  int
	races  RaceMode
	splits int // case analysis bound; < 0: off

	// node state
	val    []Value
	str    []Strength
	state  []State
	volts  []float64 // physical mode only: nil in ideal mode (voltsAt)
	drive  []Drive   // inputs only
	source []bool    // rails and driven inputs
	nflag  []uint8   // what the last solve found (nfFight, nfContest, nfShared); nfDirty
	cond   []Conduction
	note   []nodeNote // how the analyses decided the node (explain); made on first use (noteOf)

	// pending work between Settle calls
	initial bool
	shrink  bool // the last settle was the first: its logs are let go at the next
	dirtyIn []int32

	// scratch, reused by every settle
	//
	// mark is the one per-node stamp of the rounds (DEVELOPERS.md "Data
	// layout"): tick hands out stamps in increasing order, and epoch is the
	// present round's. A non-source node's mark is epoch when it was seeded
	// in this round and above epoch once a group of this round took it (the
	// group's stamps, then resolve's); a source's mark is the group's stamp
	// when that group listed it in its boundary.
	tick, epoch uint32
	mark        []nodeMark // node -> its stamps, together: a group solve reads and writes all three
	settleID    uint32
	seeds       []int32
	gates       []int32
	roundNo     int32 // rounds run in this settle so far, phases and branches included
	runStart    int32 // roundNo when the present run of rounds began
	touched     []int32
	g           group
	res         Result
	warnMark    []uint32  // node -> settle stamp: reported as racing or oscillating; made on first use
	rec         *roundLog // where commit records changes; nil in a case-analysis branch
	unit        roundLog
	nan         []float64 // all NaN: ideal mode's delays (nanDelays)
	shorts      []int32   // devices joining two sources to check at the end of the settle
	shortMark   []uint32  // Netlist.shortDevs entry -> settle stamp: listed in shorts

	undo       undoLog
	ana        analysis
	wpar, wdev []int32 // pathSides' search tree, made on first use

	best    []Strength // resolve's general path, made on first use
	inj     []Value
	arr     []uint8 // resolve: the values (bit 1<<v) that arrived at a node's best strength
	pot     [2][]Strength
	buckets [Supply + 1][]int32
	comp    []int32

	// slowIdeal turns ideal mode's fast paths (resolveSingle, solveAlone,
	// resolveDriven, and settlesAlone's step without an undo log) off, so
	// that tests can compare the general path with them (export_test.go).
	slowIdeal bool

	phys physRef // physical mode's state; nil in ideal mode
}

// physRef holds physical mode's state by pointer, so that an ideal Sim,
// which never reads it, does not carry its 2 kB (a small design's Sim was
// mostly that). The physical files read it as s.phys.field through the
// embedded pointer.
type physRef struct{ *physState }

// nodeMark is a node's stamps (DEVELOPERS.md "Data layout"), in one
// entry so that a group solve meets one cache line for them, not three.
type nodeMark struct {
	round uint32 // the rounds' stamp (Sim.mark's comment above)
	touch uint32 // settle stamp: solved during this settle
	last  int32  // the settle's round count when it last changed (0: not in this settle)
}

// roundLog records the changes of a run of rounds. Only the unit-delay
// rounds' log keeps delays (Result.Delay), and only in physical mode: the
// phases' and case analysis's are never read for them, and in ideal mode
// every delay is NaN (Settle hands out nanDelays).
type roundLog struct {
	delays   bool
	rounds   int
	changed  []int32
	roundEnd []int32
	delay    []float64
	after    []NodeState
}

func (l *roundLog) reset() {
	l.rounds = 0
	l.changed, l.roundEnd, l.delay, l.after = l.changed[:0], l.roundEnd[:0], l.delay[:0], l.after[:0]
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
	s := &Sim{nl: nl, mode: opt.Mode, limit: opt.RoundLimit, races: opt.Races, splits: opt.CaseSplits, initial: true}
	if s.limit <= 0 {
		s.limit = DefaultRoundLimit(nl)
	}
	if s.splits == 0 {
		s.splits = DefaultCaseSplits
	}
	s.val, s.str, s.state = make([]Value, nn), make([]Strength, nn), make([]State, nn)
	s.drive, s.source, s.nflag = make([]Drive, nn), make([]bool, nn), make([]uint8, nn)
	if s.mode == Physical {
		s.volts = make([]float64, nn)
	}
	if s.mode == Physical {
		s.phys.physState = new(physState)
	}
	s.cond = make([]Conduction, nd)
	s.mark = make([]nodeMark, nn)
	s.shortMark = make([]uint32, len(nl.shortDevs))
	s.undo.init(nn, nd)
	s.ana.init(nn)
	for n := 0; n < nn; n++ {
		s.val[n], s.str[n], s.state[n] = VX, nl.nodeCharge[n], StateZ
		s.setVolts(int32(n), math.NaN())
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
		s.setVolts(r, s.physSourceVolts(s.val[r]))
	}
	return s
}

// voltsAt is node n's voltage estimate: NaN in ideal mode, which keeps no
// array of them.
func (s *Sim) voltsAt(n int32) float64 {
	if s.volts == nil {
		return math.NaN()
	}
	return s.volts[n]
}

// setVolts sets node n's voltage estimate (nothing in ideal mode).
func (s *Sim) setVolts(n int32, v float64) {
	if s.volts != nil {
		s.volts[n] = v
	}
}

// noteOf is node n's analysis note; the array is made on the first note
// written, so a design that no analysis decided carries none.
func (s *Sim) noteOf(n int32) nodeNote {
	if s.note == nil {
		return nodeNote{}
	}
	return s.note[n]
}

func (s *Sim) setNote(n int32, nt nodeNote) {
	if s.note == nil {
		if nt == (nodeNote{}) {
			return
		}
		s.note = make([]nodeNote, len(s.val))
	}
	s.note[n] = nt
}

// warned reports whether node n was reported as racing or oscillating in
// this settle.
func (s *Sim) warned(n int32) bool { return s.warnMark != nil && s.warnMark[n] == s.settleID }

func (s *Sim) markWarned(n int32) {
	s.warnMark = perNode(s.warnMark, len(s.val))
	s.warnMark[n] = s.settleID
}

// Netlist returns the netlist being simulated.
func (s *Sim) Netlist() *Netlist { return s.nl }

// Mode returns the simulation mode.
func (s *Sim) Mode() Mode { return s.mode }

// RoundLimit returns the round limit in force.
func (s *Sim) RoundLimit() int { return s.limit }

// SetRaces says when race analysis runs from the next Settle on (Options.Races).
func (s *Sim) SetRaces(m RaceMode) { s.races = m }

// Races returns when race analysis runs.
func (s *Sim) Races() RaceMode { return s.races }

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
	if s.nflag[n]&nfDirty == 0 {
		s.nflag[n] |= nfDirty
		s.dirtyIn = append(s.dirtyIn, int32(n))
	}
	return nil
}

// InputDrive returns the drive applied to an input.
func (s *Sim) InputDrive(n int) Drive { return s.drive[n] }

// Node returns node n's resolved state.
func (s *Sim) Node(n int) NodeState {
	return NodeState{s.val[n], s.str[n], s.state[n], s.str[n].IsCharge(), s.voltsAt(int32(n))}
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
	note  []nodeNote
	phys  physSnapshot
}

// Snapshot saves the present state (after a Settle).
func (s *Sim) Snapshot() *Snapshot {
	return &Snapshot{
		append([]Value(nil), s.val...), append([]Strength(nil), s.str...),
		append([]State(nil), s.state...), append([]float64(nil), s.volts...),
		append([]Drive(nil), s.drive...), append([]bool(nil), s.source...),
		s.fights(), append([]Conduction(nil), s.cond...),
		append([]nodeNote(nil), s.note...), s.physSave(),
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
	for n, f := range sn.fight { // (a snapshot keeps the fights alone)
		s.nflag[n] = s.nflag[n]&^nfFight | nodeFlags(f, false, false)
	}
	copy(s.cond, sn.cond)
	switch {
	case sn.note == nil:
		clear(s.note)
	case s.note == nil:
		s.note = append([]nodeNote(nil), sn.note...)
	default:
		copy(s.note, sn.note)
	}
	s.physRestore(sn.phys)
	for _, n := range s.dirtyIn {
		s.nflag[n] &^= nfDirty
	}
	s.dirtyIn = s.dirtyIn[:0]
	s.gates = s.gates[:0]
	s.initial = false
}

// inForce reports whether drive d is what input n is already given.
func (s *Sim) inForce(n int32, d Drive) bool {
	if d == DriveZ {
		return !s.source[n]
	}
	return s.source[n] && s.val[n] == d.Value()
}

// Settle advances unit-delay rounds until no node changes (DEVELOPERS.md
// "Rounds"); where the step changed more than one input, the rounds did
// not settle, or it is asked for, race analysis decides the result (race.go),
// and case analysis resolves X sustained only by an unknown start (cases.go).
func (s *Sim) Settle() *Result {
	r := &s.res
	r.Rounds, r.Settled, r.Oscillated, r.Warnings = 0, false, false, r.Warnings[:0]
	r.Analysis.reset()
	if s.shrink {
		// The first settle solves every node and changes most of them twice
		// (from stored X to driven X or a value, and on as the values
		// spread), and with every device of unknown state its groups are the
		// largest: its logs, the seeds and touched lists and the group's
		// scratch are sized for that. A step changes a fraction of it, so
		// they are let go here and grow to what the steps need.
		s.shrink = false
		s.unit.changed, s.unit.roundEnd, s.unit.delay, s.unit.after = nil, nil, nil, nil
		s.seeds, s.touched, s.nan = nil, nil, nil
		s.g, s.buckets, s.comp = group{}, [Supply + 1][]int32{}, nil
		// So are the general resolve's per-node arrays and the undo log's
		// stamps, made again on first use: many designs' steps need neither.
		s.best, s.inj, s.arr, s.pot = nil, nil, nil, [2][]Strength{}
		s.undo.nmark = nil
		a := &s.ana // case analysis's, where the first settle split
		a.taint, a.taintMark, a.b0At, a.resAt, a.failMark, a.firstMark = nil, nil, nil, nil, nil, nil
		if len(s.gates) == 0 { // (a stopped settle can leave fan-out queued)
			s.gates = nil
		}
	}
	s.settleID++
	s.touched, s.shorts = s.touched[:0], s.shorts[:0]
	s.seeds = s.seeds[:0] // s.gates may hold fan-out left queued by a stopped settle
	s.roundNo = 0
	s.nextEpoch()
	s.rec = &s.unit
	s.unit.reset()
	s.unit.delays = s.mode == Physical
	s.ana.sawX = false

	first := s.initial
	// Segment 0 of the undo log is kept where race analysis may go back to
	// the state before the step.
	keep := !first && len(s.dirtyIn) > 0 && s.races != RacesOff && !s.settlesAlone()
	s.undo.reset(keep, s.mode == Physical || len(s.gates) > 0)
	if first {
		s.initial, s.shrink = false, true
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
			if s.nl.devFlag[d]&devShort != 0 {
				s.checkShort(int32(d))
			}
		}
	}
	// The inputs whose drive differs from the one in force, and what they go to.
	a := &s.ana
	a.inputs, a.to = a.inputs[:0], a.to[:0]
	for _, n := range s.dirtyIn {
		s.nflag[n] &^= nfDirty
		if !s.inForce(n, s.drive[n]) {
			a.inputs, a.to = append(a.inputs, n), append(a.to, s.drive[n])
		}
	}
	s.dirtyIn = s.dirtyIn[:0]
	a.pending = append(a.pending[:0], s.gates...)
	alone := !first && s.races == RacesGlitches && len(a.inputs) == 1 && (a.to[0] == Drive0 || a.to[0] == Drive1)
	if alone {
		s.phaseAlone()
	}
	s.applyInputs(a.inputs, a.to)

	may := !first && len(a.inputs) > 0 && s.races != RacesOff
	settled := s.rounds(may)
	r.Settled = settled
	if may && !settled && !keep {
		panic("switchsim: a step settlesAlone said would settle did not")
	}
	if may && (len(a.inputs) > 1 || !settled || s.races == RacesEveryStep) {
		s.raceAnalysis(settled)
	} else {
		s.ana.ran = false
		if alone {
			s.undo.index() // segment 0 is complete: glitchesAlone looks nodes up in it
		}
		s.caseAnalysis()
		if alone {
			s.glitchesAlone()
		}
	}
	s.decide()
	s.settleWarnings()
	r.Rounds = s.unit.rounds
	r.Changed, r.RoundEnd, r.Delay, r.After = s.unit.changed, s.unit.roundEnd, s.unit.delay, s.unit.after
	if !s.unit.delays {
		r.Delay = s.nanDelays(len(r.Changed))
	}
	return r
}

// nanDelays returns k NaN delays (ideal mode's Result.Delay) from one
// buffer that only grows: no step writes them again.
func (s *Sim) nanDelays(k int) []float64 {
	if k > len(s.nan) {
		old := len(s.nan)
		s.nan = append(s.nan, make([]float64, k-old)...)
		s.nan = s.nan[:cap(s.nan)]
		for i := old; i < len(s.nan); i++ {
			s.nan[i] = math.NaN()
		}
	}
	return s.nan[:k:k]
}

// settlesAlone reports whether the pending step is sure to settle within
// the round limit with one input changed, so that race analysis cannot run
// on it under RacesWhenNeeded and the undo log need not be kept (a quarter
// of an inverter chain's step). It holds for logic without feedback (no
// node in a feedback loop, Netlist.InFeedbackLoop): there the
// channel-connected components, bounded by rails and inputs, form an
// acyclic graph through the gates, a component changes only in the round
// after one of its gates changed, and so every node's last change comes
// within as many rounds as there are components (DefaultRoundLimit). In
// physical mode a gate's voltage moving counts as its change, and a round
// in which only voltages converged does not count against the limit, so
// the same bound holds. A released input (DriveZ) joins the components it
// touches into one group the structure did not see, so every input must
// be driven; fan-out left queued by a stopped settle rules it out too.
func (s *Sim) settlesAlone() bool {
	if s.slowIdeal && s.mode == Ideal || s.mode == Physical && s.phys.logAll ||
		s.races != RacesWhenNeeded || len(s.dirtyIn) != 1 || len(s.gates) > 0 ||
		s.nl.loops || s.limit <= len(s.val) {
		return false
	}
	for _, n := range s.nl.inputs {
		if s.drive[n] == DriveZ {
			return false
		}
	}
	return true
}

// applyInputs gives each input its drive (the ones already in force are
// skipped), logging them first, and queues what the change affects: their
// new values are in place before round 1, so the devices they gate switch
// in round 1. All drives are applied before any seeding, so that seeding
// sees every input's new role.
func (s *Sim) applyInputs(ins []int32, to []Drive) {
	nl := s.nl
	a := &s.ana
	a.was = a.was[:0]
	a.moved = a.moved[:0]
	shorts := len(nl.shortDevs) > 0 // (most designs have no device between two sources)
	for i, n := range ins {
		if s.inForce(n, to[i]) {
			continue
		}
		s.logNode(n)
		a.moved = append(a.moved, n)
		a.was = append(a.was, s.source[n])
		old := s.val[n]
		s.drive[n] = to[i]
		s.applyDrive(int(n))
		if s.val[n] != old || s.source[n] != a.was[len(a.was)-1] {
			s.gates = append(s.gates, n)
		}
		for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
			if shorts && nl.devFlag[d]&devShort != 0 {
				s.checkShort(d)
			}
		}
	}
	for i, n := range a.moved {
		if !s.source[n] {
			s.seed(n)
		}
		if a.was[i] || s.source[n] {
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
}

// rounds runs unit-delay rounds from the queued work until a round has no
// seeds (it returns true: settled) or round limit + 1 would start. There,
// with stop the rounds end (false: not settled; race analysis decides);
// without, that round is a forcing round (forceOscillating), the rounds go
// on, and at twice the limit a second forcing round ends them.
func (s *Sim) rounds(stop bool) bool {
	nl := s.nl
	rec := s.rec
	limit, extra, forced := s.limit, false, false
	shorts := len(nl.shortDevs) > 0
	s.runStart = s.roundNo
	for round := 1; ; round++ {
		// Devices whose gate changed in the round before switch now.
		for _, gn := range s.gates {
			gv := s.val[gn]
			for _, d := range nl.gateDev[nl.gateStart[gn]:nl.gateStart[gn+1]] {
				c := conduction(nl.devKind[d], gv) // condOf: gn is d's gate
				moved := false
				if s.mode == Physical {
					s.logDevice(d)             // physGateMoved records the gate's voltage
					moved = s.physGateMoved(d) // always called: it records the gate's voltage for this round
				}
				if c != s.cond[d] || moved {
					s.logDevice(d)
					s.cond[d] = c
					if a := nl.devA[d]; !s.source[a] {
						s.seed(a)
					}
					if b := nl.devB[d]; !s.source[b] {
						s.seed(b)
					}
					if shorts && nl.devFlag[d]&devShort != 0 {
						s.checkShort(d)
					}
				}
			}
		}
		s.gates = s.gates[:0]
		if len(s.seeds) == 0 {
			return !forced
		}
		s.roundNo++
		if round > limit {
			if stop {
				s.seeds = s.seeds[:0]
				s.nextEpoch()
				return false
			}
			// The forcing is a round of its own: the nodes set to X are its changes.
			forced = true
			s.forceOscillating()
			if rec != nil {
				rec.rounds = round
				rec.roundEnd = append(rec.roundEnd, int32(len(rec.changed)))
			}
			s.seeds = s.seeds[:0]
			s.nextEpoch()
			if extra {
				// Still changing after the nodes were set to X: stop here. The
				// fan-out of the forced nodes stays queued in s.gates and is
				// taken up by the next Settle, so device states never go stale.
				return false
			}
			extra = true
			limit += s.limit
			continue
		}
		if rec != nil {
			rec.rounds = round
		}
		for _, n := range s.seeds {
			if s.mark[n].round == s.epoch { // not taken by a group of this round yet
				s.solveGroup(n)
			}
		}
		s.seeds = s.seeds[:0]
		if rec != nil {
			rec.roundEnd = append(rec.roundEnd, int32(len(rec.changed)))
		}
		if s.mode == Physical && s.physConverging() { // only voltages moved, each by less than before: not counted
			limit++
		}
		s.nextEpoch()
	}
}

// nextEpoch starts a round's stamps. It is called with no seeds queued, so
// that where the stamps would run out within the round (a round takes at
// most stampsPerGroup for each of its groups, one group a node at most)
// they can start again from zero.
func (s *Sim) nextEpoch() {
	if uint64(s.tick)+stampsPerGroup*uint64(len(s.mark))+2 > math.MaxUint32 {
		for i := range s.mark {
			s.mark[i].round = 0
		}
		s.tick = 0
	}
	s.tick++
	s.epoch = s.tick
}

// stampsPerGroup is the most stamps one group solve takes: its own, the
// sure pass's and one for each potential.
const stampsPerGroup = 4

// stamp hands out a fresh stamp, above every one given before in this round.
func (s *Sim) stamp() uint32 {
	s.tick++
	return s.tick
}

// seed queues node n's group for this round, unless n was queued or taken
// by a group in it already.
func (s *Sim) seed(n int32) {
	if s.mark[n].round >= s.epoch {
		return
	}
	s.mark[n].round = s.epoch
	s.seeds = append(s.seeds, n)
}

func (s *Sim) applyDrive(n int) {
	d := s.drive[n]
	if d == DriveZ {
		s.source[n] = false
		return // keeps its value as charge; its group is solved
	}
	s.source[n] = true
	s.val[n], s.str[n] = d.Value(), Supply
	s.nflag[n] &^= nfFight
	s.state[n] = [...]State{State0, State1, StateX}[d]
	s.setVolts(int32(n), s.physSourceVolts(d.Value()))
}

// forceOscillating sets to X every node that changed in the last W rounds
// of this run before this one (W is an eighth of the limit, at least 16),
// records them as this round's changes and queues their fan-out.
func (s *Sim) forceOscillating() {
	window := int32(max(16, s.limit/8))
	round := s.roundNo
	for _, n := range s.touched {
		if lc := s.mark[n].last; lc > s.runStart && lc >= round-window && !s.source[n] {
			st := StateX
			if s.str[n].IsCharge() {
				st = StateZ
			}
			s.logNode(n)
			if s.val[n] != VX || s.state[n] != st {
				s.val[n], s.state[n] = VX, st
				s.setVolts(n, math.NaN())
				s.mark[n].last = round
				if rec := s.rec; rec != nil {
					rec.changed = append(rec.changed, n)
					if rec.delays {
						rec.delay = append(rec.delay, math.NaN())
					}
					rec.after = append(rec.after, s.Node(int(n)))
				}
			}
			s.gates = append(s.gates, n)
			s.setNote(n, nodeNote{kind: noteOscillation, settle: s.settleID})
			s.ana.forced(n)
		}
	}
}
